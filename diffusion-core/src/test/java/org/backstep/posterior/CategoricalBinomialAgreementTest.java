package org.backstep.posterior;

import static org.backstep.posterior.Near.IDENTITY_REL;
import static org.backstep.posterior.Near.assertClose;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;

/**
 * K = 2: the multinomial diffusion of Hoogeboom et al. 2021 (section 4) is the binomial diffusion
 * of Sohl-Dickstein et al. 2015 (table App.1), since the kernels (1 - beta_t) x_{t-1} + beta_t / K
 * and x_{t-1} (1 - beta_t) + beta_t / 2 are the same formula at K = 2. Both classes read beta_t and
 * alpha-bar_t from the same {@link NoiseSchedule}, so over any one schedule every figure must agree
 * with {@link BinomialDiffusion} and the Bernoulli divergence of {@link Divergence}. In particular
 * Backstep's default schedule of binary columns, {@link NoiseSchedule#binomial(int)}
 * (beta_t = 1/(T - t + 1), alpha-bar_t = (T - t)/T), is just one schedule among those checked here:
 * over it a two-category column diffuses exactly as a binary column does today. The multinomial
 * process does not need that schedule; it runs over any schedule, and the binomial one's
 * beta_T = 1 makes x_T exactly uniform for every K.
 */
class CategoricalBinomialAgreementTest {

    /**
     * Two computations of the same probability (log-odds in one class, log-space Bayes in the
     * other): a few roundings, relative, above this size; absolute (tolerance times it) below.
     */
    private static final double PROBABILITY_FLOOR = 1e-15;

    /** Divergences are compared relatively above this size and absolutely below (see the contract). */
    private static final double KL_SCALE = 1e-3;

    /** Relative agreement of the step terms: sums of two or K terms formed two ways. */
    private static final double KL_REL = 1e-10;

    /**
     * The absolute rounding of a probability formed in linear space, as BinomialDiffusion.posteriorOne
     * forms post0 + P (post1 - post0): a divergence that takes the log of a probability q within
     * 1e-9 of 0 or 1 can then only be checked to about this divided by q (or 1 - q), relatively.
     */
    private static final double LINEAR_ROUNDING = 1e-15;

    private static final List<NoiseSchedule> SCHEDULES = List.of(
            NoiseSchedule.binomial(5),
            NoiseSchedule.ofBetas(0.1, 0.25, 0.4, 0.6, 0.9),
            NoiseSchedule.ofBetas(1e-9, 1e-6, 1e-3, 0.5),
            NoiseSchedule.cosine(6),
            NoiseSchedule.linear(1000),
            NoiseSchedule.binomial(40).strided(6));

    private static final double[] PREDICTED_ONE = {0.0, 1e-9, 0.25, 0.7, 1.0 - 1e-9, 1.0};

    /** Logits of a predicted P(x_0 = 1) = p: (log(1 - p), log p), -infinity for a probability of 0. */
    private static double[] logits(double p) {
        return new double[] {Math.log1p(-p), Math.log(p)};
    }

    @Test
    void kernelMarginalAndPosteriorAreTheBinomialOnes() {
        for (NoiseSchedule s : SCHEDULES) {
            CategoricalDiffusion cat = CategoricalDiffusion.of(s, 2);
            BinomialDiffusion bin = BinomialDiffusion.of(s);
            for (int t = 1; t <= s.steps(); t++) {
                for (int from = 0; from <= 1; from++) {
                    // Sohl-Dickstein et al. 2015, table App.1, against Hoogeboom et al. 2021, section 4
                    assertClose(bin.transitionOne(t, from), cat.transition(t, from, 1), IDENTITY_REL, PROBABILITY_FLOOR,
                            "kernel at t = " + t + " from " + from + " over " + s);
                }
            }
            for (int t = 0; t <= s.steps(); t++) {
                for (int x0 = 0; x0 <= 1; x0++) {
                    assertClose(bin.marginalOne(t, x0), cat.marginal(t, x0, 1), IDENTITY_REL, PROBABILITY_FLOOR,
                            "marginal at t = " + t + ", x_0 = " + x0 + " over " + s);
                }
            }
            for (int t = 1; t <= s.steps(); t++) {
                for (int x0 = 0; x0 <= 1; x0++) {
                    for (int xt = 0; xt <= 1; xt++) {
                        assertClose(bin.posteriorOne(t, x0, xt), cat.posterior(t, x0, xt)[1], IDENTITY_REL,
                                PROBABILITY_FLOOR, "posterior at t = " + t + ", x_0 = " + x0 + ", x_t = " + xt + " over " + s);
                    }
                }
            }
        }
    }

