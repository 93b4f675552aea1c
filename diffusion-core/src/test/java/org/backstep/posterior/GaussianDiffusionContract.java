package org.backstep.posterior;

import static org.backstep.posterior.Near.IDENTITY_REL;
import static org.backstep.posterior.Near.assertClose;
import static org.backstep.posterior.Near.assertRelative;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import java.util.TreeSet;
import java.util.function.DoubleUnaryOperator;
import org.apache.commons.math3.analysis.integration.SimpsonIntegrator;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/**
 * The contract of {@link GaussianDiffusion} over any schedule: the posterior against Bayes' rule
 * integrated numerically, the marginal against the composed forward kernel, the batched forms
 * against the scalar ones in float64 and float32, and the refusals. Subclasses give the schedule.
 */
abstract class GaussianDiffusionContract {

    /**
     * Posterior mean and variance from commons-math3 Simpson integration of Bayes' rule: the
     * integrator is asked for {@link #INTEGRATOR_REL}, the moments then lose a few digits more.
     */
    static final double NUMERICAL_BAYES_REL = 1e-9;

    /** What the Simpson integrator is asked for; tighter would fight rounding in its sums. */
    private static final double INTEGRATOR_REL = 1e-11;

    /** Half-width of the integration window, in standard deviations of each factor (exp(-72) tails). */
    private static final double WINDOW_SDS = 12.0;

    /**
     * Simpson's rule starts from 2^8 intervals (0.1 sd apart at most) so that a coarse first
     * stage cannot agree with the next by luck on a peaked integrand.
     */
    private static final int MIN_STAGES = 8;

    private static final double[] X0S = {-1.5, 0.3, 2.0};

    /** Where x_t is put, in standard deviations of q(x_t | x_0) from its mean: plausible draws. */
    private static final double[] ZS = {-1.3, 0.4, 2.1};

    /** @return the diffusion under test */
    protected abstract GaussianDiffusion create();

    /** A spread of steps from 2 to T: 2, 3, T/2, T - 1, T. */
    private static int[] laterSteps(int steps) {
        TreeSet<Integer> set = new TreeSet<>();
        for (int t : new int[] {2, 3, steps / 2, steps - 1, steps}) {
            if (t >= 2 && t <= steps) {
                set.add(t);
            }
        }
        return set.stream().mapToInt(Integer::intValue).toArray();
    }

    private static double integrate(DoubleUnaryOperator f, double lo, double hi, double absoluteAccuracy) {
        SimpsonIntegrator simpson = new SimpsonIntegrator(INTEGRATOR_REL, absoluteAccuracy, MIN_STAGES, 20);
        return simpson.integrate(Integer.MAX_VALUE, f::applyAsDouble, lo, hi);
    }

    @Test
    void posteriorMatchesBayesRuleIntegratedNumerically() {
        GaussianDiffusion d = create();
        NoiseSchedule s = d.schedule();
        int checked = 0;
        for (int t : laterSteps(s.steps())) {
            double alpha = s.alpha(t);
            double beta = s.beta(t);
            NormalDistribution noise = new NormalDistribution(null, 0.0, Math.sqrt(beta));
            for (double x0 : X0S) {
                // prior factor q(x_{t-1} | x_0) = N(sqrt(abar_{t-1}) x_0, 1 - abar_{t-1}) (Ho et al. 2020, eq. 4)
                double priorMean = Math.sqrt(s.alphaBar(t - 1)) * x0;
                double priorSd = Math.sqrt(s.oneMinusAlphaBar(t - 1));
                NormalDistribution prior = new NormalDistribution(null, priorMean, priorSd);
                for (double z : ZS) {
                    double xt = Math.sqrt(s.alphaBar(t)) * x0 + z * Math.sqrt(s.oneMinusAlphaBar(t));
                    // likelihood factor q(x_t | x_{t-1}) = N(x_t; sqrt(alpha_t) x_{t-1}, beta_t) (Ho et al. 2020, eq. 2)
                    DoubleUnaryOperator joint = y -> noise.density(xt - Math.sqrt(alpha) * y) * prior.density(y);
                    double lo = priorMean - WINDOW_SDS * priorSd;
                    double hi = priorMean + WINDOW_SDS * priorSd;
                    if (alpha > 0.0) {
                        double likCentre = xt / Math.sqrt(alpha);
                        double likSd = Math.sqrt(beta / alpha);
                        lo = Math.max(lo, likCentre - WINDOW_SDS * likSd);
                        hi = Math.min(hi, likCentre + WINDOW_SDS * likSd);
                    }
                    assertTrue(lo < hi, "integration window is empty");
                    double centre = 0.5 * (lo + hi);
                    double z0 = integrate(joint, lo, hi, 1e-300);
                    double m1 = integrate(y -> (y - centre) * joint.applyAsDouble(y), lo, hi, INTEGRATOR_REL * z0 * (hi - lo));
                    double mean = centre + m1 / z0;
                    double variance = integrate(y -> (y - mean) * (y - mean) * joint.applyAsDouble(y), lo, hi, 1e-300) / z0;
                    String at = " at t = " + t + ", x0 = " + x0 + ", xt = " + xt;
                    // Ho et al. 2020, eq. 6-7 against Bayes' rule integrated by commons-math3
                    assertClose(mean, d.posteriorMean(t, x0, xt), NUMERICAL_BAYES_REL, Math.sqrt(variance),
                            "posterior mean" + at);
                    assertRelative(variance, d.posteriorVariance(t), NUMERICAL_BAYES_REL, "posterior variance" + at);
                    checked++;
                }
            }
        }
        assertEquals(laterSteps(s.steps()).length * X0S.length * ZS.length, checked);
    }

