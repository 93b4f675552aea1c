package org.backstep.posterior;

import static org.backstep.posterior.Near.IDENTITY_REL;
import static org.backstep.posterior.Near.assertClose;
import static org.backstep.posterior.Near.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.apache.commons.math3.analysis.integration.SimpsonIntegrator;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/** The divergences and log densities against commons-math3 and direct summation. */
class DivergenceTest {

    /** KL from commons-math3 Simpson integration of p log(p/q) (asked for 1e-11 relative). */
    private static final double INTEGRATED_KL_REL = 1e-8;

    /** Below this size divergences are compared absolutely: their integrands or terms nearly cancel. */
    private static final double KL_SCALE = 1e-3;

    /** Gaussian pairs {mean1, logVar1, mean2, logVar2}. */
    private static final double[][] GAUSSIAN_PAIRS = {
        {0.0, 0.0, 0.0, 0.0},
        {1.0, Math.log(0.25), -0.5, Math.log(2.0)},
        {0.3, Math.log(1e-4), 0.2, Math.log(1e-4) + 1e-3},   // nearly equal variances
        {2.0, Math.log(9.0), 0.0, 0.0},
        {-1.0, 0.0, 3.0, Math.log(0.01)},                     // far apart: a large divergence
        {0.5, Math.log(3.0), 0.5 + 1e-6, Math.log(3.0)},      // tiny divergence
    };

    @Test
    void gaussianKlMatchesNumericalIntegration() {
        for (double[] g : GAUSSIAN_PAIRS) {
            NormalDistribution p = new NormalDistribution(null, g[0], Math.sqrt(Math.exp(g[1])));
            NormalDistribution q = new NormalDistribution(null, g[2], Math.sqrt(Math.exp(g[3])));
            double sd = p.getStandardDeviation();
            double lo = g[0] - 14 * sd;
            double hi = g[0] + 14 * sd;
            // KL(p || q) = integral of p(x) [log p(x) - log q(x)] dx, by commons-math3 Simpson's rule
            // absolute accuracy 1e-16: the tiny-divergence case is a difference of terms of size 1e-6
            SimpsonIntegrator simpson = new SimpsonIntegrator(1e-11, 1e-16, 8, 20);
            double kl = simpson.integrate(Integer.MAX_VALUE,
                    x -> p.density(x) * (p.logDensity(x) - q.logDensity(x)), lo, hi);
            assertClose(kl, Divergence.gaussianKl(g[0], g[1], g[2], g[3]), INTEGRATED_KL_REL, KL_SCALE * 1e-3,
                    "Gaussian KL for " + java.util.Arrays.toString(g));
        }
        assertEquals(0.0, Divergence.gaussianKl(0.7, -2.0, 0.7, -2.0), 0.0, "KL(p || p) = 0");
    }

    @Test
    void gaussianKlIsTheKnownClosedFormForAStandardNormalPrior() {
        // Kingma & Welling 2014, appendix B: KL(N(m, v) || N(0, 1)) = (v + m^2 - 1 - log v) / 2
        double m = 0.8;
        double v = 0.3;
        assertRelative((v + m * m - 1 - Math.log(v)) / 2, Divergence.gaussianKl(m, Math.log(v), 0, 0), IDENTITY_REL,
                "Kingma & Welling appendix B");
    }

    @Test
    void bernoulliKlMatchesDirectSummation() {
        double[] ps = {0.0, 0.01, 0.3, 0.5, 0.999, 1.0};
        double[] qs = {1e-9, 0.2, 0.5, 0.7, 1 - 1e-9};
        for (double p : ps) {
            for (double q : qs) {
                BinomialDistribution bp = new BinomialDistribution(null, 1, p);
                // the model's probability is first kept off 0 and 1 by the floor (Divergence's contract)
                BinomialDistribution bq = new BinomialDistribution(null, 1, Divergence.clampProbability(q));
                double kl = 0.0;
                for (int k = 0; k <= 1; k++) {
                    double pk = bp.probability(k);
                    if (pk > 0) {
                        kl += pk * Math.log(pk / bq.probability(k));   // sum_x P(x) log(P(x)/Q(x)), 0 log 0 = 0
                    }
                }
                assertClose(kl, Divergence.bernoulliKl(p, q), IDENTITY_REL, KL_SCALE,
                        "Bernoulli KL at p = " + p + ", q = " + q);
            }
        }
    }

    @Test
    void bernoulliKlClampsQAwayFromZeroAndOne() {
        double c = Divergence.PROBABILITY_FLOOR;
        // direct summation at the clamped q: KL(Bern(1) || Bern(c)) = log(1/c); common practice, no source
        assertRelative(-Math.log(c), Divergence.bernoulliKl(1.0, 0.0), IDENTITY_REL, "certain and wrong");
        double upper = 1.0 - c;                       // the clamp as double holds it: 1 - upper is not exactly c
        assertRelative(-Math.log(1.0 - upper), Divergence.bernoulliKl(0.0, 1.0), IDENTITY_REL, "certain and wrong, other side");
        assertTrue(Double.isFinite(Divergence.bernoulliKl(0.5, 0.0)));
        assertEquals(0.0, Divergence.bernoulliKl(1.0, 1.0), 2 * c, "certain and right costs about c");
        assertEquals(0.0, Divergence.bernoulliKl(0.0, 0.0), 2 * c);
        // near p = q the divergence is (p - q)^2 / (2 q (1 - q)) to leading order (Taylor expansion)
        double q = 0.3;
        double dp = 1e-7;
        assertRelative(dp * dp / (2 * q * (1 - q)), Divergence.bernoulliKl(q + dp, q), 1e-5, "second-order behaviour");
    }

    @Test
    void gaussianLogDensityMatchesCommonsMath() {
        double[][] cases = {{0.0, 0.0, 0.0}, {1.3, -0.4, Math.log(0.5)}, {-2.0, 1.0, Math.log(1e-3)}, {5.0, 0.0, 2.0}};
        for (double[] c : cases) {
            NormalDistribution n = new NormalDistribution(null, c[1], Math.sqrt(Math.exp(c[2])));
            // commons-math3 NormalDistribution.logDensity
            assertClose(n.logDensity(c[0]), Divergence.gaussianLogDensity(c[0], c[1], c[2]), IDENTITY_REL, 1.0,
                    "log density at " + java.util.Arrays.toString(c));
        }
    }

    // ------------------------------------------------------------------ rows == scalar

    private static double[][] gaussian(Random random, int rows, int cols, double scale, double shift) {
        double[][] v = new double[rows][cols];
        for (double[] row : v) {
            for (int c = 0; c < cols; c++) {
                row[c] = shift + scale * random.nextGaussian();
            }
        }
        return v;
    }

    // ------------------------------------------------------------------ refusals

    private static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment), () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

}
