package org.backstep.table;

import java.util.Arrays;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.schedule.Require;

/**
 * Whitening by the training covariance, an exact linear change of variables of the continuous part
 * of a model-space row: z = W (y - m), with m the training rows' mean, S their population covariance
 * (1/n) sum_i (y_i - m)(y_i - m)^T, and W = S^(-1/2) = V diag(lambda)^(-1/2) V^T from the eigenvalues
 * lambda and eigenvectors V of S (commons-math3's EigenDecomposition). The training rows then have
 * mean 0 and identity covariance in z. Of the whitening matrices with W^T W = S^-1 this symmetric one
 * ("ZCA") keeps each z_j closest to its own y_j (Kessy, Lewis &amp; Strimmer 2018, "Optimal Whitening and
 * Decorrelation", The American Statistician 72:309-314, section 3).
 *
 * <p>Densities: log p_y(y) = log p_z(W (y - m)) + log |det W|, with
 * log |det W| = -(1/2) sum_j log lambda_j ({@link #logDeterminant()}), the same for every row
 * (Dinh, Sohl-Dickstein &amp; Bengio 2017, "Density estimation using Real NVP", section 3.1). So a
 * standard normal density in z is exactly the maximum-likelihood Gaussian N(m, S) of the training
 * rows in y: a model of z that adds nothing to N(0, I) reproduces the fitted Gaussian.
 *
 * <p>Whitening mixes columns: a row with a missing cell has no whitened value (a cell of z depends on
 * every cell of y). Immutable; arrays in and out are copies.
 */
public final class Whitening {

    /**
     * Eigenvalues below this times the largest make the covariance singular: a column that is (to
     * rounding) a linear function of the others has no density, and whitening it would divide by
     * rounding noise. Common practice, no source.
     */
    public static final double SINGULAR_RATIO = 1e-12;

    private final double[] mean;
    private final double[][] covariance;
    private final double[][] matrix;
    private final double[][] inverse;
    private final double logDeterminant;
    private final double shrinkage;

    private Whitening(double[] mean, double[][] covariance, double[][] matrix, double[][] inverse,
                      double logDeterminant, double shrinkage) {
        this.mean = mean;
        this.covariance = covariance;
        this.matrix = matrix;
        this.inverse = inverse;
        this.logDeterminant = logDeterminant;
        this.shrinkage = shrinkage;
    }

    /**
     * Fits m and W = S^(-1/2) on complete rows.
     *
     * @param rows n rows of d values each, n &gt; d, no NaN or infinite value (not modified)
     * @return the whitening
     * @throws IllegalArgumentException naming the row and column of a bad cell, a ragged row, too few
     *     rows, or a singular covariance (with its eigenvalues' ratio)
     */
    public static Whitening fit(double[][] rows) {
        Require.notNull("rows", rows);
        Require.atLeast("rows", rows.length, 1);
        int d = rows[0] == null ? 0 : rows[0].length;
        Require.atLeast("columns", d, 1);
        if (rows.length <= d) {
            throw new IllegalArgumentException("rows has " + rows.length + " rows of " + d
                    + " columns; expected more rows than columns for a nonsingular covariance");
        }
        double[][] ms = meanAndCovariance(rows, d);
        return of(ms[0], Arrays.copyOfRange(ms, 1, d + 1), 0.0);
    }

