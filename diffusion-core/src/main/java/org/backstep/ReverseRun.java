package org.backstep;

import java.util.SplittableRandom;

/**
 * Runs the reverse chain on a chunk of rows, from a given step down to x_0, with optional known
 * cells.
 *
 * <p>Known cells (imputation, denoising) follow the replacement method with resampling of Lugmayr
 * et al. 2022 (RePaint, algorithm 1): after each reverse step k to k-1, known cells are replaced by
 * a fresh draw of q(x_{k-1} | x_0) of their observed value, and with r resampling rounds the pair is
 * diffused one step back up, x_k ~ q(x_k | x_{k-1}), and the step is redone r - 1 times so that the
 * two parts harmonize.
 */
final class ReverseRun {

    private ReverseRun() {
    }

    /**
     * @param chain the chain
     * @param x rows x D, the state at step {@code from}; modified in place and left at x_0
     * @param rows rows in the chunk
     * @param from the chain step to start at (K for sampling from the prior)
     * @param known rows x D model-space values of known cells, NaN where unknown; null for none
     * @param rounds resampling rounds per step, at least 1
     * @param kind the sampler
     * @param eta the implicit sampler's eta
     * @param rng the chunk's generator
     */
    static void run(Chain chain, float[] x, int rows, int from, float[] known, int rounds, SamplerKind kind,
                    double eta, SplittableRandom rng) {
        Chain.Workspace ws = chain.workspace(rows);
        int d = chain.d;
        int dc = chain.dc;
        boolean learned = chain.variance == ReverseVariance.LEARNED;
        int lOff = dc * (learned ? 2 : 1);
        for (int k = from; k >= 1; k--) {
            for (int round = 0; round < rounds; round++) {
                float[] out = chain.predictAtStep(ws, x, k);
                double abar = chain.sqrtAbar[k] * chain.sqrtAbar[k];
                double abarPrev = chain.sqrtAbar[k - 1] * chain.sqrtAbar[k - 1];
                for (int r = 0; r < rows; r++) {
                    int o = r * d;
                    int oo = r * chain.outputs;
                    for (int j = 0; j < dc; j++) {
                        double xk = x[o + j];
                        double eh = out[oo + j];
                        double next;
                        if (kind == SamplerKind.ANCESTRAL) {
                            double mean = (xk - chain.epsCoef[k] * eh) / chain.sqrtAlpha[k];
                            if (k > 1) {
                                double lv = chain.reverseLogVariance(k, learned ? out[oo + dc + j] : 0.0);
                                next = mean + Math.exp(0.5 * lv) * rng.nextGaussian();
                            } else {
                                next = mean;
                            }
                        } else {
                            double x0h = (xk - chain.sqrtOneMinusAbar[k] * eh) / chain.sqrtAbar[k];
                            double sigma = k > 1
                                    ? eta * Math.sqrt((1.0 - abarPrev) / (1.0 - abar)) * Math.sqrt(1.0 - abar / abarPrev)
                                    : 0.0;
                            double dir = Math.sqrt(Math.max(0.0, 1.0 - abarPrev - sigma * sigma));
                            next = Math.sqrt(abarPrev) * x0h + dir * eh + (sigma > 0 ? sigma * rng.nextGaussian() : 0.0);
                        }
                        if (!Float.isFinite((float) next)) {
                            throw diverged(chain, k, j, next);
                        }
                        x[o + j] = (float) next;
                    }
                    for (int j = dc; j < d; j++) {
                        double pOne = Chain.sigmoid(out[oo + lOff + (j - dc)]);
                        double p1 = chain.binaryReverseOne(k, x[o + j], pOne);
                        x[o + j] = rng.nextDouble() < p1 ? 1f : 0f;
                    }
                }
                if (known != null) {
                    replaceKnown(chain, x, known, rows, k - 1, rng);
                    if (round < rounds - 1 && k > 1) {
                        forwardOneStep(chain, x, rows, k, rng);
                    }
                } else {
                    break;
                }
            }
        }
    }

    /**
     * A continuous cell left the float range: each ancestral step divides by sqrt(alpha_k), so an
     * estimator that is far off (undertrained, or a schedule whose last betas are near 1) can make
     * the chain grow without bound. Reported instead of returning NaN cells.
     */
    private static IllegalStateException diverged(Chain chain, int k, int column, double value) {
        return new IllegalStateException(String.format(java.util.Locale.ROOT,
                "the reverse chain diverged: continuous model column %d became %s at step %d of %d "
                        + "(1/sqrt(alpha) there is %.3g); the model's predictions are far off at this step. "
                        + "Train longer, or use a schedule whose last betas are further from 1 (more steps)",
                column, value, k, chain.steps, 1.0 / chain.sqrtAlpha[k]));
    }

    /** Known cells get a fresh draw of q(x_s | x_0 = observed); at s = 0 the observed value itself. */
    static void replaceKnown(Chain chain, float[] x, float[] known, int rows, int s, SplittableRandom rng) {
        int d = chain.d;
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < d; j++) {
                float v = known[o + j];
                if (Float.isNaN(v)) {
                    continue;
                }
                if (s == 0) {
                    x[o + j] = v;
                } else if (j < chain.dc) {
                    x[o + j] = (float) (chain.sqrtAbar[s] * v + chain.sqrtOneMinusAbar[s] * rng.nextGaussian());
                } else {
                    double p1 = v > 0.5f ? chain.binMarginalOne1[s] : chain.binMarginalOne0[s];
                    x[o + j] = rng.nextDouble() < p1 ? 1f : 0f;
                }
            }
        }
    }

    /** x_k ~ q(x_k | x_{k-1}): Gaussian N(sqrt(alpha_k) x, beta_k); binary kept with 1 - beta_k, else Bernoulli(1/2). */
    static void forwardOneStep(Chain chain, float[] x, int rows, int k, SplittableRandom rng) {
        int d = chain.d;
        double sb = Math.sqrt(chain.beta[k]);
        double binBeta = chain.binary.beta(k);
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < chain.dc; j++) {
                x[o + j] = (float) (chain.sqrtAlpha[k] * x[o + j] + sb * rng.nextGaussian());
            }
            for (int j = chain.dc; j < d; j++) {
                if (rng.nextDouble() < binBeta) {
                    x[o + j] = rng.nextDouble() < 0.5 ? 1f : 0f;
                }
            }
        }
    }
}
