package org.backstep.posterior;

import static org.backstep.posterior.Near.IDENTITY_REL;
import static org.backstep.posterior.Near.assertClose;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/**
 * The contract of {@link BinomialDiffusion} over a short schedule: marginal and posterior against
 * exhaustive enumeration of every path x_1..x_T of the chain in double arithmetic, the prior term
 * against direct summation, batched against scalar in float64 and float32, and the refusals.
 */
abstract class BinomialDiffusionContract {

    /** Enumeration sums at most 2^T products of T factors: a few roundings each. */
    static final double ENUMERATION_REL = 1e-12;

    /** Below this, probabilities are compared absolutely (sums of tiny path weights). */
    static final double ENUMERATION_FLOOR = 1e-15;

    /**
     * Divergences are compared relatively above this size and absolutely (tolerance times this)
     * below: their terms are of size up to log 2 and nearly cancel when q is near 1/2.
     */
    static final double KL_SCALE = 1e-3;

    /** @return the diffusion under test, over a schedule of at most 10 steps */
    protected abstract BinomialDiffusion create();

    /** Path sums of the chain started at x_0: marginal[t][b] and joint[t][a][b] = P(x_{t-1}=a, x_t=b). */
    private static final class Enumeration {
        final double[][] marginal;
        final double[][][] joint;

        Enumeration(NoiseSchedule s, int x0) {
            int steps = s.steps();
            marginal = new double[steps + 1][2];
            joint = new double[steps + 1][2][2];
            for (long path = 0; path < (1L << steps); path++) {
                double p = 1.0;
                int prev = x0;
                for (int t = 1; t <= steps; t++) {
                    int bit = (int) (path >> (t - 1)) & 1;
                    double beta = s.beta(t);
                    // Sohl-Dickstein et al. 2015, table App.1: q(x_t | x_{t-1}) = B(x_t; x_{t-1}(1 - beta_t) + beta_t/2),
                    // i.e. keep the bit with probability 1 - beta_t, else draw it fairly
                    p *= (bit == prev ? 1.0 - beta : 0.0) + 0.5 * beta;
                    prev = bit;
                }
                marginal[0][x0] += p;
                prev = x0;
                for (int t = 1; t <= steps; t++) {
                    int bit = (int) (path >> (t - 1)) & 1;
                    marginal[t][bit] += p;
                    joint[t][prev][bit] += p;
                    prev = bit;
                }
            }
        }

        /** P(x_{t-1} = 1 | x_t = b), Bayes' rule on the path sums. */
        double posterior(int t, int b) {
            return joint[t][1][b] / (joint[t][0][b] + joint[t][1][b]);
        }
    }

    @Test
    void marginalAndPosteriorMatchEveryPathOfTheChain() {
        BinomialDiffusion d = create();
        NoiseSchedule s = d.schedule();
        assertTrue(s.steps() <= 10, "enumeration needs a short chain");
        for (int x0 = 0; x0 <= 1; x0++) {
            Enumeration e = new Enumeration(s, x0);
            for (int t = 0; t <= s.steps(); t++) {
                assertClose(e.marginal[t][1], d.marginalOne(t, x0), ENUMERATION_REL, ENUMERATION_FLOOR,
                        "q(x_t = 1 | x_0 = " + x0 + ") at t = " + t);
            }
            for (int t = 1; t <= s.steps(); t++) {
                for (int b = 0; b <= 1; b++) {
                    // Bayes' rule over enumerated paths (Sohl-Dickstein et al. 2015, eq. 14 uses this posterior)
                    assertClose(e.posterior(t, b), d.posteriorOne(t, x0, b), ENUMERATION_REL, ENUMERATION_FLOOR,
                            "q(x_{t-1} = 1 | x_t = " + b + ", x_0 = " + x0 + ") at t = " + t);
                }
            }
        }
    }

    @Test
    void aProbabilisticX0AveragesThePosteriors() {
        BinomialDiffusion d = create();
        NoiseSchedule s = d.schedule();
        Enumeration one = new Enumeration(s, 1);
        Enumeration zero = new Enumeration(s, 0);
        for (double p : new double[] {0.0, 0.25, 0.7, 1.0}) {
            for (int t = 1; t <= s.steps(); t++) {
                assertClose(p * one.marginal[t][1] + (1 - p) * zero.marginal[t][1], d.marginalOne(t, p),
                        ENUMERATION_REL, ENUMERATION_FLOOR, "marginal at P = " + p + ", t = " + t);
                for (int b = 0; b <= 1; b++) {
                    // the documented average over x_0, from enumeration
                    double expected = p * one.posterior(t, b) + (1 - p) * zero.posterior(t, b);
                    double actual = d.posteriorOne(t, p, b);
                    assertClose(expected, actual, ENUMERATION_REL, ENUMERATION_FLOOR,
                            "posterior at P = " + p + ", x_t = " + b + ", t = " + t);
                    assertTrue(actual >= 0.0 && actual <= 1.0);
                }
            }
        }
    }

    @Test
    void transitionComposesIntoTheMarginal() {
        BinomialDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int t = 1; t <= s.steps(); t++) {
            double beta = s.beta(t);
            // Sohl-Dickstein et al. 2015, table App.1 (binomial kernel)
            assertClose(1.0 - beta / 2, d.transitionOne(t, 1.0), IDENTITY_REL, 1e-300, "keep a 1 at t = " + t);
            assertClose(beta / 2, d.transitionOne(t, 0.0), IDENTITY_REL, 1e-300, "flip a 0 at t = " + t);
            for (double x0 : new double[] {0.0, 0.3, 1.0}) {
                // Chapman-Kolmogorov: one more step of the kernel turns the marginal at t - 1 into the one at t
                assertClose(d.transitionOne(t, d.marginalOne(t - 1, x0)), d.marginalOne(t, x0), IDENTITY_REL,
                        ENUMERATION_FLOOR, "marginal at t = " + t + ", x0 = " + x0);
            }
        }
    }

    @Test
    void priorKlMatchesDirectSummation() {
        BinomialDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int x0 = 0; x0 <= 1; x0++) {
            double q = new Enumeration(s, x0).marginal[s.steps()][1];
            BinomialDistribution last = new BinomialDistribution(null, 1, q);
            double kl = 0.0;
            for (int k = 0; k <= 1; k++) {
                double p = last.probability(k);
                if (p > 0) {
                    kl += p * Math.log(p / 0.5);   // KL(q(x_T|x_0) || Bern(1/2)) summed over both outcomes
                }
            }
            // the reference adds two terms of size up to log 2 that nearly cancel when q is near 1/2,
            // so it is good to about 1e-16 absolute: compared relatively above KL_SCALE, absolutely below
            assertClose(kl, d.priorKl(x0), IDENTITY_REL, KL_SCALE, "prior KL at x0 = " + x0);
        }
        if (s.beta(s.steps()) == 1.0) {
            assertEquals(0.0, d.priorKl(1.0), 0.0, "beta_T = 1 leaves x_T exactly Bernoulli(1/2)");
        }
    }

    @Test
    void noNaNAnywhere() {
        BinomialDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int t = 1; t <= s.steps(); t++) {
            for (double x0 : new double[] {0.0, 0.5, 1.0}) {
                for (int b = 0; b <= 1; b++) {
                    double p = d.posteriorOne(t, x0, b);
                    assertTrue(p >= 0.0 && p <= 1.0, "posterior " + p + " at t = " + t);
                }
            }
        }
    }

    // ------------------------------------------------------------------ batched == scalar

    // ------------------------------------------------------------------ refusals

    private static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment), () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

}
