package org.backstep.quality;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.inference.KolmogorovSmirnovTest;
import org.apache.commons.math3.util.MathArrays;
import org.junit.jupiter.api.Test;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

class EnergyTestTest {

    /** The statistic against a direct double sum: only rounding of float distances differs. */
    private static final double STATISTIC_TOLERANCE = 1e-5;

    private static double[][] normal(int n, int d, double shift, long seed) {
        NormalDistribution g = new NormalDistribution(new Well19937c(seed), 0, 1);
        double[][] x = new double[n][d];
        for (double[] r : x) {
            for (int j = 0; j < d; j++) {
                r[j] = g.sample() + shift;
            }
        }
        return x;
    }

    @Test
    void statisticMatchesTheDefinition() {
        double[][] a = normal(40, 3, 0, 1);
        double[][] b = normal(30, 3, 0.5, 2);
        // E = 2 mean|a-b| - mean|a-a'| - mean|b-b'| (Szekely & Rizzo 2004, eq. 2), distances by commons-math3
        double ab = 0;
        double aa = 0;
        double bb = 0;
        for (double[] x : a) {
            for (double[] y : b) {
                ab += MathArrays.distance(x, y);
            }
            for (double[] y : a) {
                aa += MathArrays.distance(x, y);
            }
        }
        for (double[] x : b) {
            for (double[] y : b) {
                bb += MathArrays.distance(x, y);
            }
        }
        double e = 2 * ab / (40 * 30) - aa / (40 * 40) - bb / (30 * 30);
        EnergyTest t = EnergyTest.run(a, b, 99, 3);
        assertEquals(e, t.energyDistance(), STATISTIC_TOLERANCE);
        assertEquals(40.0 * 30 / 70 * e, t.statistic(), STATISTIC_TOLERANCE * 20);
    }

    @Test
    void permutationTestSeparatesShiftFromNoShift() {
        // Same distribution: the p-value is uniform; seeded, it lands well above 1% (common practice, no source)
        EnergyTest same = EnergyTest.run(normal(200, 2, 0, 4), normal(200, 2, 0, 5), 199, 6);
        assertTrue(same.pValue() > 0.05, "p = " + same.pValue());
        // A shift of half a standard deviation in 2-D with 200 rows each is detected (Szekely & Rizzo 2004 show
        // the test's power against location shifts)
        EnergyTest shifted = EnergyTest.run(normal(200, 2, 0, 4), normal(200, 2, 0.5, 5), 199, 6);
        assertTrue(shifted.pValue() < 0.01, "p = " + shifted.pValue());
    }

    @Test
    void kolmogorovSmirnovPerColumnMatchesCommonsMath() {
        double[][] a = normal(100, 2, 0, 7);
        double[][] b = normal(80, 2, 0.3, 8);
        double[] ks = SampleQuality.kolmogorovSmirnov(a, b);
        KolmogorovSmirnovTest ref = new KolmogorovSmirnovTest();
        for (int c = 0; c < 2; c++) {
            double[] x = new double[100];
            double[] y = new double[80];
            for (int i = 0; i < 100; i++) {
                x[i] = a[i][c];
            }
            for (int i = 0; i < 80; i++) {
                y[i] = b[i][c];
            }
            assertEquals(ref.kolmogorovSmirnovStatistic(x, y), ks[c], 0.0); // commons-math3 is the reference
        }
    }

    @Test
    void nearestDistancesAreExact() {
        double[][] from = {{0, 0}, {3, 4}};
        double[][] to = {{1, 0}, {3, 5}, {10, 10}};
        double[] d = SampleQuality.nearestDistances(from, to);
        assertEquals(1.0, d[0], 0.0); // Euclidean distance, worked by hand
        assertEquals(1.0, d[1], 0.0);
    }

    @Test
    void badInputIsRefused() {
        double[][] ok = normal(5, 2, 0, 1);
        double[][] nan = normal(5, 2, 0, 1);
        nan[2][1] = Double.NaN;
        assertTrue(assertThrows(IllegalArgumentException.class, () -> EnergyTest.run(ok, nan, 9, 1)).getMessage()
                .contains("row 2, column 1 of b"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> EnergyTest.run(ok, normal(5, 3, 0, 1), 9, 1))
                .getMessage().contains("columns"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> EnergyTest.run(ok, ok, 0, 1)).getMessage()
                .contains("permutations"));
    }
}
