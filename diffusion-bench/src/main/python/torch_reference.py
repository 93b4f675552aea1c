#!/usr/bin/env python3
"""PyTorch counterpart of two Backstep benchmarks, on the CPU, in float32.

1. The training step of TrainingStepBenchmark, columns = 64: a multilayer perceptron
   [x (64), e(t) (32)] -> 3 x 256 SiLU -> 64, the step embedding entering the input only
   (Backstep's TimeConditioning.INPUT), batch 256, mean squared error, Adam (lr 1e-4,
   betas 0.9 / 0.999, eps 1e-8). Parameters: 97*256 + 2*257*256 + 257*64 = 172,864, the same
   count as Backstep's NetworkShape(64, {256,256,256}, 64, 32, INPUT).

2. Sampling as SamplingBenchmark.reference does it: 1,024 rows through S ancestral steps of a
   T = 1000 linear schedule, with the library's default network for D continuous columns:
   h1 = silu(W1 [x, e(t), 1]), h2 = silu(W2 [h1, e(t), 1]), h3 = silu(W3 [h2, e(t), 1]),
   out = W4 [h3, 1] with 2 D outputs (epsilon-hat and the variance interpolation v), and the
   elementwise update of Ho et al. 2020 (algorithm 2) with learned variances (Nichol & Dhariwal
   2021, eq. 15): mean = (x - beta_t / sqrt(1 - abar_t) eps) / sqrt(alpha_t),
   log sigma^2 = v log beta_t + (1 - v) log beta~_t, x <- mean + sigma z.
   Parameters: (D+33)*256 + 2*289*256 + 257*2D.

Each is timed in PyTorch's default thread setting and with torch.set_num_threads(1) and (2);
"cores_busy" is process CPU time over wall time (the system OpenBLAS may run its own threads
whatever torch's setting). Sampling keeps the best of `repeats` runs. Prints one JSON object on
stdout; progress goes to stderr.
"""
import argparse
import json
import math
import sys
import time

import torch
import torch.nn as nn
import torch.nn.functional as F

HIDDEN = 256
EMBEDDING = 32
T = 1000


def embedding_table(steps, size):
    """Row t-1 holds e(t): sin(t w_k), cos(t w_k) interleaved, w_k = exp(-ln(10000) k / (size/2))."""
    half = size // 2
    t = torch.arange(1, steps + 1, dtype=torch.float64).unsqueeze(1)
    w = torch.exp(-math.log(10000.0) * torch.arange(half, dtype=torch.float64) / half)
    angle = t * w
    table = torch.empty(steps, size, dtype=torch.float64)
    table[:, 0::2] = torch.sin(angle)
    table[:, 1::2] = torch.cos(angle)
    return table.float()


class InputConditioned(nn.Module):
    """[x, e(t)] -> 3 x 256 SiLU -> outputs (the training benchmark's network)."""

    def __init__(self, columns, outputs):
        super().__init__()
        self.net = nn.Sequential(
            nn.Linear(columns + EMBEDDING, HIDDEN), nn.SiLU(),
            nn.Linear(HIDDEN, HIDDEN), nn.SiLU(),
            nn.Linear(HIDDEN, HIDDEN), nn.SiLU(),
            nn.Linear(HIDDEN, outputs))

    def forward(self, x, e):
        return self.net(torch.cat([x, e], dim=1))


class EveryBlock(nn.Module):
    """The step embedding enters every hidden block; the output layer sees h_3 only (the library default)."""

    def __init__(self, columns, outputs):
        super().__init__()
        self.l1 = nn.Linear(columns + EMBEDDING, HIDDEN)
        self.l2 = nn.Linear(HIDDEN + EMBEDDING, HIDDEN)
        self.l3 = nn.Linear(HIDDEN + EMBEDDING, HIDDEN)
        self.out = nn.Linear(HIDDEN, outputs)

    def forward(self, x, e):
        h = F.silu(self.l1(torch.cat([x, e], dim=1)))
        h = F.silu(self.l2(torch.cat([h, e], dim=1)))
        h = F.silu(self.l3(torch.cat([h, e], dim=1)))
        return self.out(h)


def parameter_count(module):
    return sum(p.numel() for p in module.parameters())


def forward_flops_per_row(layers):
    """2 sum_j fanIn_j fanOut_j, bias left out (as in the Java benchmarks)."""
    return 2 * sum(i * o for i, o in layers)


def time_training(columns, batch, steps, warmup):
    torch.manual_seed(2024)
    net = InputConditioned(columns, columns)
    expected = (columns + EMBEDDING + 1) * HIDDEN + 2 * (HIDDEN + 1) * HIDDEN + (HIDDEN + 1) * columns
    assert parameter_count(net) == expected, (parameter_count(net), expected)
    opt = torch.optim.Adam(net.parameters(), lr=1e-4, betas=(0.9, 0.999), eps=1e-8)
    table = embedding_table(T, EMBEDDING)
    g = torch.Generator().manual_seed(17)
    x = torch.randn(batch, columns, generator=g)
    y = torch.randn(batch, columns, generator=g)
    t = torch.randint(0, T, (batch,), generator=g)

    def step():
        out = net(x, table[t])
        loss = F.mse_loss(out, y)
        opt.zero_grad(set_to_none=True)
        loss.backward()
        opt.step()
        return loss

    for _ in range(warmup):
        step()
    start, cpu = time.perf_counter(), time.process_time()
    for _ in range(steps):
        step()
    seconds = time.perf_counter() - start
    cores = (time.process_time() - cpu) / seconds
    layers = [(columns + EMBEDDING, HIDDEN), (HIDDEN, HIDDEN), (HIDDEN, HIDDEN), (HIDDEN, columns)]
    flops = 3 * batch * forward_flops_per_row(layers)  # forward, and twice that backward
    return {"parameters": parameter_count(net), "steps": steps, "seconds": seconds, "cores_busy": cores,
            "steps_per_s": steps / seconds, "gflops": steps * flops / seconds / 1e9}


