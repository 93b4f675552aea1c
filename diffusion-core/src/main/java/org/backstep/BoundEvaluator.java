package org.backstep;

import java.util.SplittableRandom;

/**
 * Evaluates the negative variational bound per record in model space (Ho et al. 2020, eq. 5;
 * Sohl-Dickstein et al. 2015, eq. 14):
 * <pre>
 *   L = L_T + sum_{t=2..T} L_{t-1} + L_0
 *   L_T     = KL(q(x_T | x_0) || p(x_T))
 *   L_{t-1} = KL(q(x_{t-1} | x_t, x_0) || p(x_{t-1} | x_t)),   x_t ~ q(x_t | x_0)
 *   L_0     = -log p(x_0 | x_1)
 * </pre>
 * Exactly (all T terms, one draw of x_t per term) or by Monte Carlo: the prior term and the
 * decoder term L_0 exactly, and K steps drawn uniformly from 2..T for the rest,
 * L ~ L_T + L_0 + ((T - 1)/K) sum_k L_{t_k - 1}, an unbiased estimate with its standard error from
 * the K terms. Keeping L_0 out of the draw matters: for continuous columns it is a density term whose
 * size (several nats) would otherwise enter the estimate multiplied by T with probability 1/T.
 */
final class BoundEvaluator {

    private BoundEvaluator() {
    }

    /** Per-record results of one evaluation. */
    static final class Result {
        final double[] continuous;
        final double[] binary;
        final double[] standardError;   // zero for the exact method
        final double[] perStepMean;     // index 0: prior L_T; index k: mean L_{k-1}; empty for Monte Carlo

        Result(int rows, int steps, boolean perStep) {
            continuous = new double[rows];
            binary = new double[rows];
            standardError = new double[rows];
            perStepMean = new double[perStep ? steps + 1 : 0];
        }
    }

    static Result exact(Chain chain, float[] x0, int rows, long seed, int threads) {
        Result res = new Result(rows, chain.steps, true);
        int chunks = Parallel.chunks(rows);
        double[][] perChunkSteps = new double[chunks][chain.steps + 1];
        Parallel.forEachChunk(chunks, threads, c -> {
            int from = c * Parallel.CHUNK_ROWS;
            int n = Math.min(Parallel.CHUNK_ROWS, rows - from);
            float[] x = slice(x0, from, n, chain.d);
            SplittableRandom rng = Parallel.random(seed, c);
            Chain.Workspace ws = chain.workspace(n);
            float[] xt = new float[n * chain.d];
            int[] k = new int[n];
            double[] cont = new double[n];
            double[] bin = new double[n];
            double[] stepCont = new double[n];
            double[] stepBin = new double[n];
            chain.priorTerms(x, n, cont, bin);
            perChunkSteps[c][0] = sum(cont) + sum(bin);
            for (int s = 1; s <= chain.steps; s++) {
                java.util.Arrays.fill(k, s);
                chain.diffuse(x, n, k, xt, null, rng);
                float[] out = chain.predictAtStep(ws, xt, s);
                java.util.Arrays.fill(stepCont, 0.0);
                java.util.Arrays.fill(stepBin, 0.0);
                chain.boundTerms(x, xt, out, n, k, stepCont, stepBin);
                for (int r = 0; r < n; r++) {
                    cont[r] += stepCont[r];
                    bin[r] += stepBin[r];
                }
                perChunkSteps[c][s] = sum(stepCont) + sum(stepBin);
            }
            System.arraycopy(cont, 0, res.continuous, from, n);
            System.arraycopy(bin, 0, res.binary, from, n);
        });
        for (int s = 0; s <= chain.steps; s++) {
            double total = 0.0;
            for (int c = 0; c < chunks; c++) {
                total += perChunkSteps[c][s];
            }
            res.perStepMean[s] = total / rows;
        }
        return res;
    }

    static Result monteCarlo(Chain chain, float[] x0, int rows, int draws, long seed, int threads) {
        Result res = new Result(rows, chain.steps, false);
        int chunks = Parallel.chunks(rows);
        double scale = chain.steps - 1;
        Parallel.forEachChunk(chunks, threads, c -> {
            int from = c * Parallel.CHUNK_ROWS;
            int n = Math.min(Parallel.CHUNK_ROWS, rows - from);
            float[] x = slice(x0, from, n, chain.d);
            SplittableRandom rng = Parallel.random(seed, c);
            Chain.Workspace ws = chain.workspace(n);
            float[] xt = new float[n * chain.d];
            int[] k = new int[n];
            int[] src = new int[n];
            double[] priorCont = new double[n];
            double[] priorBin = new double[n];
            double[] sumCont = new double[n];
            double[] sumBin = new double[n];
            double[] sumSq = new double[n];
            double[] stepCont = new double[n];
            double[] stepBin = new double[n];
            chain.priorTerms(x, n, priorCont, priorBin);
            java.util.Arrays.fill(k, 1);
            chain.diffuse(x, n, k, xt, null, rng);
            chain.boundTerms(x, xt, chain.predictAtStep(ws, xt, 1), n, k, priorCont, priorBin);
            int rounds = chain.steps > 1 ? draws : 0;
            for (int draw = 0; draw < rounds; draw++) {
                for (int r = 0; r < n; r++) {
                    k[r] = 2 + rng.nextInt(chain.steps - 1);
                    src[r] = chain.source[k[r]];
                }
                chain.diffuse(x, n, k, xt, null, rng);
                float[] out = chain.predict(ws, xt, src);
                java.util.Arrays.fill(stepCont, 0.0);
                java.util.Arrays.fill(stepBin, 0.0);
                chain.boundTerms(x, xt, out, n, k, stepCont, stepBin);
                for (int r = 0; r < n; r++) {
                    double term = scale * (stepCont[r] + stepBin[r]);
                    sumCont[r] += scale * stepCont[r];
                    sumBin[r] += scale * stepBin[r];
                    sumSq[r] += term * term;
                }
            }
            for (int r = 0; r < n; r++) {
                double meanCont = rounds > 0 ? sumCont[r] / rounds : 0.0;
                double meanBin = rounds > 0 ? sumBin[r] / rounds : 0.0;
                double mean = meanCont + meanBin;
                res.continuous[from + r] = priorCont[r] + meanCont;
                res.binary[from + r] = priorBin[r] + meanBin;
                double var = rounds > 1 ? Math.max(0.0, (sumSq[r] - rounds * mean * mean) / (rounds - 1)) : 0.0;
                res.standardError[from + r] = Math.sqrt(var / Math.max(1, rounds));
            }
        });
        return res;
    }

    static float[] slice(float[] x, int fromRow, int rows, int d) {
        float[] s = new float[rows * d];
        System.arraycopy(x, fromRow * d, s, 0, rows * d);
        return s;
    }

    static double sum(double[] a) {
        double s = 0.0;
        for (double v : a) {
            s += v;
        }
        return s;
    }
}