    /**
     * Checks the rows (ragged, non-finite cells) and returns the column means m (row 0) followed by
     * the d x d population covariance S = (1/n) sum_r (x_r - m)(x_r - m)^T (rows 1..d).
     */
    private static double[][] meanAndCovariance(double[][] rows, int d) {
        int n = rows.length;
        double[][] columns = new double[d][n];
        for (int r = 0; r < n; r++) {
            if (rows[r] == null || rows[r].length != d) {
                throw new IllegalArgumentException("rows[" + r + "] has " + (rows[r] == null ? "no array (null)"
                        : rows[r].length + " values") + "; expected " + d);
            }
            for (int c = 0; c < d; c++) {
                double v = rows[r][c];
                if (!Double.isFinite(v)) {
                    throw new IllegalArgumentException("rows[" + r + "][" + c + "] is " + v
                            + "; expected a finite value (whitening needs complete rows)");
                }
                columns[c][r] = v;
            }
        }
        double[][] out = new double[d + 1][];
        double[] m = new double[d];
        for (int c = 0; c < d; c++) {
            m[c] = TableTransform.mean(columns[c]);
        }
        out[0] = m;
        for (int a = 0; a < d; a++) {
            out[a + 1] = new double[d];
        }
        for (int a = 0; a < d; a++) {
            for (int b = 0; b <= a; b++) {
                double sum = 0.0;
                for (int r = 0; r < n; r++) {
                    sum += (columns[a][r] - m[a]) * (columns[b][r] - m[b]);
                }
                out[a + 1][b] = sum / n;
                out[b + 1][a] = out[a + 1][b];
            }
        }
        return out;
    }

    /**
     * Fits m and W = S*^(-1/2) on complete rows, with S* the covariance shrunk toward a multiple of
     * the identity by the estimate of Ledoit &amp; Wolf (2004, "A well-conditioned estimator for
     * large-dimensional covariance matrices", J. Multivariate Analysis 88:365-411, lemmas 3.2-3.4 and
     * section 3.3): with S the population covariance of n rows x_i - m in p columns, the norm
     * ||A||^2 = tr(A A^T) / p, mu = tr(S) / p, delta^2 = ||S - mu I||^2,
     * b^2 = min(delta^2, (1/n^2) sum_i ||(x_i - m)(x_i - m)^T - S||^2) and rho = b^2 / delta^2,
     * S* = rho mu I + (1 - rho) S. The intensity rho is estimated from the rows (no tuning); S* is
     * positive definite whenever rho &gt; 0, so near-collinear columns (rounding-level eigenvalues of
     * S) do not make W divide by noise. Where the estimate leaves S* singular (two rows: each centred
     * outer product equals S, so b^2 = 0), rho is 1 and S* = mu I, the estimator's own target.
     *
     * @param rows n &gt;= 2 rows of d values each, no NaN or infinite value (not modified)
     * @return the whitening of the shrunk covariance; {@link #shrinkage()} gives rho
     * @throws IllegalArgumentException naming the row and column of a bad cell, a ragged row, or a
     *     singular shrunk covariance (every column constant)
     */
    public static Whitening fitShrunk(double[][] rows) {
        Require.notNull("rows", rows);
        Require.atLeast("rows", rows.length, 2);
        int d = rows[0] == null ? 0 : rows[0].length;
        Require.atLeast("columns", d, 1);
        int n = rows.length;
        double[][] ms = meanAndCovariance(rows, d);
        double[] m = ms[0];
        double[][] s = Arrays.copyOfRange(ms, 1, d + 1);
        double[][] centred = new double[n][];
        for (int r = 0; r < n; r++) {
            centred[r] = new double[d];
            for (int c = 0; c < d; c++) {
                centred[r][c] = rows[r][c] - m[c];
            }
        }
        double bBar2 = 0.0;
        for (int r = 0; r < n; r++) {
            double sum = 0.0;
            for (int a = 0; a < d; a++) {
                for (int b = 0; b < d; b++) {
                    double e = centred[r][a] * centred[r][b] - s[a][b];
                    sum += e * e;
                }
            }
            bBar2 += sum / d;
        }
        bBar2 /= (double) n * n;
        return shrunk(m, s, bBar2);
    }