    @Test
    void theFirstStepsPosteriorIsThePointX0() {
        GaussianDiffusion d = create();
        // Ho et al. 2020, eq. 7 with abar_0 = 1: mu~_1 = x_0, beta~_1 = 0
        assertRelative(1.0, d.posteriorMeanCoefX0(1), IDENTITY_REL, "x0 weight at t = 1");
        assertEquals(0.0, d.posteriorMeanCoefXt(1), 0.0, "xt weight at t = 1");
        assertEquals(0.0, d.posteriorVariance(1), 0.0);
        assertRelative(0.7, d.posteriorMean(1, 0.7, -3.0), IDENTITY_REL, "mean at t = 1");
    }

    @Test
    void posteriorCoefficientsFollowEquationSeven() {
        GaussianDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int t = 1; t <= s.steps(); t++) {
            // Ho et al. 2020, eq. 7, products of the schedule's figures
            assertRelative(Math.sqrt(s.alphaBar(t - 1)) * s.beta(t) / s.oneMinusAlphaBar(t),
                    d.posteriorMeanCoefX0(t), IDENTITY_REL, "x0 weight at t = " + t);
            assertRelative(Math.sqrt(s.alpha(t)) * s.oneMinusAlphaBar(t - 1) / s.oneMinusAlphaBar(t),
                    d.posteriorMeanCoefXt(t), IDENTITY_REL, "xt weight at t = " + t);
            assertRelative(s.posteriorVariance(t), d.posteriorVariance(t), IDENTITY_REL, "beta-tilde at t = " + t);
        }
    }

    @Test
    void marginalIsTheForwardKernelComposed() {
        GaussianDiffusion d = create();
        NoiseSchedule s = d.schedule();
        assertEquals(1.3, d.marginalMean(0, 1.3), 0.0, "x_0 at t = 0");
        assertEquals(0.0, d.marginalVariance(0), 0.0);
        for (int t = 1; t <= s.steps(); t++) {
            // Ho et al. 2020: eq. 2's kernel N(sqrt(alpha_t) x_{t-1}, beta_t) applied to eq. 4 at t - 1 gives eq. 4 at t
            assertClose(Math.sqrt(s.alpha(t)) * d.marginalMean(t - 1, 1.3), d.marginalMean(t, 1.3), IDENTITY_REL,
                    1e-300, "marginal mean at t = " + t);
            assertRelative(s.alpha(t) * d.marginalVariance(t - 1) + s.beta(t), d.marginalVariance(t), IDENTITY_REL,
                    "marginal variance at t = " + t);
        }
    }

    @Test
    void x0FromEpsilonInvertsTheMarginal() {
        GaussianDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int t = 1; t <= s.steps(); t++) {
            if (s.alphaBar(t) == 0.0) {
                int step = t;
                IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                        () -> d.x0FromEpsilon(step, 0.1, 0.2));
                assertTrue(e.getMessage().contains("t is " + t) && e.getMessage().contains("alpha-bar is 0"),
                        e.getMessage());
                continue;
            }
            for (double x0 : X0S) {
                double eps = -0.8;
                double xt = d.marginalMean(t, x0) + Math.sqrt(d.marginalVariance(t)) * eps;
                // Ho et al. 2020, eq. 4 reparameterized (section 3.2) and solved for x_0; the floor is
                // the size of the terms that cancel
                assertClose(x0, d.x0FromEpsilon(t, xt, eps), IDENTITY_REL,
                        (Math.abs(xt) + Math.abs(eps)) / Math.sqrt(s.alphaBar(t)), "x0 at t = " + t);
            }
        }
    }

    @Test
    void clippedLogVarianceIsLogBetaTildeWithTheFirstStepBorrowed() {
        GaussianDiffusion d = create();
        NoiseSchedule s = d.schedule();
        for (int t = 2; t <= s.steps(); t++) {
            // log of Ho et al. 2020, eq. 7's beta-tilde
            assertClose(Math.log(s.posteriorVariance(t)), d.posteriorLogVarianceClipped(t), IDENTITY_REL, 1.0,
                    "log beta-tilde at t = " + t);
        }
        // common practice, no source: beta-tilde_1 = 0 borrows t = 2, or log beta_1 when T = 1
        double expected = s.steps() >= 2 ? d.posteriorLogVarianceClipped(2) : Math.log(s.beta(1));
        assertEquals(expected, d.posteriorLogVarianceClipped(1), 0.0);
        assertTrue(Double.isFinite(d.posteriorLogVarianceClipped(1)));
    }

    @Test
    void priorKlIsTheGaussianKlOfTheLastMarginal() {
        GaussianDiffusion d = create();
        int steps = d.schedule().steps();
        for (double x0 : X0S) {
            // Ho et al. 2020, eq. 5: L_T = KL(q(x_T | x_0) || N(0, I)), per dimension
            double expected = Divergence.gaussianKl(d.marginalMean(steps, x0), Math.log(d.marginalVariance(steps)), 0, 0);
            assertClose(expected, d.priorKl(x0), IDENTITY_REL, 1e-300, "prior KL at x0 = " + x0);
            assertTrue(d.priorKl(x0) >= 0.0);
        }
        if (d.schedule().alphaBar(steps) == 0.0) {
            assertEquals(0.0, d.priorKl(1.7), 0.0, "x_T is exactly N(0, 1) when alpha-bar_T = 0");
        }
    }

    // ------------------------------------------------------------------ batched == scalar

    /** Fixed pseudo-random data, rows x 3 (common practice, no source). */
    private static double[][] data(long seed, int rows, double scale) {
        Random random = new Random(seed);
        double[][] v = new double[rows][3];
        for (double[] row : v) {
            for (int c = 0; c < row.length; c++) {
                row[c] = scale * random.nextGaussian();
            }
        }
        return v;
    }

    /** One step per row covering 1..T (or 0..T), repeated. */
    private static int[] stepsPerRow(int rows, int from, int steps, boolean recoverableOnly, NoiseSchedule s) {
        int last = recoverableOnly && s.alphaBar(steps) == 0.0 ? steps - 1 : steps;
        int[] t = new int[rows];
        for (int i = 0; i < rows; i++) {
            t[i] = from + (int) ((long) i * (last - from) / Math.max(1, rows - 1));
        }
        return t;
    }

    // ------------------------------------------------------------------ refusals

    private static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment), () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

    @Test
    void stepsOutOfRangeAreRefused() {
        GaussianDiffusion d = create();
        int big = d.schedule().steps() + 1;
        for (int bad : new int[] {0, big}) {
            assertRefused(() -> d.posteriorMean(bad, 0.1, 0.2), "t is " + bad);
            assertRefused(() -> d.posteriorMeanCoefX0(bad), "t is " + bad);
            assertRefused(() -> d.posteriorMeanCoefXt(bad), "t is " + bad);
            assertRefused(() -> d.posteriorVariance(bad), "t is " + bad);
            assertRefused(() -> d.posteriorLogVarianceClipped(bad), "t is " + bad);
            assertRefused(() -> d.x0FromEpsilon(bad, 0.1, 0.2), "t is " + bad);
        }
        assertRefused(() -> d.marginalMean(-1, 0.1), "t is -1");
        assertRefused(() -> d.marginalVariance(big), "t is " + big);
        assertRefused(() -> d.posteriorMean(1, Double.NaN, 0.2), "x0 is NaN");
        assertRefused(() -> d.posteriorMean(1, 0.1, Double.POSITIVE_INFINITY), "xt is Infinity");
        assertRefused(() -> d.priorKl(Double.NaN), "x0 is NaN");
    }

}
