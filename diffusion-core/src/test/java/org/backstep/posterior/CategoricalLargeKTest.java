package org.backstep.posterior;

import static org.backstep.posterior.Near.assertClose;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;

/**
 * Many categories (K = 1,000 and 100,000) with predicted probabilities far below what a double
 * can hold outside log space: every vector stays finite where it should and normalized, every bound
 * term stays finite, and the prior term agrees with a direct sum over the K categories.
 */
class CategoricalLargeKTest {

    /** Total probability of a K-vector built in log space: K roundings of size 1e-16 (common practice, no source). */
    private static final double NORMALIZATION = 1e-12;

    /** The direct sum of K terms for the prior divergence: relative above 1e-3, absolute below. */
    private static final double PRIOR_REL = 1e-9;

    /**
     * KL(q || q) with q built by two formulas (the posterior, and the reverse kernel of a certain
     * prediction): log q differs by a few ulps of numbers up to about 20, times weights summing to 1.
     */
    private static final double ZERO_KL = 1e-14;

    private static final List<NoiseSchedule> SCHEDULES = List.of(
            NoiseSchedule.linear(100), NoiseSchedule.binomial(50), NoiseSchedule.ofBetas(1e-9, 1e-6, 1e-3, 0.5),
            NoiseSchedule.cosine(1000));

    /** Logits -8 k: P(x_0 = k) about exp(-8 k), down to exp(-7992); the last category ruled out. */
    private static double[] steepLogits(int k) {
        double[] logits = new double[k];
        for (int i = 0; i < k; i++) {
            logits[i] = -8.0 * i;
        }
        logits[k - 1] = Double.NEGATIVE_INFINITY;
        return logits;
    }

    /**
     * sum_k exp(logP_k) by Kahan's compensated summation (Higham, "Accuracy and Stability of Numerical
     * Algorithms", 2nd ed., section 4.3): a plain sum of 100,000 terms would itself be off by up to
     * about 1e-11.
     */
    private static double total(double[] logP) {
        double sum = 0.0;
        double carry = 0.0;
        for (double lp : logP) {
            double y = Math.exp(lp) - carry;
            double next = sum + y;
            carry = (next - sum) - y;
            sum = next;
        }
        return sum;
    }

    @Test
    void thousandCategoriesStayFiniteAndNormalized() {
        for (int k : new int[] {1000, 100_000}) {
            double[] logits = steepLogits(k);
            for (NoiseSchedule s : k == 1000 ? SCHEDULES : SCHEDULES.subList(0, 1)) {   // seconds, not minutes
                CategoricalDiffusion d = CategoricalDiffusion.of(s, k);
                int steps = s.steps();
                for (int t : new int[] {1, 2, Math.max(2, steps / 2), steps}) {
                    for (int xt : new int[] {0, k / 2, k - 1}) {
                        double[] rev = d.reverseLogProbabilities(t, xt, logits);
                        assertEquals(1.0, total(rev), NORMALIZATION, "reverse kernel sums to 1, K = " + k + ", t = " + t);
                        for (int i = 0; i < k; i++) {
                            boolean ruledOut = t == 1 && i == k - 1;
                            assertTrue(ruledOut ? rev[i] == Double.NEGATIVE_INFINITY : Double.isFinite(rev[i]) && rev[i] <= 0.0,
                                    "log p(x_{t-1} = " + i + ") is " + rev[i] + " at t = " + t + ", K = " + k);
                        }
                        for (int x0 : new int[] {0, k - 1}) {
                            double[] post = d.logPosterior(t, x0, xt);
                            assertEquals(1.0, total(post), NORMALIZATION, "posterior sums to 1");
                            if (t >= 2) {
                                for (double lp : post) {
                                    assertTrue(Double.isFinite(lp), "log posterior " + lp + " at t = " + t);
                                }
                                double kl = d.posteriorKl(t, x0, xt, logits);
                                assertTrue(Double.isFinite(kl) && kl >= 0.0, "L_{t-1} is " + kl + " at t = " + t);
                            }
                        }
                    }
                }
                double[] gradient = new double[k];
                for (int t : new int[] {1, 2, steps}) {
                    double term = d.boundTermGradientInPlace(t, k / 3, 0, logits, gradient);
                    assertTrue(Double.isFinite(term), "term at t = " + t);
                    double sum = 0.0;
                    for (double g : gradient) {
                        assertTrue(Double.isFinite(g), "gradient entry " + g + " at t = " + t);
                        sum += g;
                    }
                    assertEquals(0.0, sum, 1e-9, "a softmax gradient sums to 0, t = " + t);
                }
                double worst = d.decoderNll(k - 1, logits);
                assertEquals(-Math.log(CategoricalDiffusion.PROBABILITY_FLOOR), worst, 1e-12,
                        "a ruled-out category costs -log of the floor");
                double best = d.decoderNll(0, logits);
                // P(x_0 = 0) = 1 / sum_{i < K-1} exp(-8 i), the geometric series: -log P = log(1 + e^-8 + ...)
                double geometric = -Math.log1p(-Math.exp(-8.0));
                assertClose(geometric, best, 1e-12, 0.0, "decoder of the likeliest category");
            }
        }
    }

    @Test
    void priorTermMatchesADirectSumOverThousandCategories() {
        int k = 1000;
        for (NoiseSchedule s : List.of(NoiseSchedule.linear(100), NoiseSchedule.linear(10), NoiseSchedule.ofBetas(0.2, 0.3))) {
            CategoricalDiffusion d = CategoricalDiffusion.of(s, k);
            double kl = 0.0;
            for (int j = 0; j < k; j++) {
                double q = d.marginal(s.steps(), 0, j);
                kl += q * Math.log(q * k);    // KL(q(x_T | x_0) || Cat(1/K)) term by term (Cover & Thomas 2.3)
            }
            assertClose(kl, d.priorKl(), PRIOR_REL, 1e-3, "prior term over " + s);
        }
    }

    @Test
    void exactPredictionGivesZeroStepTerms() {
        // the network certain of the true x_0: the averaged posterior is q(x_{t-1} | x_t, x_0) itself
        int k = 1000;
        CategoricalDiffusion d = CategoricalDiffusion.of(NoiseSchedule.linear(100), k);
        double[] certain = new double[k];
        java.util.Arrays.fill(certain, Double.NEGATIVE_INFINITY);
        certain[417] = 0.0;
        for (int t = 2; t <= 100; t += 7) {
            for (int xt : new int[] {417, 3}) {
                assertEquals(0.0, d.posteriorKl(t, 417, xt, certain), ZERO_KL, "KL(q || q) = 0 at t = " + t);
                assertEquals(0.0, CategoricalDiffusion.categoricalKl(d.logPosterior(t, 417, xt),
                        d.reverseLogProbabilities(t, xt, certain)), ZERO_KL, "categoricalKl of equal distributions");
            }
        }
        assertEquals(0.0, d.decoderNll(417, certain), 0.0, "a certain and right decoder costs nothing");
    }
}