    /**
     * As {@link #fitShrunk}, on rows with missing cells (NaN): m and S are the maximum-likelihood
     * estimates of a multivariate normal by EM with the cells missing at random (Little &amp; Rubin
     * 2002, "Statistical Analysis with Missing Data", 2nd ed., section 11.2.1), and the spread term
     * b^2 of Ledoit &amp; Wolf takes each row's outer product (x_i - m)(x_i - m)^T as its conditional
     * expectation given the row's observed cells at that estimate, (x^_i - m)(x^_i - m)^T + C_i
     * (x^_i the conditional mean, C_i the conditional covariance of the missing cells): a plug-in,
     * which counts the spread of the missing cells' conditional draws as their expectation. Without a
     * missing cell it is {@link #fitShrunk} up to rounding.
     *
     * @param rows n &gt;= 2 rows of d values each, NaN where missing, no infinite value; every column
     *     with an observed cell (not modified)
     * @return the whitening of the shrunk covariance
     * @throws IllegalArgumentException naming a ragged row, an infinite cell, a column without an
     *     observed cell, or a singular shrunk covariance
     */
    public static Whitening fitShrunkWithGaps(double[][] rows) {
        Require.notNull("rows", rows);
        Require.atLeast("rows", rows.length, 2);
        int d = rows[0] == null ? 0 : rows[0].length;
        Require.atLeast("columns", d, 1);
        NormalWithGaps em = NormalWithGaps.fit(rows);
        double[][] s = em.covariance;
        return shrunk(em.mean, s, em.spread);
    }