    @Test
    void reverseKernelIsTheBinomialPosteriorAtAPredictedProbability() {
        for (NoiseSchedule s : SCHEDULES) {
            CategoricalDiffusion cat = CategoricalDiffusion.of(s, 2);
            BinomialDiffusion bin = BinomialDiffusion.of(s);
            for (double p : PREDICTED_ONE) {
                for (int t = 1; t <= s.steps(); t++) {
                    for (int xt = 0; xt <= 1; xt++) {
                        // BinomialDiffusion.posteriorOne with P(x_0 = 1), as Chain uses it for binary columns
                        double[] rev = cat.reverseLogProbabilities(t, xt, logits(p));
                        assertClose(bin.posteriorOne(t, p, xt), Math.exp(rev[1]), IDENTITY_REL, PROBABILITY_FLOOR,
                                "reverse at P = " + p + ", t = " + t + ", x_t = " + xt + " over " + s);
                    }
                }
            }
        }
    }

    @Test
    void boundTermsAreTheBinomialOnes() {
        for (NoiseSchedule s : SCHEDULES) {
            CategoricalDiffusion cat = CategoricalDiffusion.of(s, 2);
            BinomialDiffusion bin = BinomialDiffusion.of(s);
            for (int x0 = 0; x0 <= 1; x0++) {
                // L_T: BinomialDiffusion.priorKl, u atanh(u) + log1p(-u^2)/2, a different stable form
                assertClose(bin.priorKl(x0), cat.priorKl(), IDENTITY_REL, 0.0, "prior term over " + s);
                for (double p : PREDICTED_ONE) {
                    // L_0 = -log p(x_0 | x_1), the decoder of a binary column, with the documented floor
                    double predicted = x0 == 1 ? p : 1.0 - p;
                    assertClose(-Math.log(Math.max(predicted, CategoricalDiffusion.PROBABILITY_FLOOR)),
                            cat.decoderNll(x0, logits(p)), IDENTITY_REL, KL_SCALE, "decoder at P = " + p);
                    for (int t = 2; t <= s.steps(); t++) {
                        for (int xt = 0; xt <= 1; xt++) {
                            // L_{t-1}: Divergence.bernoulliKl of the two binomial posteriors (Cover & Thomas 2.3)
                            double model = bin.posteriorOne(t, p, xt);
                            double expected = Divergence.bernoulliKl(bin.posteriorOne(t, x0, xt), model);
                            // the binomial average is formed in linear space: 1 - model is good to 1e-16 absolute only
                            double rel = Math.max(KL_REL, LINEAR_ROUNDING / Math.min(model, 1.0 - model));
                            // a model probability within the floor of 0 or 1 is floored per category here and
                            // clamped as a Bernoulli there: the two differ by at most about the floor
                            double got = cat.posteriorKl(t, x0, xt, logits(p));
                            if (Math.min(model, 1.0 - model) < CategoricalDiffusion.PROBABILITY_FLOOR) {
                                org.junit.jupiter.api.Assertions.assertEquals(expected, got,
                                        2 * CategoricalDiffusion.PROBABILITY_FLOOR, "floored L_{t-1} at P = " + p);
                                continue;
                            }
                            assertClose(expected, got, rel, KL_SCALE,
                                    "L_{t-1} at P = " + p + ", t = " + t + ", x_0 = " + x0 + ", x_t = " + xt + " over " + s);
                        }
                    }
                }
            }
        }
    }

    @Test
    void theBinomialScheduleMakesXTExactlyUniform() {
        // Sohl-Dickstein et al. 2015, appendix: beta_T = 1 under the binomial schedule, for any K here
        for (int k : new int[] {2, 3, 17, 1000}) {
            CategoricalDiffusion cat = CategoricalDiffusion.of(NoiseSchedule.binomial(10), k);
            assertEquals(0.0, cat.priorKl(), 0.0, "prior term at K = " + k);
            assertEquals(cat.marginal(10, 0, 0), cat.marginal(10, 0, k - 1), 0.0, "x_T uniform at K = " + k);
            assertEquals(1.0 / k, cat.marginal(10, 0, 1), 1e-15 / k, "x_T uniform at K = " + k);
        }
    }
}
