package org.backstep.table;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.MersenneTwister;
import org.junit.jupiter.api.Test;

import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/** The EM estimate of a normal's mean and covariance from rows with missing cells, and its whitening. */
class NormalWithGapsTest {

    /** EM against a closed form, and without gaps against the complete rows' estimate: rounding plus the stop rule. */
    private static final double CLOSED_FORM = 1e-8;
    /** Two estimates of the same data by different arithmetic (identities to rounding). */
    private static final double ROUNDING = 1e-12;

    private static double[][] draws(int n, double[] mu, double[][] sigma, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new MersenneTwister(seed), mu, sigma);
        double[][] rows = new double[n][];
        for (int r = 0; r < n; r++) {
            rows[r] = g.sample();
        }
        return rows;
    }

    /**
     * Bivariate normal with y2 missing on the last rows (a monotone pattern): the maximum-likelihood
     * estimates have a closed form (Anderson 1957, "Maximum likelihood estimates for a multivariate
     * normal distribution when some observations are missing", JASA 52:200-203; Little &amp; Rubin
     * 2002, "Statistical Analysis with Missing Data", 2nd ed., section 7.2.1): mu1, s11 from all n
     * rows; the regression of y2 on y1 (b = s12 / s11 over the r complete rows, residual variance
     * s22.1) from the complete rows; then mu2 = ybar2 + b (mu1 - ybar1), s12 = b s11,
     * s22 = s22.1 + b^2 s11. EM must converge to it.
     */
    @Test
    void monotoneBivariateMatchesTheFactoredLikelihood() {
        double[][] rows = draws(300, new double[] {0.5, -1.0}, new double[][] {{1.0, 0.7}, {0.7, 2.0}}, 5);
        int r = 180;
        for (int i = r; i < rows.length; i++) {
            rows[i][1] = Double.NaN;
        }
        int n = rows.length;
        double mu1 = 0.0;
        for (double[] row : rows) {
            mu1 += row[0];
        }
        mu1 /= n;
        double s11 = 0.0;
        for (double[] row : rows) {
            s11 += (row[0] - mu1) * (row[0] - mu1);
        }
        s11 /= n;
        double c1 = 0.0;
        double c2 = 0.0;
        for (int i = 0; i < r; i++) {
            c1 += rows[i][0];
            c2 += rows[i][1];
        }
        c1 /= r;
        c2 /= r;
        double a11 = 0.0;
        double a12 = 0.0;
        double a22 = 0.0;
        for (int i = 0; i < r; i++) {
            a11 += (rows[i][0] - c1) * (rows[i][0] - c1) / r;
            a12 += (rows[i][0] - c1) * (rows[i][1] - c2) / r;
            a22 += (rows[i][1] - c2) * (rows[i][1] - c2) / r;
        }
        double b = a12 / a11;
        double s221 = a22 - a12 * a12 / a11;
        NormalWithGaps em = NormalWithGaps.fit(rows);
        // Little & Rubin 2002, section 7.2.1 (factored likelihood of the monotone bivariate normal)
        assertEquals(mu1, em.mean[0], CLOSED_FORM);
        assertEquals(c2 + b * (mu1 - c1), em.mean[1], CLOSED_FORM);
        assertEquals(s11, em.covariance[0][0], CLOSED_FORM);
        assertEquals(b * s11, em.covariance[0][1], CLOSED_FORM);
        assertEquals(s221 + b * b * s11, em.covariance[1][1], CLOSED_FORM);
    }

    /** Without a missing cell: the complete rows' mean and population covariance, and fitShrunk's whitening. */
    @Test
    void withoutGapsItIsTheCompleteRowsEstimate() {
        double[][] rows = draws(200, new double[] {0, 1, 2}, new double[][] {{1, 0.5, 0.2}, {0.5, 1, 0.3},
                {0.2, 0.3, 1}}, 6);
        Whitening complete = Whitening.fitShrunk(rows);
        Whitening em = Whitening.fitShrunkWithGaps(rows);
        // common practice, no source: the same estimator by two arithmetic paths agrees to rounding
        assertEquals(complete.shrinkage(), em.shrinkage(), ROUNDING);
        assertEquals(complete.logDeterminant(), em.logDeterminant(), ROUNDING);
        for (int a = 0; a < 3; a++) {
            assertEquals(complete.mean()[a], em.mean()[a], ROUNDING);
            for (int b = 0; b < 3; b++) {
                assertEquals(complete.covariance()[a][b], em.covariance()[a][b], ROUNDING);
            }
        }
    }

    /**
     * Cells hidden completely at random (20% of the cells of 4,000 rows of a correlated 4-D normal):
     * the EM estimate stays near the estimate from every cell, nearer than the complete rows' own
     * estimate does, whose rows are fewer (41% of rows keep all four cells).
     */
    @Test
    void hiddenCellsAtRandomLeaveTheEstimateNearTheCompleteDataOne() {
        double[][] sigma = {{1, 0.8, 0.5, 0.2}, {0.8, 1, 0.6, 0.3}, {0.5, 0.6, 1, 0.4}, {0.2, 0.3, 0.4, 1}};
        double[][] full = draws(4000, new double[] {0, 0, 0, 0}, sigma, 7);
        double[][] hidden = new double[full.length][];
        SplittableRandom rng = new SplittableRandom(8);
        int completeCount = 0;
        for (int r = 0; r < full.length; r++) {
            hidden[r] = full[r].clone();
            boolean complete = true;
            for (int c = 0; c < 4; c++) {
                if (rng.nextDouble() < 0.2) {
                    hidden[r][c] = Double.NaN;
                    complete = false;
                }
            }
            if (complete) {
                completeCount++;
            }
        }
        double[][] completeRows = new double[completeCount][];
        for (int r = 0, k = 0; r < full.length; r++) {
            if (!Double.isNaN(hidden[r][0] + hidden[r][1] + hidden[r][2] + hidden[r][3])) {
                completeRows[k++] = hidden[r];
            }
        }
        NormalWithGaps all = NormalWithGaps.fit(full);
        NormalWithGaps em = NormalWithGaps.fit(hidden);
        NormalWithGaps cc = NormalWithGaps.fit(completeRows);
        double emError = 0.0;
        double ccError = 0.0;
        for (int a = 0; a < 4; a++) {
            emError += Math.abs(em.mean[a] - all.mean[a]);
            ccError += Math.abs(cc.mean[a] - all.mean[a]);
            for (int b = 0; b < 4; b++) {
                emError += Math.abs(em.covariance[a][b] - all.covariance[a][b]);
                ccError += Math.abs(cc.covariance[a][b] - all.covariance[a][b]);
                // common practice, no source: an entry's standard error is about sqrt(2/n) = 0.022 on all rows;
                // the cells lost add less than that
                assertEquals(all.covariance[a][b], em.covariance[a][b], 0.03, "covariance " + a + "," + b);
            }
            assertEquals(all.mean[a], em.mean[a], 0.03, "mean " + a);
        }
        // Little & Rubin 2002, section 3.2: complete-case analysis discards information EM keeps
        assertTrue(emError < ccError, "EM off by " + emError + " in sum, complete rows by " + ccError);
        assertTrue(em.iterations > 2 && em.iterations < NormalWithGaps.MAX_ITERATIONS, "iterations " + em.iterations);
    }

    /** Bad rows are refused by name; a row with every cell missing is allowed (it adds nothing). */
    @Test
    void badRowsAreRefusedByName() {
        double[][] infinite = {{1, 2}, {Double.POSITIVE_INFINITY, 1}, {0, 0}};
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> Whitening.fitShrunkWithGaps(infinite));
        assertTrue(e.getMessage().contains("rows[1][0]"), e.getMessage());
        double[][] noCell = {{1, Double.NaN}, {2, Double.NaN}, {0, Double.NaN}};
        e = assertThrows(IllegalArgumentException.class, () -> Whitening.fitShrunkWithGaps(noCell));
        assertTrue(e.getMessage().contains("column 1 has no observed cell"), e.getMessage());
        double[][] blank = {{1, 2}, {Double.NaN, Double.NaN}, {0, 1}, {3, 1}};
        assertTrue(Double.isFinite(Whitening.fitShrunkWithGaps(blank).logDeterminant()));
    }
}
