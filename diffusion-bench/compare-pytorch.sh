#!/usr/bin/env bash
# Compares Backstep with PyTorch on this machine's CPU, in one run of this script:
#   - the training step of the 64-column network (64 + 32 -> 3 x 256 SiLU -> 64, batch 256, MSE,
#     Adam; TrainingStepBenchmark with columns=64), in steps per second;
#   - sampling: 1,024 rows through 1,000 ancestral steps of the library's default network for 8
#     and 64 columns (SamplingBenchmark.reference), in row-steps per second;
# and prints the ratios Backstep / PyTorch and each side's GFLOP/s against the peak from peak.sh.
#
# PyTorch: Debian's python3-torch. If `python3 -c 'import torch'` fails, the script installs it
# with apt-get (after apt-get update), together with libopenblas0-pthread: Debian's torch calls
# whatever libblas.so.3 is installed, and without OpenBLAS that is the unoptimized reference BLAS.
# If the install is impossible the script says so and exits with status 3.
# PyTorch is timed in its default thread setting and with torch.set_num_threads(1) and (2) (the
# system OpenBLAS then runs its own thread per core whatever torch's setting), and once more with
# torch.set_num_threads(1) and OPENBLAS_NUM_THREADS=1 (set by this script for that run only), which
# keeps PyTorch on one core. Ratios: Backstep on 1 thread against PyTorch on one core, and
# Backstep's best against PyTorch's best setting.
#
# OpenBLAS: OPENBLAS_VERBOSE=2 is set for both sides so that each OpenBLAS names the kernel it
# picked (Backstep runs the OpenBLAS 0.3.19 bundled with ND4J; PyTorch the system's).
# OPENBLAS_CORETYPE is not set: each picks its kernel by itself.
#
# Output: printed, and kept in diffusion-bench/results/compare-pytorch.txt, with the raw figures
# in results/compare-pytorch-torch.json and results/compare-pytorch-backstep.json.
set -uo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
mkdir -p "${results}"
exec > >(tee "${results}/compare-pytorch.txt") 2>&1

echo "Backstep vs PyTorch, $(date -u '+%Y-%m-%d %H:%M UTC'), git $(cd "${root}" && git rev-parse --short HEAD)"
echo "load average (1, 5, 15 min) at start: $(cut -d' ' -f1-3 /proc/loadavg) on $(nproc) CPUs"
echo

# ---------------------------------------------------------------- PyTorch available?
find_torch_python() {
  for py in python3 /usr/bin/python3; do
    if command -v "${py}" >/dev/null 2>&1 && "${py}" -c 'import torch' >/dev/null 2>&1; then
      command -v "${py}"
      return 0
    fi
  done
  return 1
}

if ! PY=$(find_torch_python); then
  echo "python3 -c 'import torch' fails: installing Debian's python3-torch and libopenblas0-pthread with apt-get"
  export DEBIAN_FRONTEND=noninteractive
  if ! apt-get update; then
    echo "BLOCKER: apt-get update failed (exit status above); cannot install python3-torch"
    exit 3
  fi
  if ! apt-get install -y --no-install-recommends python3-torch libopenblas0-pthread; then
    echo "BLOCKER: apt-get install python3-torch libopenblas0-pthread failed (error above)"
    exit 3
  fi
  if ! PY=$(find_torch_python); then
    echo "BLOCKER: python3-torch is installed but 'import torch' still fails:"
    /usr/bin/python3 -c 'import torch' || true
    exit 3
  fi
fi
blas=$(readlink -f /usr/lib/x86_64-linux-gnu/libblas.so.3 2>/dev/null || echo "unknown")
if [[ "${blas}" == */blas/libblas.so.3* ]]; then
  echo "libblas.so.3 is the reference BLAS (${blas}); installing libopenblas0-pthread so that PyTorch's"
  echo "matrix products are not timed on unoptimized code"
  if ! DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends libopenblas0-pthread; then
    echo "BLOCKER: cannot install libopenblas0-pthread; PyTorch would run on the reference BLAS"
    exit 3
  fi
  blas=$(readlink -f /usr/lib/x86_64-linux-gnu/libblas.so.3)
fi
echo "PyTorch: ${PY}, $("${PY}" -c 'import torch; print(torch.__version__)'), libblas.so.3 -> ${blas}"

