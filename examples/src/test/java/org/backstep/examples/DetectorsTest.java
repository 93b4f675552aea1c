package org.backstep.examples;

import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.inference.KolmogorovSmirnovTest;
import org.junit.jupiter.api.Test;

import java.util.Arrays;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The demo's classical detectors on small known cases: Mahalanobis distances of Gaussian rows
 * against the chi-squared distribution (commons-math3), the mixture's density against
 * commons-math3's own, the k-th nearest neighbour by hand, and the range check's blindness to a
 * relation between columns.
 */
class DetectorsTest {

    private static final double[] MU = {1.0, -2.0, 0.5};
    private static final double[][] SIGMA = {{2.0, 0.8, 0.3}, {0.8, 1.0, -0.4}, {0.3, -0.4, 1.5}};

    private static double[][] gaussian(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), MU, SIGMA);
        double[][] out = new double[n][];
        for (int i = 0; i < n; i++) {
            out[i] = g.sample();
        }
        return out;
    }

    /**
     * For x ~ N_p(mu, Sigma), (x - mu)' Sigma^-1 (x - mu) is chi-squared with p degrees of freedom
     * (Johnson &amp; Wichern, "Applied Multivariate Statistical Analysis", result 4.7; cited from
     * memory). With mu and Sigma estimated from 20,000 rows, the distances of 2,000 fresh rows pass
     * a Kolmogorov-Smirnov test against chi-squared(3) (commons-math3) at the 0.001 level, and
     * their mean is within 4 standard errors of p = 3 (the chi-squared variance is 2p).
     */
    @Test
    void mahalanobisDistancesOfGaussianRowsAreChiSquared() {
        double[][] train = gaussian(20_000, 11);
        double[][] fresh = gaussian(2_000, 12);
        Detectors.Scores s = Detectors.mahalanobis(train, fresh, fresh);
        double p = new KolmogorovSmirnovTest().kolmogorovSmirnovTest(new ChiSquaredDistribution(3), s.screened());
        assertTrue(p > 0.001, "KS p-value " + p);
        double mean = Arrays.stream(s.screened()).average().orElseThrow();
        assertEquals(3.0, mean, 4 * Math.sqrt(2 * 3.0 / fresh.length), "mean distance");
        // the exact parameters give the exact distance: one row by hand, (x - mu)' Sigma^-1 (x - mu)
        double[] x = {2.0, -1.0, 0.0};
        double d2 = new Detectors.Gaussian(MU, SIGMA).distance2(x);
        double[] e = {x[0] - MU[0], x[1] - MU[1], x[2] - MU[2]};
        double[][] inv = new org.apache.commons.math3.linear.LUDecomposition(
                new org.apache.commons.math3.linear.Array2DRowRealMatrix(SIGMA)).getSolver().getInverse().getData();
        double byHand = 0;
        for (int i = 0; i < 3; i++) {
            for (int j = 0; j < 3; j++) {
                byHand += e[i] * inv[i][j] * e[j];
            }
        }
        assertEquals(byHand, d2, 1e-5, "the ridge of 1e-6 moves the distance by about 1e-6 relative");
    }

    /** The Gaussian's log-density is commons-math3's MultivariateNormalDistribution.density, logged. */
    @Test
    void logDensityMatchesCommonsMath() {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(MU, SIGMA);
        Detectors.Gaussian ours = new Detectors.Gaussian(MU, SIGMA);
        for (double[] x : gaussian(20, 13)) {
            assertEquals(Math.log(g.density(x)), ours.logDensity(x), 1e-5);
        }
    }

    /** The 5th nearest training row by hand on a line of points, the row itself left out. */
    @Test
    void nearestIsTheFifthNeighbourWithoutTheRowItself() {
        double[][] train = new double[10][];
        int[] ids = new int[10];
        for (int i = 0; i < 10; i++) {
            train[i] = new double[] {i, 0.0};
            ids[i] = 100 + i;
        }
        double[][] query = {{0.0, 0.0}, {0.0, 0.0}};
        Detectors.Scores s = Detectors.nearest(train, ids, new double[][] {{0.0, 3.0}}, query, new int[] {100, -1});
        // from (0, 0) the others lie 1, 2, ..., 9 away: without itself the 5th is 5, with itself (0) it is 4
        assertEquals(5.0, s.screened()[0], 0.0);
        assertEquals(4.0, s.screened()[1], 0.0);
        // from (0, 3): the 5th nearest is (4, 0), at 5
        assertEquals(5.0, s.heldOut()[0], 1e-12);
    }

    /**
     * A relation between columns: y = x on the training rows. The row (1, -1) has each column
     * within the training range but breaks the relation; the range check scores it as an ordinary
     * row, Mahalanobis far above (common practice, no source: the purpose of a joint model).
     */
    @Test
    void theRangeCheckCannotSeeABrokenRelationAndMahalanobisCan() {
        Well19937c rng = new Well19937c(5);
        double[][] train = new double[2_000][];
        for (int i = 0; i < train.length; i++) {
            double x = rng.nextGaussian();
            train[i] = new double[] {x, x + 0.05 * rng.nextGaussian()};
        }
        double[][] held = Arrays.copyOfRange(train, 0, 500);
        double[][] rows = {{1.0, -1.0}, {1.0, 1.0}};
        Detectors.Scores range = Detectors.range(train, held, rows, 2);
        Detectors.Scores maha = Detectors.mahalanobis(train, held, rows);
        double rangeThreshold = Stats.quantile(range.heldOut(), 0.99);
        double mahaThreshold = Stats.quantile(maha.heldOut(), 0.99);
        assertTrue(range.screened()[0] < rangeThreshold, "range check flags the broken row: " + range.screened()[0]);
        assertTrue(maha.screened()[0] > 100 * mahaThreshold, "Mahalanobis " + maha.screened()[0] + " vs " + mahaThreshold);
        assertTrue(maha.screened()[1] < mahaThreshold);
    }

    /** Type 7 quantiles by hand (Hyndman &amp; Fan 1996, definition 7). */
    @Test
    void quantileInterpolatesBetweenOrderStatistics() {
        double[] v = {4, 1, 3, 2, 5};
        assertEquals(5.0, Stats.quantile(v, 1.0), 0.0);
        assertEquals(3.0, Stats.quantile(v, 0.5), 0.0);
        assertEquals(4.96, Stats.quantile(v, 0.99), 1e-12);   // h = 4 x 0.99 = 3.96: 4 + 0.96 (5 - 4)
    }
}
