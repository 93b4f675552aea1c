package org.backstep;

import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplerKind;

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
        for (int k = from; k >= 1; k--) {
            for (int round = 0; round < rounds; round++) {
                float[] out = chain.predictAtStep(ws, x, k);
                if (kind == SamplerKind.ANCESTRAL) {
                    ancestralStepInPlace(chain, x, out, rows, k, rng);
                } else {
                    implicitStepInPlace(chain, x, out, rows, k, eta, rng);
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
     * One ancestral step k to k-1 for every row (Ho et al. 2020, algorithm 2): continuous cells
     * x_{k-1} = (x_k - beta_k / sqrt(1 - alpha-bar_k) eps-hat) / sqrt(alpha_k) + sigma_k z (z = 0 at
     * k = 1), sigma_k^2 from {@link Chain#reverseLogVariance}; binary cells drawn from
     * {@link Chain#binaryReverseOne}. Per row: the continuous cells' Gaussian draws, then the binary
     * cells' uniform draws.
     *
     * @param chain the chain
     * @param x rows x D at step k; modified in place to step k-1
     * @param out the estimator's rows x outputs at step k, not modified
     * @param rows rows
     * @param k the step, 1..K
     * @param rng the chunk's generator (advanced)
     */
    static void ancestralStepInPlace(Chain chain, float[] x, float[] out, int rows, int k, SplittableRandom rng) {
        int d = chain.d;
        int dc = chain.dc;
        int outputs = chain.outputs;
        boolean learned = chain.variance == ReverseVariance.LEARNED;
        int lOff = dc * (learned ? 2 : 1);
        boolean noise = k > 1;
        // per-step constants, hoisted out of the cell loop (the same values, so the same bits)
        double epsCoef = chain.epsCoef[k];
        double sqrtAlpha = chain.sqrtAlpha[k];
        double logBeta = chain.logBeta[k];
        double logVar = chain.logVarClipped[k];
        double fixedSd = learned ? 0.0 : Math.exp(0.5 * chain.reverseLogVariance(k, 0.0));
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int oo = r * outputs;
            for (int j = 0; j < dc; j++) {
                double mean = (x[o + j] - epsCoef * out[oo + j]) / sqrtAlpha;
                double next = mean;
                if (noise) {
                    double sd;
                    if (learned) {
                        double v = out[oo + dc + j];
                        sd = Math.exp(0.5 * chain.clampLogVariance(k, v * logBeta + (1.0 - v) * logVar));   // reverseLogVariance, LEARNED
                    } else {
                        sd = fixedSd;
                    }
                    next = mean + sd * rng.nextGaussian();
                }
                if (!Float.isFinite((float) next)) {
                    throw diverged(chain, k, j, next);
                }
                x[o + j] = (float) next;
            }
            binaryStepInPlace(chain, x, out, o, oo + lOff, k, rng);
        }
    }

    /**
     * One implicit step k to k-1 for every row (Song, Meng &amp; Ermon 2021, eq. 12):
     * x0-hat = (x_k - sqrt(1 - alpha-bar_k) eps-hat) / sqrt(alpha-bar_k),
     * x_{k-1} = sqrt(alpha-bar_{k-1}) x0-hat + sqrt(1 - alpha-bar_{k-1} - sigma^2) eps-hat + sigma z,
     * sigma = eta sqrt((1 - alpha-bar_{k-1}) / (1 - alpha-bar_k)) sqrt(1 - alpha-bar_k / alpha-bar_{k-1})
     * (eq. 16), sigma = 0 at k = 1; binary cells as in the ancestral step.
     *
     * @param chain the chain
     * @param x rows x D at step k; modified in place to step k-1
     * @param out the estimator's rows x outputs at step k, not modified
     * @param rows rows
     * @param k the step, 1..K
     * @param eta eta in [0, 1]
     * @param rng the chunk's generator (advanced)
     */
    static void implicitStepInPlace(Chain chain, float[] x, float[] out, int rows, int k, double eta,
                                    SplittableRandom rng) {
        int d = chain.d;
        int dc = chain.dc;
        int outputs = chain.outputs;
        int lOff = dc * (chain.variance == ReverseVariance.LEARNED ? 2 : 1);
        double abar = chain.sqrtAbar[k] * chain.sqrtAbar[k];
        double abarPrev = chain.sqrtAbar[k - 1] * chain.sqrtAbar[k - 1];
        double sqrtOneMinusAbar = chain.sqrtOneMinusAbar[k];
        double sqrtAbar = chain.sqrtAbar[k];
        double sigma = k > 1
                ? eta * Math.sqrt((1.0 - abarPrev) / (1.0 - abar)) * Math.sqrt(1.0 - abar / abarPrev)
                : 0.0;
        double dir = Math.sqrt(Math.max(0.0, 1.0 - abarPrev - sigma * sigma));
        double sqrtAbarPrev = Math.sqrt(abarPrev);
        boolean noise = sigma > 0;
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int oo = r * outputs;
            for (int j = 0; j < dc; j++) {
                double eh = out[oo + j];
                double x0h = (x[o + j] - sqrtOneMinusAbar * eh) / sqrtAbar;
                double next = sqrtAbarPrev * x0h + dir * eh + (noise ? sigma * rng.nextGaussian() : 0.0);
                if (!Float.isFinite((float) next)) {
                    throw diverged(chain, k, j, next);
                }
                x[o + j] = (float) next;
            }
            binaryStepInPlace(chain, x, out, o, oo + lOff, k, rng);
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

    /** Draws the binary cells of one row (at x[o + dc ..], logits at out[logits ..]) from p(x_{k-1} | x_k). */
    private static void binaryStepInPlace(Chain chain, float[] x, float[] out, int o, int logits, int k,
                                          SplittableRandom rng) {
        int dc = chain.dc;
        for (int j = dc; j < chain.d; j++) {
            double pOne = Chain.sigmoid(out[logits + (j - dc)]);
            double p1 = chain.binaryReverseOne(k, x[o + j], pOne);
            x[o + j] = rng.nextDouble() < p1 ? 1f : 0f;
        }
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