# ---------------------------------------------------------------- the peak
IFS=$'\t' read -r peak derivation < <("${here}/peak.sh")
echo "peak: ${peak} GFLOP/s FP32 = ${derivation}"
echo

# ---------------------------------------------------------------- PyTorch side
echo "== PyTorch (src/main/python/torch_reference.py; OPENBLAS_VERBOSE=2, OPENBLAS_CORETYPE not set)"
torch_json="${results}/compare-pytorch-torch.json"
torch_err=$(mktemp)
one_core_json=$(mktemp)
# Run 1: OpenBLAS as installed (its own thread pool, one thread per core whatever torch's setting).
# Run 2: OPENBLAS_NUM_THREADS=1 (set by this script for that run only) with torch.set_num_threads(1):
# PyTorch on one core, to compare with Backstep on one thread.
if ! OPENBLAS_VERBOSE=2 "${PY}" "${here}/src/main/python/torch_reference.py" > "${torch_json}" 2> "${torch_err}" \
   || ! OPENBLAS_VERBOSE=2 OPENBLAS_NUM_THREADS=1 "${PY}" "${here}/src/main/python/torch_reference.py" --settings 1 \
        > "${one_core_json}" 2>> "${torch_err}"; then
  cat "${torch_err}"
  echo "the PyTorch reference failed"
  exit 1
fi
"${PY}" - "${torch_json}" "${one_core_json}" <<'EOF'
import json, sys
main, one = (json.load(open(f)) for f in sys.argv[1:])
main["settings"]["1, OPENBLAS_NUM_THREADS=1"] = one["settings"]["1"]
json.dump(main, open(sys.argv[1], "w"), indent=1)
EOF
rm -f "${one_core_json}"
grep -v '^Core:' "${torch_err}" || true
echo "system OpenBLAS kernel under PyTorch: $(grep -m1 -o 'Core: [A-Za-z0-9_]*' "${torch_err}" || echo 'Core: (not printed; PyTorch may not use OpenBLAS)')"
rm -f "${torch_err}"
"${PY}" -c 'import json, sys; r = json.load(open(sys.argv[1])); print(r["config"]); print(r["parallel"])' "${torch_json}"

# ---------------------------------------------------------------- Backstep side
echo "== Backstep (JMH; OPENBLAS_VERBOSE=2, OPENBLAS_CORETYPE not set)"
if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  echo "build failed"
  exit 1
fi
jar="${here}/target/benchmarks.jar"
jmh_log=$(mktemp)
OPENBLAS_VERBOSE=2 java -jar "${jar}" 'TrainingStepBenchmark' -p columns=64 -p threads=1,2 \
  -rf json -rff "${results}/compare-pytorch-backstep-training.json" > "${jmh_log}" 2>&1 \
  && OPENBLAS_VERBOSE=2 java -jar "${jar}" 'SamplingBenchmark.reference' -p columns=8,64 -p threads=1,2 \
  -rf json -rff "${results}/compare-pytorch-backstep-sampling.json" >> "${jmh_log}" 2>&1
status=$?
grep -E '^(Benchmark|TrainingStep|SamplingBenchmark)' "${jmh_log}"
echo "bundled OpenBLAS kernel under Backstep: $(grep -m1 -o 'Core: [A-Za-z0-9_]*' "${jmh_log}" || echo 'Core: (not printed)')"
rm -f "${jmh_log}"
[ "${status}" -eq 0 ] || { echo "JMH failed"; exit 1; }
"${PY}" - "${results}/compare-pytorch-backstep-training.json" "${results}/compare-pytorch-backstep-sampling.json" \
  > "${results}/compare-pytorch-backstep.json" <<'EOF'
import json, sys
merged = []
for f in sys.argv[1:]:
    merged += json.load(open(f))
json.dump(merged, sys.stdout, indent=1)
EOF
rm -f "${results}/compare-pytorch-backstep-training.json" "${results}/compare-pytorch-backstep-sampling.json"

# ---------------------------------------------------------------- ratios
echo
echo "== Ratios Backstep / PyTorch (above 1: Backstep faster)"
"${PY}" - "${torch_json}" "${results}/compare-pytorch-backstep.json" "${peak}" <<'EOF'
import json, sys
torch_r = json.load(open(sys.argv[1]))
jmh = json.load(open(sys.argv[2]))
peak = float(sys.argv[3])
HIDDEN, E = 256, 32