def linear_schedule(steps):
    scale = 1000.0 / steps
    betas = torch.linspace(scale * 1e-4, scale * 0.02, steps, dtype=torch.float64)
    alphas = 1.0 - betas
    abar = torch.cumprod(alphas, 0)
    abar_prev = torch.cat([torch.ones(1, dtype=torch.float64), abar[:-1]])
    tilde = betas * (1.0 - abar_prev) / (1.0 - abar)
    log_tilde = torch.log(torch.cat([tilde[1:2], tilde[1:]]))  # clipped at t = 1, as the posterior's
    return betas, alphas, abar, log_tilde


def time_sampling(columns, rows, steps, repeats):
    torch.manual_seed(31)
    net = EveryBlock(columns, 2 * columns)
    expected = (columns + EMBEDDING + 1) * HIDDEN + 2 * (HIDDEN + EMBEDDING + 1) * HIDDEN + (HIDDEN + 1) * 2 * columns
    assert parameter_count(net) == expected, (parameter_count(net), expected)
    table = embedding_table(T, EMBEDDING)
    betas, alphas, abar, log_tilde = linear_schedule(T)
    # the last `steps` steps of the full chain (same per-step work as a strided chain)
    ks = list(range(T, T - steps, -1))
    coef = [(float(betas[k - 1] / torch.sqrt(1 - abar[k - 1])), float(torch.sqrt(alphas[k - 1])),
             float(torch.log(betas[k - 1])), float(log_tilde[k - 1])) for k in ks]
    g = torch.Generator().manual_seed(7)

    def run():
        x = torch.randn(rows, columns, generator=g)
        for k, (eps_coef, sqrt_alpha, log_beta, log_var) in zip(ks, coef):
            e = table[k - 1].expand(rows, EMBEDDING)
            out = net(x, e)
            eps, v = out[:, :columns], out[:, columns:]
            mean = (x - eps_coef * eps) / sqrt_alpha
            if k > 1:
                lv = v * log_beta + (1.0 - v) * log_var
                x = mean + torch.exp(0.5 * lv) * torch.randn(rows, columns, generator=g)
            else:
                x = mean
        return x

    best, cores = float("inf"), 0.0
    with torch.inference_mode():
        run()  # warm-up
        for _ in range(repeats):
            start, cpu = time.perf_counter(), time.process_time()
            x = run()
            seconds = time.perf_counter() - start
            if seconds < best:
                best, cores = seconds, (time.process_time() - cpu) / seconds
            assert torch.isfinite(x).all()
    layers = [(columns + EMBEDDING, HIDDEN), (HIDDEN + EMBEDDING, HIDDEN), (HIDDEN + EMBEDDING, HIDDEN),
              (HIDDEN, 2 * columns)]
    flops = rows * steps * forward_flops_per_row(layers)
    return {"parameters": parameter_count(net), "rows": rows, "steps": steps, "seconds": best, "cores_busy": cores,
            "row_steps_per_s": rows * steps / best, "ms_per_1000_rows_per_1000_steps": best / (rows * steps) * 1e9,
            "gflops": flops / best / 1e9}


def main():
    p = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--train-steps", type=int, default=300)
    p.add_argument("--sample-rows", type=int, default=1024)
    p.add_argument("--sample-steps", type=int, default=1000)
    p.add_argument("--sample-columns", default="8,64")
    p.add_argument("--repeats", type=int, default=2)
    p.add_argument("--settings", default="default,1,2",
                   help="thread settings to time: 'default' (as PyTorch starts) and/or thread counts")
    a = p.parse_args()
    default_threads = torch.get_num_threads()
    result = {"torch": torch.__version__, "default_threads": default_threads, "config": torch.__config__.show(),
              "parallel": torch.__config__.parallel_info(), "settings": {}}
    for label in a.settings.split(","):
        threads = default_threads if label == "default" else int(label)
        torch.set_num_threads(threads)
        print(f"torch: {label} threads ({torch.get_num_threads()})", file=sys.stderr)
        entry = {"threads": torch.get_num_threads(),
                 "training64": time_training(64, 256, a.train_steps, warmup=max(20, a.train_steps // 10))}
        for c in (int(s) for s in a.sample_columns.split(",")):
            entry[f"sampling{c}"] = time_sampling(c, a.sample_rows, a.sample_steps, a.repeats)
        result["settings"][label] = entry
    json.dump(result, sys.stdout, indent=1)
    print()


if __name__ == "__main__":
    main()
