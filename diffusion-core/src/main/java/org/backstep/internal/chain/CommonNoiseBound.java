package org.backstep.internal.chain;

import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * The bound of {@link BoundEvaluator} with common random numbers: at each step every record is
 * diffused with the same noise, x_t = sqrt(alpha-bar_t) x_0 + sqrt(1 - alpha-bar_t) eps with one
 * eps per step and column (and one uniform per step and binary column, x_t = 1 when it falls below
 * q(x_t = 1 | x_0)), and the Monte Carlo form draws the same steps for every record. Each record's
 * bound keeps the law it has in {@link BoundEvaluator} (every term still draws its x_t from
 * q(x_t | x_0)); what changes is that the draws are shared, so a record's bound is a fixed function
 * of the record and the seed, and the difference between two records' bounds carries no noise of
 * their own draws (common random numbers: e.g. Glasserman 2003, "Monte Carlo Methods in Financial
 * Engineering", section 4.1.2). Screens and drift tests score by it; the per-record bound of
 * {@code DiffusionModel.bound} keeps independent draws.
 *
 * <p>The noise of step (or draw) i comes from {@link Parallel#random(long, long)} of the seed and
 * i, the drawn steps from that of the seed and -1; neither depends on the rows, their order, the
 * chunking or the thread count.
 */
public final class CommonNoiseBound {

    private CommonNoiseBound() {
    }

    /**
     * @param chain the chain (full or strided)
     * @param x0 rows x D model-space records, not modified
     * @param rows the number of records
     * @param draws 0 for the exact bound (every step of the chain), else K steps drawn from 2..K of
     *     the chain with L_T and L_0 exact (as {@link BoundEvaluator#monteCarlo})
     * @param seed the seed of the shared draws
     * @param threads worker threads
     * @return per record, the bound in nats, model space
     */
    public static double[] bound(Chain chain, float[] x0, int rows, int draws, long seed, int threads) {
        int[] steps;
        double weight;
        if (draws == 0) {
            steps = new int[chain.steps];
            for (int i = 0; i < chain.steps; i++) {
                steps[i] = i + 1;
            }
            weight = 1.0;
        } else {
            int rounds = chain.steps > 1 ? draws : 0;
            steps = new int[1 + rounds];
            steps[0] = 1;
            SplittableRandom pick = Parallel.random(seed, -1);
            for (int i = 1; i <= rounds; i++) {
                steps[i] = 2 + pick.nextInt(chain.steps - 1);
            }
            weight = rounds > 0 ? (chain.steps - 1.0) / rounds : 0.0;
        }
        int d = chain.d;
        int dc = chain.dc;
        float[][] noise = new float[steps.length][d];
        for (int i = 0; i < steps.length; i++) {
            SplittableRandom rng = Parallel.random(seed, i + 1L);
            for (int j = 0; j < dc; j++) {
                noise[i][j] = (float) rng.nextGaussian();
            }
            for (int j = dc; j < d; j++) {
                noise[i][j] = (float) rng.nextDouble();
            }
        }
        double[] out = new double[rows];
        Parallel.forEachChunk(Parallel.chunks(rows), threads, c -> {
            int from = c * Parallel.CHUNK_ROWS;
            int n = Math.min(Parallel.CHUNK_ROWS, rows - from);
            float[] x = BoundEvaluator.slice(x0, from, n, d);
            float[] xt = new float[n * d];
            int[] k = new int[n];
            double[] cont = new double[n];
            double[] bin = new double[n];
            double[] stepCont = new double[n];
            double[] stepBin = new double[n];
            Chain.Workspace ws = chain.workspace(n);
            BoundTerms.priorRows(chain, x, n, cont, bin);
            for (int i = 0; i < steps.length; i++) {
                int s = steps[i];
                diffuseShared(chain, x, n, s, noise[i], xt);
                Arrays.fill(k, s);
                Arrays.fill(stepCont, 0.0);
                Arrays.fill(stepBin, 0.0);
                BoundTerms.rowTerms(chain, x, xt, chain.predictAtStep(ws, xt, s), n, k, stepCont, stepBin);
                double w = draws == 0 || i == 0 ? 1.0 : weight;
                for (int r = 0; r < n; r++) {
                    cont[r] += w * stepCont[r];
                    bin[r] += w * stepBin[r];
                }
            }
            for (int r = 0; r < n; r++) {
                out[from + r] = cont[r] + bin[r];
            }
        });
        return out;
    }

    /** x_s ~ q(x_s | x_0) for every row with the one noise row {@code u}: Gaussians, then uniforms for binary cells. */
    static void diffuseShared(Chain chain, float[] x0, int rows, int s, float[] u, float[] xt) {
        int d = chain.d;
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < chain.dc; j++) {
                xt[o + j] = chain.diffusedContinuous(s, x0[o + j], u[j]);
            }
            for (int j = chain.dc; j < d; j++) {
                xt[o + j] = chain.diffusedDiscrete(j, s, x0[o + j], u[j]);
            }
        }
    }
}