def fwd_flops_row(d, outputs, every_block):
    layers = [(d + E, HIDDEN), (HIDDEN + (E if every_block else 0), HIDDEN),
              (HIDDEN + (E if every_block else 0), HIDDEN), (HIDDEN, outputs)]
    return 2 * sum(i * o for i, o in layers)

train_flops = 3 * 256 * fwd_flops_row(64, 64, False)     # forward + backward (twice forward)

def gf(x):
    return f"{x:6.1f} GFLOP/s ({100 * x / peak:4.1f}% of {peak:.1f}, {peak / x:4.2f}x from peak)"

settings = torch_r["settings"]
ONE_CORE = "1, OPENBLAS_NUM_THREADS=1"
print(f"PyTorch {torch_r['torch']}, default threads {torch_r['default_threads']}")
back_train, back_sample = {}, {}
for r in jmh:
    p = r["params"]
    if r["benchmark"].endswith("trainingStep"):
        back_train[int(p["threads"])] = r["primaryMetric"]["score"]
    else:
        ms = r["primaryMetric"]["score"]
        back_sample[(int(p["columns"]), int(p["threads"]))] = 1024 * 1000 / (ms / 1000)

print("\ntraining step, 64 columns (steps/s):")
for label, s in settings.items():
    t = s["training64"]
    print(f"  PyTorch  threads={label:27s}: {t['steps_per_s']:8.1f}   {gf(t['gflops'])}  cores busy {t['cores_busy']:.2f}")
for th, v in sorted(back_train.items()):
    print(f"  Backstep threads={th:<27d}: {v:8.1f}   {gf(v * train_flops / 1e9)}")
best_torch = max(s["training64"]["steps_per_s"] for s in settings.values())
one_core = settings[ONE_CORE]["training64"]["steps_per_s"]
if 1 in back_train:
    print(f"  one core:      Backstep(1 thread) / PyTorch(1 thread, OPENBLAS_NUM_THREADS=1) = {back_train[1] / one_core:4.2f}")
print(f"  whole machine: Backstep(best) / PyTorch(best setting) = {max(back_train.values()) / best_torch:4.2f}")

for cols in sorted({c for c, _ in back_sample}):
    key = f"sampling{cols}"
    flops_row = fwd_flops_row(cols, 2 * cols, True)
    print(f"\nsampling, {cols} columns, 1,024 rows x 1,000 ancestral steps (row-steps/s; ms per 1,000 rows per 1,000 steps):")
    for label, s in settings.items():
        t = s[key]
        print(f"  PyTorch  threads={label:27s}: {t['row_steps_per_s']:10.0f}  {1e9 / t['row_steps_per_s']:8.0f} ms   {gf(t['gflops'])}  cores busy {t['cores_busy']:.2f}")
    for (c, th), v in sorted(back_sample.items()):
        if c == cols:
            print(f"  Backstep threads={th:<27d}: {v:10.0f}  {1e9 / v:8.0f} ms   {gf(v * flops_row / 1e9)}")
    best = max(s[key]["row_steps_per_s"] for s in settings.values())
    one_core = settings[ONE_CORE][key]["row_steps_per_s"]
    if (cols, 1) in back_sample:
        print(f"  one core:      Backstep(1 thread) / PyTorch(1 thread, OPENBLAS_NUM_THREADS=1) = {back_sample[(cols, 1)] / one_core:4.2f}")
    print(f"  whole machine: Backstep(best) / PyTorch(best setting) = "
          f"{max(v for (c, _), v in back_sample.items() if c == cols) / best:4.2f}")
print("\nGFLOP/s count the matrix products only (2 x rows x sum fanIn x fanOut per forward pass, biases left out);")
print("both sides do the same arithmetic, so the ratios of steps/s are the ratios of GFLOP/s.")
print("'cores busy' is PyTorch's process CPU time over wall time: the system OpenBLAS runs its own threads")
print("whatever torch's setting unless OPENBLAS_NUM_THREADS=1. Backstep runs one BLAS thread per worker thread.")
EOF
echo
echo "load average (1, 5, 15 min) at end: $(cut -d' ' -f1-3 /proc/loadavg)"
