package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.junit.jupiter.api.Test;

/** Whitening by the training covariance: z = S^(-1/2) (y - m), log |det W| = -(1/2) log det S. */
class WhiteningTest {

    /** Exact identities computed along two rounding paths (d = 4, entries of order 1 to 10). */
    private static final double IDENTITY_TOL = 1e-10;
    /** A finite-difference Jacobian of a linear map is exact up to rounding of y + d e_j, d = 1e-3. */
    private static final double DIFFERENCE_TOL = 1e-8;

    /** 200 correlated rows: y = A e + c with standard normal e, A lower triangular (a seeded draw). */
    private static double[][] correlatedRows() {
        double[][] a = {{2, 0, 0, 0}, {1.5, 0.5, 0, 0}, {-3, 1, 4, 0}, {0.2, -0.1, 0.3, 0.05}};
        double[] c = {10, -2, 0.5, 7};
        SplittableRandom rng = new SplittableRandom(42);
        double[][] rows = new double[200][4];
        for (double[] row : rows) {
            double[] e = {rng.nextGaussian(), rng.nextGaussian(), rng.nextGaussian(), rng.nextGaussian()};
            for (int i = 0; i < 4; i++) {
                double s = c[i];
                for (int j = 0; j < 4; j++) {
                    s += a[i][j] * e[j];
                }
                row[i] = s;
            }
        }
        return rows;
    }

    private static double logStandardNormal(double[] z) {
        double s = 0;
        for (double v : z) {
            s += -0.5 * v * v - 0.5 * Math.log(2 * Math.PI);
        }
        return s;
    }

    @Test
    void standardNormalInWhitenedSpaceIsTheFittedGaussian() {
        double[][] rows = correlatedRows();
        Whitening w = Whitening.fit(rows);
        // the maximum-likelihood Gaussian: the mean and the population covariance (commons-math3's
        // Covariance without bias correction divides by n)
        double[][] cov = new Covariance(rows, false).getCovarianceMatrix().getData();
        MultivariateNormalDistribution fitted = new MultivariateNormalDistribution(w.mean(), cov);
        SplittableRandom rng = new SplittableRandom(3);
        for (int i = 0; i < 50; i++) {
            double[] y = rows[rng.nextInt(rows.length)].clone();
            y[i % 4] += rng.nextGaussian() * 3; // off the training rows too
            // change of variables: log p_y(y) = log N(z; 0, I) + log |det W| (Dinh et al. 2017, section 3.1),
            // against commons-math3's multivariate normal density
            double expected = Math.log(fitted.density(y));
            assertEquals(expected, logStandardNormal(w.whiten(y)) + w.logDeterminant(),
                    IDENTITY_TOL * Math.max(1, Math.abs(expected)), "row " + i);
        }
    }

    @Test
    void whitenedTrainingRowsHaveZeroMeanAndIdentityCovariance() {
        double[][] rows = correlatedRows();
        Whitening w = Whitening.fit(rows);
        double[][] z = new double[rows.length][];
        for (int r = 0; r < rows.length; r++) {
            z[r] = w.whiten(rows[r]);
        }
        // the definition of whitening: E z = 0, E z z^T = I over the training rows
        for (int a = 0; a < 4; a++) {
            double mean = 0;
            for (double[] row : z) {
                mean += row[a] / rows.length;
            }
            assertEquals(0.0, mean, IDENTITY_TOL);
            for (int b = 0; b < 4; b++) {
                double s = 0;
                for (double[] row : z) {
                    s += row[a] * row[b] / rows.length;
                }
                assertEquals(a == b ? 1.0 : 0.0, s, IDENTITY_TOL, "covariance [" + a + "][" + b + "]");
            }
        }
        // W is symmetric (the ZCA form of Kessy et al. 2018)
        double[][] m = w.matrix();
        for (int a = 0; a < 4; a++) {
            for (int b = 0; b < 4; b++) {
                assertEquals(m[a][b], m[b][a], IDENTITY_TOL);
            }
        }
    }

    @Test
    void logDeterminantMatchesAFiniteDifferenceJacobian() {
        double[][] rows = correlatedRows();
        Whitening w = Whitening.fit(rows);
        double[] y = rows[17];
        double d = 1e-3;
        double[][] jac = new double[4][4];
        for (int j = 0; j < 4; j++) {
            double[] up = y.clone();
            double[] down = y.clone();
            up[j] += d;
            down[j] -= d;
            double[] zu = w.whiten(up);
            double[] zd = w.whiten(down);
            for (int i = 0; i < 4; i++) {
                jac[i][j] = (zu[i] - zd[i]) / (2 * d);
            }
        }
        // central differences (common practice, no source), determinant by commons-math3's LU
        double det = new LUDecomposition(new Array2DRowRealMatrix(jac)).getDeterminant();
        assertEquals(Math.log(Math.abs(det)), w.logDeterminant(), DIFFERENCE_TOL * Math.abs(w.logDeterminant()) + DIFFERENCE_TOL);
    }

    @Test
    void unwhitenUndoesWhiten() {
        double[][] rows = correlatedRows();
        Whitening w = Whitening.fit(rows);
        for (double[] y : rows) {
            double[] back = w.unwhiten(w.whiten(y));
            for (int c = 0; c < 4; c++) {
                // common practice, no source: W^-1 W = I
                assertEquals(y[c], back[c], IDENTITY_TOL * Math.max(1, Math.abs(y[c])));
            }
        }
    }

    @Test
    void badInputsAreRefused() {
        double[][] rows = correlatedRows();
        double[][] singular = new double[rows.length][];
        for (int r = 0; r < rows.length; r++) {
            singular[r] = new double[] {rows[r][0], rows[r][1], rows[r][0] + 2 * rows[r][1]};
        }
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Whitening.fit(singular));
        assertTrue(e.getMessage().contains("singular"), e.getMessage());
        double[][] few = {{1, 2}, {3, 5}};
        assertThrows(IllegalArgumentException.class, () -> Whitening.fit(few));
        double[][] holed = correlatedRows();
        holed[5][2] = Double.NaN;
        e = assertThrows(IllegalArgumentException.class, () -> Whitening.fit(holed));
        assertTrue(e.getMessage().contains("rows[5][2]"), e.getMessage());
        Whitening w = Whitening.fit(rows);
        assertThrows(IllegalArgumentException.class, () -> w.whiten(new double[] {1, 2, Double.NaN, 4}));
        assertThrows(IllegalArgumentException.class, () -> w.whiten(new double[] {1, 2}));
        double[] mean = w.mean();
        mean[0] = 1e9;
        assertEquals(w.whiten(rows[0])[0], Whitening.fit(rows).whiten(rows[0])[0], 0.0);
    }
}