    /** rho = min(delta^2, b^2) / delta^2 (1 when delta^2 = 0) and S* = rho mu I + (1 - rho) S (Ledoit &amp; Wolf 2004). */
    private static Whitening shrunk(double[] m, double[][] s, double bBar2) {
        int d = m.length;
        double mu = 0.0;
        for (int a = 0; a < d; a++) {
            mu += s[a][a];
        }
        mu /= d;
        double delta2 = 0.0;
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                double e = s[a][b] - (a == b ? mu : 0.0);
                delta2 += e * e;
            }
        }
        delta2 /= d;
        double rho = delta2 > 0.0 ? Math.min(delta2, bBar2) / delta2 : 1.0;
        double[][] shrunk = new double[d][d];
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                shrunk[a][b] = (1.0 - rho) * s[a][b] + (a == b ? rho * mu : 0.0);
            }
        }
        if (rho < 1.0 && mu > 0.0 && !nonsingular(shrunk)) {
            // the estimated intensity left S* singular: two rows (each centred outer product is S, so
            // b^2 = 0), or columns collinear on too few rows; take Ledoit and Wolf's target itself
            double[][] target = new double[d][d];
            for (int a = 0; a < d; a++) {
                target[a][a] = mu;
            }
            return of(m, target, 1.0);
        }
        return of(m, shrunk, rho);
    }

    /** @return whether the smallest eigenvalue of symmetric s exceeds {@link #SINGULAR_RATIO} times the largest */
    private static boolean nonsingular(double[][] s) {
        double[] lambda = new EigenDecomposition(new Array2DRowRealMatrix(s, true)).getRealEigenvalues();
        double largest = Arrays.stream(lambda).max().orElseThrow();
        double smallest = Arrays.stream(lambda).min().orElseThrow();
        return smallest > SINGULAR_RATIO * largest;
    }

    /**
     * The whitening of a given mean and covariance (a model file's, or a fit's), W = S^(-1/2) from
     * the eigenvalues and eigenvectors of S.
     *
     * @param mean m, d finite values (copied)
     * @param covariance S, d x d, symmetric positive definite (copied)
     * @param shrinkage the shrinkage intensity S was made with, in [0, 1] (kept for the record)
     * @return the whitening
     * @throws IllegalArgumentException naming a bad value, an asymmetric S, or a singular one
     */
    public static Whitening of(double[] mean, double[][] covariance, double shrinkage) {
        Require.notNull("mean", mean);
        Require.notNull("covariance", covariance);
        int d = mean.length;
        Require.atLeast("columns", d, 1);
        if (!(shrinkage >= 0.0 && shrinkage <= 1.0)) {
            throw new IllegalArgumentException("shrinkage is " + shrinkage + "; expected a number in [0, 1]");
        }
        if (covariance.length != d) {
            throw new IllegalArgumentException("covariance has " + covariance.length + " rows; expected " + d);
        }
        double[][] s = new double[d][];
        for (int a = 0; a < d; a++) {
            if (!Double.isFinite(mean[a])) {
                throw new IllegalArgumentException("mean[" + a + "] is " + mean[a] + "; expected a finite value");
            }
            if (covariance[a] == null || covariance[a].length != d) {
                throw new IllegalArgumentException("covariance[" + a + "] has " + (covariance[a] == null ? "no array"
                        : covariance[a].length + " values") + "; expected " + d);
            }
            s[a] = covariance[a].clone();
        }
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                if (!Double.isFinite(s[a][b]) || s[a][b] != s[b][a]) {
                    throw new IllegalArgumentException("covariance[" + a + "][" + b + "] is " + s[a][b]
                            + " and covariance[" + b + "][" + a + "] " + s[b][a] + "; expected a finite symmetric matrix");
                }
            }
        }
        double[] m = mean.clone();
        EigenDecomposition eigen = new EigenDecomposition(new Array2DRowRealMatrix(s, true));
        double[] lambda = eigen.getRealEigenvalues();
        double largest = Arrays.stream(lambda).max().orElseThrow();
        double smallest = Arrays.stream(lambda).min().orElseThrow();
        if (!(smallest > SINGULAR_RATIO * largest)) {
            throw new IllegalArgumentException("the training covariance is singular: smallest eigenvalue " + smallest
                    + ", largest " + largest + " (ratio below " + SINGULAR_RATIO
                    + "); leave out a column that is a linear function of the others");
        }
        RealMatrix v = eigen.getV();
        double[][] w = new double[d][d];
        double[][] wInv = new double[d][d];
        double logDet = 0.0;
        for (int k = 0; k < d; k++) {
            logDet -= 0.5 * Math.log(lambda[k]);
        }
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                double sw = 0.0;
                double si = 0.0;
                for (int k = 0; k < d; k++) {
                    double vv = v.getEntry(a, k) * v.getEntry(b, k);
                    sw += vv / Math.sqrt(lambda[k]);
                    si += vv * Math.sqrt(lambda[k]);
                }
                w[a][b] = sw;
                wInv[a][b] = si;
            }
        }
        return new Whitening(m, s, w, wInv, logDet, shrinkage);
    }

    /** @return S, the (shrunk) covariance W whitens, W^-2 (a copy) */
    public double[][] covariance() {
        return copy(covariance);
    }

    /** @return W^-1 = S^(1/2) (a copy) */
    public double[][] inverseMatrix() {
        return copy(inverse);
    }

    /** @return rho, the shrinkage intensity of the covariance toward mu I (0 for {@link #fit}) */
    public double shrinkage() {
        return shrinkage;
    }

    /** @return d, the number of columns whitened */
    public int dimensions() {
        return mean.length;
    }

    /** @return m, the training rows' mean (a copy) */
    public double[] mean() {
        return mean.clone();
    }

    /** @return W = S^(-1/2), symmetric (a copy) */
    public double[][] matrix() {
        return copy(matrix);
    }

    /**
     * log |det W| = -(1/2) log det S, in nats: add it to a log density of z to get the log density
     * of y.
     *
     * @return the log-determinant
     */
    public double logDeterminant() {
        return logDeterminant;
    }

    /**
     * z = W (y - m).
     *
     * @param y d values (not modified)
     * @return a new array of d values
     * @throws IllegalArgumentException if the length differs from d or a value is NaN (a missing cell)
     */
    public double[] whiten(double[] y) {
        checkRow("y", y);
        double[] z = new double[y.length];
        whitenChecked(y, z);
        return z;
    }

    /**
     * z = W (y - m) into a given array, the arithmetic of {@link #whiten(double[])} (same summation
     * order, same bits) without allocating.
     *
     * @param y d values (not modified)
     * @param into d values (overwritten with z); a different array from {@code y}
     * @return {@code into}
     * @throws IllegalArgumentException if a length differs from d, a value of y is NaN (a missing cell),
     *     or {@code into} is {@code y}
     */
    public double[] whiten(double[] y, double[] into) {
        checkRow("y", y);
        Require.notNull("into", into);
        if (into.length != mean.length) {
            throw new IllegalArgumentException("into has " + into.length + " values; expected " + mean.length);
        }
        if (into == y) {
            throw new IllegalArgumentException("into is y; every z value reads all of y, so they must differ");
        }
        whitenChecked(y, into);
        return into;
    }

    private void whitenChecked(double[] y, double[] z) {
        for (int a = 0; a < y.length; a++) {
            double sum = 0.0;
            for (int b = 0; b < y.length; b++) {
                sum += matrix[a][b] * (y[b] - mean[b]);
            }
            z[a] = sum;
        }
    }

    /**
     * z = W (y - m) for the selected columns of each row of a row-major float buffer, in place: for
     * row r, y[a] = rows[r * width + columns[a]], and z[a] (rounded to float) replaces it. The
     * arithmetic is that of {@link #whiten(double[])} (in double, same summation order); no array is
     * allocated per row.
     *
     * @param rows count x width values, row-major (modified in the selected columns of the first count rows)
     * @param count the number of rows, at least 0, with count * width &lt;= rows.length
     * @param width the values per row, at least 1
     * @param columns d distinct column indices in [0, width), the order of this whitening's columns (not modified)
     * @throws IllegalArgumentException naming the parameter out of range, or the row and column of a NaN cell
     */
    public void whitenInPlace(float[] rows, int count, int width, int[] columns) {
        Require.notNull("rows", rows);
        Require.notNull("columns", columns);
        Require.atLeast("count", count, 0);
        Require.atLeast("width", width, 1);
        int d = mean.length;
        if (columns.length != d) {
            throw new IllegalArgumentException("columns has " + columns.length + " indices; expected " + d);
        }
        for (int a = 0; a < d; a++) {
            Require.inRange("columns[" + a + "]", columns[a], 0, width - 1);
        }
        if ((long) count * width > rows.length) {
            throw new IllegalArgumentException("rows has " + rows.length + " values; expected at least count * width = "
                    + (long) count * width);
        }
        double[] y = new double[d];
        for (int r = 0; r < count; r++) {
            int base = r * width;
            for (int a = 0; a < d; a++) {
                y[a] = rows[base + columns[a]];
                if (Double.isNaN(y[a])) {
                    throw new IllegalArgumentException("rows[" + r + "][" + columns[a] + "] is NaN; whitening mixes "
                            + "columns, so a row with a missing cell has no whitened value");
                }
            }
            for (int a = 0; a < d; a++) {
                double sum = 0.0;
                for (int b = 0; b < d; b++) {
                    sum += matrix[a][b] * (y[b] - mean[b]);
                }
                rows[base + columns[a]] = (float) sum;
            }
        }
    }

    /**
     * y = W^-1 z + m, the inverse of {@link #whiten(double[])}, with W^-1 = V diag(lambda)^(1/2) V^T.
     *
     * @param z d values (not modified)
     * @return a new array of d values
     * @throws IllegalArgumentException if the length differs from d or a value is NaN
     */
    public double[] unwhiten(double[] z) {
        checkRow("z", z);
        double[] y = new double[z.length];
        for (int a = 0; a < z.length; a++) {
            double sum = mean[a];
            for (int b = 0; b < z.length; b++) {
                sum += inverse[a][b] * z[b];
            }
            y[a] = sum;
        }
        return y;
    }

    private void checkRow(String name, double[] row) {
        Require.notNull(name, row);
        if (row.length != mean.length) {
            throw new IllegalArgumentException(name + " has " + row.length + " values; expected " + mean.length);
        }
        for (int c = 0; c < row.length; c++) {
            if (Double.isNaN(row[c])) {
                throw new IllegalArgumentException(name + "[" + c + "] is NaN; whitening mixes columns, so a row "
                        + "with a missing cell has no whitened value");
            }
        }
    }

    private static double[][] copy(double[][] a) {
        double[][] out = new double[a.length][];
        for (int i = 0; i < a.length; i++) {
            out[i] = a[i].clone();
        }
        return out;
    }

    /** @return the dimension and log |det W| */
    @Override
    public String toString() {
        return "Whitening[d=" + mean.length + ", log|det W|=" + logDeterminant + "]";
    }
}
