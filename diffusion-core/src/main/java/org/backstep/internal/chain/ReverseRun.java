package org.backstep.internal.chain;

import org.backstep.option.Conditioning;

import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplerKind;

import java.util.SplittableRandom;

/**
 * Runs the reverse chain on a chunk of rows, from a given step down to x_0, with optional known
 * cells.
 *
 * <p>Known cells (imputation, denoising) are held to their values by one of the methods of
 * {@link Conditioning}: replacement (Lugmayr et al. 2022, algorithm 1: after each reverse step k to
 * k-1, known cells are replaced by a fresh draw of q(x_{k-1} | x_0) of their observed value), or the
 * perturbed reverse kernel p(x_{k-1} | x_k) q(x_{k-1} | x_0 = y) of the known cells
 * (Sohl-Dickstein et al. 2015, section 2.5.2), ancestral sampler only. With r resampling rounds
 * the row is diffused one step back up, x_k ~ q(x_k | x_{k-1}), and the step is redone r - 1
 * times so that the two parts harmonize (Lugmayr et al. 2022).
 *
 * <p>One file: the ancestral, implicit and kernel-product steps share the chain's per-step
 * constants and the divergence check, and a reader compares them side by side.
 */
public final class ReverseRun {

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
                    double eta, SplittableRandom[] rng) {
        run(chain, x, rows, from, known, rounds, kind, eta, Conditioning.REPLACEMENT, rng);
    }

    /**
     * As {@link #run(Chain, float[], int, int, float[], int, SamplerKind, double, SplittableRandom[])},
     * with the known cells held by the given method.
     *
     * @param chain the chain
     * @param x rows x D, the state at step {@code from}; modified in place and left at x_0
     * @param rows rows in the chunk
     * @param from the chain step to start at (K for sampling from the prior)
     * @param known rows x D model-space values of known cells, NaN where unknown; null for none; not modified
     * @param rounds resampling rounds per step, at least 1
     * @param kind the sampler; {@link Conditioning#KERNEL_PRODUCT} needs {@link SamplerKind#ANCESTRAL}
     * @param eta the implicit sampler's eta
     * @param conditioning how known cells are held
     * @param rng the chunk's generator
     */
    public static void run(Chain chain, float[] x, int rows, int from, float[] known, int rounds, SamplerKind kind,
                    double eta, Conditioning conditioning, SplittableRandom rng) {
        run(chain, x, rows, from, known, rounds, kind, eta, conditioning, Parallel.sameForEveryRow(rng, rows));
    }

    /**
     * As {@link #run(Chain, float[], int, int, float[], int, SamplerKind, double, Conditioning, SplittableRandom)},
     * row r drawing from {@code rng[r]}. Every draw of a row is made in that row's loop, in the
     * same order whatever the generators, so an array holding one generator for every row draws as
     * the one-generator form does, and with a generator per row, a row's draws do not depend on the
     * other rows of the chunk.
     *
     * @param chain the chain
     * @param x rows x D, the state at step {@code from}; modified in place and left at x_0
     * @param rows rows in the chunk
     * @param from the chain step to start at
     * @param known rows x D model-space values of known cells, NaN where unknown; null for none; not modified
     * @param rounds resampling rounds per step, at least 1
     * @param kind the sampler
     * @param eta the implicit sampler's eta
     * @param conditioning how known cells are held
     * @param rng one generator per row (entries may repeat; each advanced)
     */
    public static void run(Chain chain, float[] x, int rows, int from, float[] known, int rounds, SamplerKind kind,
                           double eta, Conditioning conditioning, SplittableRandom[] rng) {
        run(chain, x, rows, from, known, rounds, kind, eta, conditioning, null, rng);
    }

    /**
     * A further replacement made after each reverse step, after the known cells' ({@link Denoiser}'s
     * per-direction release of noisy readings). It draws row r's numbers from {@code rng[r]} inside
     * row r's loop, and nothing at a step where it replaces nothing, so that a run that never
     * replaces draws as a run without it does.
     */
    @FunctionalInterface
    interface StepReplacement {
        /**
         * @param x rows x D chain rows at step s, modified in place
         * @param rows rows in the chunk
         * @param s the chain step just reached, 0..K-1
         * @param rng one generator per row (entries may repeat; advanced)
         */
        void replaceInPlace(float[] x, int rows, int s, SplittableRandom[] rng);
    }

    /**
     * As {@link #run(Chain, float[], int, int, float[], int, SamplerKind, double, Conditioning, SplittableRandom[])},
     * with {@code after} applied to the rows after each step's move and known-cell replacement.
     *
     * @param after the further replacement, or null for none
     */
    static void run(Chain chain, float[] x, int rows, int from, float[] known, int rounds, SamplerKind kind,
                    double eta, Conditioning conditioning, StepReplacement after, SplittableRandom[] rng) {
        boolean product = known != null && conditioning == Conditioning.KERNEL_PRODUCT;
        if (product && chain.coordinates != null) {
            throw new IllegalArgumentException("conditioning is " + Conditioning.KERNEL_PRODUCT + "; a model fitted with"
                    + " coordinates WHITENED holds observed cells by " + Conditioning.REPLACEMENT
                    + " only (a whitened cell mixes every continuous column, so no kernel of an observed cell alone exists);"
                    + " WHITENED is the default coordinates: to impute by " + Conditioning.KERNEL_PRODUCT + ", fit with"
                    + " coordinates STANDARDIZED (Backstep.builder().coordinates(Coordinates.STANDARDIZED))");
        }
        if (product && kind != SamplerKind.ANCESTRAL) {
            throw new IllegalArgumentException("kind is " + kind + "; the kernel product conditioning needs "
                    + SamplerKind.ANCESTRAL + " (the implicit sampler has no reverse kernel to multiply)");
        }
        Chain.Workspace ws = chain.workspace(rows);
        for (int k = from; k >= 1; k--) {
            for (int round = 0; round < rounds; round++) {
                float[] out = chain.predictAtStep(ws, x, k);
                if (product) {
                    productStepInPlace(chain, x, out, known, rows, k, rng);
                } else if (kind == SamplerKind.ANCESTRAL) {
                    ancestralStepInPlace(chain, x, out, rows, k, rng);
                } else {
                    implicitStepInPlace(chain, x, out, rows, k, eta, rng);
                }
                if (known != null && !product) {
                    replaceKnown(chain, x, known, rows, k - 1, rng);
                }
                if (after != null) {
                    after.replaceInPlace(x, rows, k - 1, rng);
                }
                if (known == null) {
                    break;
                }
                if (round < rounds - 1 && k > 1) {
                    forwardOneStep(chain, x, rows, k, rng);
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
    static void ancestralStepInPlace(Chain chain, float[] x, float[] out, int rows, int k, SplittableRandom[] rng) {
        StepKernel kernel = new StepKernel(chain, k);
        double[][] logits = chain.logitBuffers();
        int d = chain.d;
        int outputs = chain.outputs;
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int oo = r * outputs;
            for (int j = 0; j < chain.dc; j++) {
                double mean = kernel.mean(x[o + j], out[oo + j]);
                double next = mean;
                if (kernel.noise) {
                    next = mean + kernel.sd(out, oo, j) * rng[r].nextGaussian();
                }
                if (!Float.isFinite((float) next)) {
                    throw diverged(chain, k, j, next);
                }
                x[o + j] = (float) next;
            }
            binaryStepInPlace(chain, x, out, o, oo + chain.logitOffset, k, rng[r]);
            categoricalStepInPlace(chain, x, out, o, oo, k, logits, rng[r]);
        }
    }

    /**
     * The constants of the Gaussian reverse kernel at step k, hoisted out of the cell loops (the same
     * expressions as before they were hoisted, so the same bits): mean
     * (x_k - beta_k / sqrt(1 - alpha-bar_k) eps-hat) / sqrt(alpha_k) and standard deviation from
     * {@link Chain#reverseLogVariance} (Ho et al. 2020, eq. 11; learned variances by Nichol &amp;
     * Dhariwal 2021, eq. 15).
     */
    private static final class StepKernel {
        final Chain chain;
        final int k;
        final boolean learned;
        final boolean noise;
        final double epsCoef;
        final double sqrtAlpha;
        final double fixedSd;

        StepKernel(Chain chain, int k) {
            this.chain = chain;
            this.k = k;
            learned = chain.variance == ReverseVariance.LEARNED;
            noise = k > 1;
            epsCoef = chain.epsCoef[k];
            sqrtAlpha = chain.sqrtAlpha[k];
            fixedSd = learned ? 0.0 : Math.exp(0.5 * chain.reverseLogVariance(k, 0.0));
        }

        /** The kernel's mean for a cell at x_k with predicted noise eps. */
        double mean(float xk, float eps) {
            return (xk - epsCoef * eps) / sqrtAlpha;
        }

        /** The kernel's standard deviation for continuous cell j of the row whose output starts at oo. */
        double sd(float[] out, int oo, int j) {
            if (!learned) {
                return fixedSd;
            }
            double v = out[oo + chain.dc + j];
            return Math.exp(0.5 * chain.reverseLogVariance(k, v));
        }
    }

    /**
     * One ancestral step k to k-1 for every row with the known cells' kernels multiplied by the
     * forward marginal of their value, p~(x_{k-1} | x_k) proportional to
     * p(x_{k-1} | x_k) q(x_{k-1} | x_0 = y) (Sohl-Dickstein et al. 2015, section 2.5.2; see
     * {@link Conditioning#KERNEL_PRODUCT}). Unknown cells are drawn as in
     * {@link #ancestralStepInPlace}; known continuous cells from
     * N(mu + w (m - mu), w v), m = sqrt(alpha-bar_{k-1}) y, v = 1 - alpha-bar_{k-1},
     * w = sigma_k^2 / (sigma_k^2 + v); known binary cells from the Bernoulli whose log-odds are the
     * sum of the kernel's and the marginal's; at k = 1 (alpha-bar_0 = 1, r a point mass) known cells
     * are set to y. The random draws are those of {@link #ancestralStepInPlace}, in the same order.
     *
     * @param chain the chain
     * @param x rows x D at step k; modified in place to step k-1
     * @param out the estimator's rows x outputs at step k, not modified
     * @param known rows x D model-space values of known cells, NaN where unknown; not modified
     * @param rows rows
     * @param k the step, 1..K
     * @param rng the chunk's generator (advanced)
     */
    static void productStepInPlace(Chain chain, float[] x, float[] out, float[] known, int rows, int k,
                                   SplittableRandom[] rng) {
        StepKernel kernel = new StepKernel(chain, k);
        int d = chain.d;
        int dc = chain.dc;
        int outputs = chain.outputs;
        // r_{k-1} = N(m, v): v = 1 - alpha-bar_{k-1} from the schedule (no cancellation), v > 0 for k > 1
        double targetScale = chain.sqrtAbar[k - 1];
        double targetVar = chain.sqrtOneMinusAbar[k - 1] * chain.sqrtOneMinusAbar[k - 1];
        double[][] catLogits = chain.logitBuffers();
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int oo = r * outputs;
            for (int j = 0; j < dc; j++) {
                float y = known[o + j];
                double mean = kernel.mean(x[o + j], out[oo + j]);
                double next = mean;
                if (kernel.noise) {
                    double sd = kernel.sd(out, oo, j);
                    double z = rng[r].nextGaussian();
                    if (Float.isNaN(y)) {
                        next = mean + sd * z;
                    } else {
                        // Product of N(mean, sd^2) and N(m, v) in the weight form: w = sd^2/(sd^2 + v) lies
                        // in [0, 1] and both terms of its denominator are positive (sd^2 is beta_k,
                        // beta-tilde_k, or a learned variance clamped within LOG_VARIANCE_MARGIN of them;
                        // v >= 1 - alpha-bar_1 > 0), so neither the mean nor the variance w v can divide by
                        // zero however close alpha-bar_{k-1} is to 1.
                        double w = productWeight(sd * sd, targetVar);
                        next = mean + w * (targetScale * y - mean) + Math.sqrt(w * targetVar) * z;
                    }
                } else if (!Float.isNaN(y)) {
                    next = y;   // k = 1: r_0 is the point mass at y
                }
                if (!Float.isFinite((float) next)) {
                    throw diverged(chain, k, j, next);
                }
                x[o + j] = (float) next;
            }
            int logits = oo + chain.logitOffset;
            for (int j = dc; j < chain.discreteEnd; j++) {
                double pOne = Chain.sigmoid(out[logits + (j - dc)]);
                float y = known[o + j];
                double p1 = Float.isNaN(y) ? chain.binaryReverseOne(k, x[o + j], pOne)
                        : productBinaryOne(chain, k, x[o + j], pOne, y);
                x[o + j] = rng[r].nextDouble() < p1 ? 1f : 0f;
            }
            for (int j = 0; j < chain.dk; j++) {
                int at = o + chain.discreteEnd + j;
                float y = known[at];
                if (!Float.isNaN(y) && k == 1) {
                    x[at] = y;      // r_0 is the point mass at y
                    rng[r].nextDouble();
                    continue;
                }
                chain.logitsInto(out, oo, j, catLogits[j]);
                org.backstep.posterior.CategoricalDiffusion q = chain.catDiffusion[j];
                double[] lp = q.reverseLogProbabilities(k, (int) x[at], catLogits[j]);
                if (!Float.isNaN(y)) {
                    for (int cat = 0; cat < lp.length; cat++) {
                        lp[cat] += q.logMarginal(k - 1, (int) y, cat);   // times q(x_{k-1} | x_0 = y)
                    }
                }
                x[at] = org.backstep.posterior.CategoricalDiffusion.draw(lp, rng[r].nextDouble());
            }
        }
    }

    /**
     * The weight w = s / (s + v) of the product of N(mu, s) and N(m, v) (variances s and v):
     * N(mu, s) N(m, v) is proportional to N(mu + w (m - mu), w v), the precision-weighted mean with
     * precision 1/s + 1/v (Bayes' rule for a linear Gaussian model with A = I, b = 0; Bishop 2006,
     * eq. 2.116-2.117). Written with w so that nothing is divided by a variance that may be tiny:
     * w lies in [0, 1] for s, v &gt;= 0 with s + v &gt; 0.
     *
     * @param s the kernel's variance, &gt; 0
     * @param v the second distribution's variance, &gt;= 0
     * @return w
     */
    public static double productWeight(double s, double v) {
        return s / (s + v);
    }

    /**
     * P(x_{k-1} = 1) under the perturbed kernel of a known binary cell of value y: the kernel
     * p = {@link Chain#binaryReverseOne} times r_{k-1}(1) = q(x_{k-1} = 1 | x_0 = y), normalized
     * ({@link #productOne}); at k = 1, r_0 is the point mass at y, so y itself. The complement
     * of the binomial marginal is taken from the other value's marginal, q(x = 0 | x_0 = 1) =
     * q(x = 1 | x_0 = 0) (the marginal is symmetric in the two values), so it is not formed by
     * subtraction.
     *
     * @param chain the chain
     * @param k the step, 1..K
     * @param xk the cell at step k, 0 or 1
     * @param pOne the estimator's P(x_0 = 1 | x_k)
     * @param y the observed value, 0 or 1
     * @return the probability that x_{k-1} = 1
     */
    public static double productBinaryOne(Chain chain, int k, float xk, double pOne, float y) {
        boolean one = y > 0.5f;
        if (k == 1) {
            return one ? 1.0 : 0.0;
        }
        double rhoOne = one ? chain.binMarginalOne1[k - 1] : chain.binMarginalOne0[k - 1];
        double rhoZero = one ? chain.binMarginalOne0[k - 1] : chain.binMarginalOne1[k - 1];
        return productOne(chain.binaryReverseOne(k, xk, pOne), rhoOne, rhoZero);
    }

    /**
     * The normalized product of two Bernoulli distributions, p rho / (p rho + (1 - p)(1 - rho)),
     * as the logistic of the summed log-odds log(p/(1 - p)) + log(rho/(1 - rho)). p is kept within
     * {@link Chain#PROB_FLOOR} of 0 and 1 (a float network's probability can round to 0 or 1; the
     * product would then be 0/0 against a rho of the other extreme); rho and 1 - rho are passed
     * separately so that 1 - rho is not formed by cancellation. Neither logarithm is infinite, so
     * the result is never NaN.
     *
     * @param p the kernel's P(x = 1), in [0, 1]
     * @param rho the second distribution's P(x = 1), in (0, 1)
     * @param oneMinusRho 1 - rho, in (0, 1)
     * @return the product's P(x = 1)
     */
    static double productOne(double p, double rho, double oneMinusRho) {
        double pc = org.backstep.posterior.Divergence.clampProbability(p);
        double logOdds = Math.log(pc) - Math.log1p(-pc) + Math.log(rho) - Math.log(oneMinusRho);
        return Chain.sigmoid(logOdds);
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
                                    SplittableRandom[] rng) {
        int d = chain.d;
        int dc = chain.dc;
        int outputs = chain.outputs;
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
        double[][] logits = chain.logitBuffers();
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int oo = r * outputs;
            for (int j = 0; j < dc; j++) {
                double eh = out[oo + j];
                double x0h = (x[o + j] - sqrtOneMinusAbar * eh) / sqrtAbar;
                double next = sqrtAbarPrev * x0h + dir * eh + (noise ? sigma * rng[r].nextGaussian() : 0.0);
                if (!Float.isFinite((float) next)) {
                    throw diverged(chain, k, j, next);
                }
                x[o + j] = (float) next;
            }
            binaryStepInPlace(chain, x, out, o, oo + chain.logitOffset, k, rng[r]);
            categoricalStepInPlace(chain, x, out, o, oo, k, logits, rng[r]);
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
        for (int j = dc; j < chain.discreteEnd; j++) {
            double pOne = Chain.sigmoid(out[logits + (j - dc)]);
            double p1 = chain.binaryReverseOne(k, x[o + j], pOne);
            x[o + j] = rng.nextDouble() < p1 ? 1f : 0f;
        }
    }

    /**
     * Draws the categorical cells of one row (at x[o + dc + db ..], output row at out[oo ..]) from
     * p(x_{k-1} | x_k) = sum_c x0hat_c q(x_{k-1} | x_k, x_0 = c) (Hoogeboom et al. 2021, section 4;
     * {@link org.backstep.posterior.CategoricalDiffusion#reverseLogProbabilities}), one uniform each;
     * at k = 1 the draw is from x0hat itself, so only categories 0..K-1 come out.
     */
    private static void categoricalStepInPlace(Chain chain, float[] x, float[] out, int o, int oo, int k,
                                               double[][] logits, SplittableRandom rng) {
        for (int j = 0; j < chain.dk; j++) {
            int at = o + chain.discreteEnd + j;
            chain.logitsInto(out, oo, j, logits[j]);
            double[] lp = chain.catDiffusion[j].reverseLogProbabilities(k, (int) x[at], logits[j]);
            x[at] = org.backstep.posterior.CategoricalDiffusion.draw(lp, rng.nextDouble());
        }
    }

    /**
     * Known cells get a fresh draw of q(x_s | x_0 = observed); at s = 0 the observed value itself.
     * In a whitened chain the known values are standardized model-space cells and the whitened
     * ones are replaced with the regression adjustment of {@link ChainCoordinates#replaceKnown}
     * first; the other cells as in a plain chain.
     */
    static void replaceKnown(Chain chain, float[] x, float[] known, int rows, int s, SplittableRandom[] rng) {
        int d = chain.d;
        ChainCoordinates wc = chain.coordinates;
        if (wc != null) {
            wc.replaceKnown(chain, x, known, rows, s, rng);
        }
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < d; j++) {
                float v = known[o + j];
                if (Float.isNaN(v) || (wc != null && j < chain.dc && wc.whitens(j))) {
                    continue;
                }
                if (s == 0) {
                    x[o + j] = v;
                } else if (j < chain.dc) {
                    x[o + j] = chain.diffusedContinuous(s, v, rng[r].nextGaussian());
                } else {
                    x[o + j] = chain.diffusedDiscrete(j, s, v, rng[r].nextDouble());
                }
            }
        }
    }

    /** x_k ~ q(x_k | x_{k-1}): Gaussian N(sqrt(alpha_k) x, beta_k); binary kept with 1 - beta_k, else Bernoulli(1/2). */
    static void forwardOneStep(Chain chain, float[] x, int rows, int k, SplittableRandom[] rng) {
        int d = chain.d;
        double sb = Math.sqrt(chain.beta[k]);
        double binBeta = chain.binary.beta(k);
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < chain.dc; j++) {
                x[o + j] = (float) (chain.sqrtAlpha[k] * x[o + j] + sb * rng[r].nextGaussian());
            }
            for (int j = chain.dc; j < chain.discreteEnd; j++) {
                if (rng[r].nextDouble() < binBeta) {
                    x[o + j] = rng[r].nextDouble() < 0.5 ? 1f : 0f;
                }
            }
            for (int j = 0; j < chain.dk; j++) {
                // q(x_k | x_{k-1}) = Cat((1 - beta_k) x_{k-1} + beta_k / K): redrawn uniformly with beta_k
                if (rng[r].nextDouble() < binBeta) {
                    x[o + chain.discreteEnd + j] = chain.catDiffusion[j].priorDraw(rng[r].nextDouble());
                }
            }
        }
    }
}
