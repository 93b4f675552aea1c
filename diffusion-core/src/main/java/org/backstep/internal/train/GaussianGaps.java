package org.backstep.internal.train;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.table.Whitening;

import java.util.Arrays;
import java.util.HashMap;
import java.util.Map;
import java.util.SplittableRandom;

/**
 * The training rows of a whitened fit that miss a whitened cell, and draws of those cells from the
 * conditional distribution of the fitted Gaussian N(m, S) of the whitening ({@link Whitening#mean()},
 * the shrunk {@link Whitening#covariance()}, fitted by {@link Whitening#fitShrunkWithGaps}) given the
 * row's observed whitened cells (Anderson 2003, "An Introduction to Multivariate Statistical
 * Analysis", 3rd ed., theorem 2.5.1):
 * <pre>
 *   y_u | y_o ~ N(m_u + S_uo S_oo^-1 (y_o - m_o), S_uu - S_uo S_oo^-1 S_ou)
 * </pre>
 * drawn as m_u + A (y_o - m_o) + L xi, A = S_uo S_oo^-1, L L^T the Schur complement (Cholesky), xi
 * standard normal; A and L once per pattern of missing whitened cells. The trainer draws them afresh
 * at every use of such a row, then whitens the row ({@link #drawWhitenedInPlace}).
 */
final class GaussianGaps {

    private final Whitening whitening;
    private final int[] columns;
    private final int d;
    /** Index in the training rows of each row with a missing whitened cell, ascending. */
    private final int[] rows;
    /** Position in {@link #rows} of each training row, -1 for a row without a missing whitened cell. */
    private final int[] slot;
    /** rows.length x p: the observed whitened cells in y, NaN where missing. */
    private final double[] known;
    private final Draw[] draws;
    private final double[] mean;
    /**
     * Scratch for {@link #drawInPlace} and {@link #drawWhitenedInPlace}, p values each: one instance
     * per training run, whose batch loop is sequential, so not safe for concurrent calls.
     */
    private final double[] yScratch;
    private final double[] zScratch;
    private final double[] xiScratch;

    /** What one pattern of missing whitened cells needs: its cells, A and L. */
    private static final class Draw {
        final int[] observed;
        final int[] missing;
        final double[][] regression;   // |u| x |o|
        final double[][] factor;       // |u| x |u|, lower triangular

        Draw(int[] observed, int[] missing, double[][] regression, double[][] factor) {
            this.observed = observed;
            this.missing = missing;
            this.regression = regression;
            this.factor = factor;
        }
    }

    private GaussianGaps(Whitening whitening, int[] columns, int d, int[] rows, int[] slot, double[] known,
                         Draw[] draws) {
        this.whitening = whitening;
        this.columns = columns;
        this.d = d;
        this.rows = rows;
        this.slot = slot;
        this.known = known;
        this.draws = draws;
        this.mean = whitening.mean();
        this.yScratch = new double[columns.length];
        this.zScratch = new double[columns.length];
        this.xiScratch = new double[columns.length];
    }

    /**
     * @param whitening the fitted whitening (its mean and shrunk covariance are the Gaussian)
     * @param columns the whitened columns of a model-space row, in the whitening's order
     * @param y0 n x d model-space training rows in y, NaN where a cell is missing; not modified
     * @param n rows
     * @param d values per row
     * @return the rows that miss a whitened cell (none: {@link #rowCount()} 0)
     */
    static GaussianGaps of(Whitening whitening, int[] columns, float[] y0, int n, int d) {
        int p = columns.length;
        int[] idx = new int[n];
        int[] slot = new int[n];
        Arrays.fill(slot, -1);
        int count = 0;
        for (int r = 0; r < n; r++) {
            for (int c : columns) {
                if (Float.isNaN(y0[r * d + c])) {
                    slot[r] = count;
                    idx[count++] = r;
                    break;
                }
            }
        }
        int[] rows = Arrays.copyOf(idx, count);
        double[] known = new double[count * p];
        Draw[] draws = new Draw[count];
        double[][] s = whitening.covariance();
        Map<String, Draw> byPattern = new HashMap<>();
        for (int i = 0; i < count; i++) {
            char[] key = new char[p];
            for (int a = 0; a < p; a++) {
                float v = y0[rows[i] * d + columns[a]];
                known[i * p + a] = v;
                key[a] = Float.isNaN(v) ? 'u' : 'o';
            }
            draws[i] = byPattern.computeIfAbsent(new String(key), k -> draw(k, s));
        }
        return new GaussianGaps(whitening, columns.clone(), d, rows, slot, known, draws);
    }

    private static Draw draw(String key, double[][] s) {
        int p = key.length();
        int[] o = new int[p];
        int[] u = new int[p];
        int no = 0;
        int nu = 0;
        for (int a = 0; a < p; a++) {
            if (key.charAt(a) == 'o') {
                o[no++] = a;
            } else {
                u[nu++] = a;
            }
        }
        o = Arrays.copyOf(o, no);
        u = Arrays.copyOf(u, nu);
        double[][] regression = new double[nu][no];
        if (no > 0) {
            double[][] soo = new double[no][no];
            double[][] sou = new double[no][nu];
            for (int a = 0; a < no; a++) {
                for (int b = 0; b < no; b++) {
                    soo[a][b] = s[o[a]][o[b]];
                }
                for (int b = 0; b < nu; b++) {
                    sou[a][b] = s[o[a]][u[b]];
                }
            }
            // S is the shrunk covariance, positive definite (Whitening.of refuses a singular one)
            RealMatrix coef = new CholeskyDecomposition(new Array2DRowRealMatrix(soo, false), 1e-12, 1e-300)
                    .getSolver().solve(new Array2DRowRealMatrix(sou, false));
            for (int a = 0; a < nu; a++) {
                for (int b = 0; b < no; b++) {
                    regression[a][b] = coef.getEntry(b, a);
                }
            }
        }
        double[][] schur = new double[nu][nu];
        for (int a = 0; a < nu; a++) {
            for (int b = 0; b <= a; b++) {
                double v = s[u[a]][u[b]];
                for (int k = 0; k < no; k++) {
                    v -= regression[a][k] * s[o[k]][u[b]];
                }
                schur[a][b] = v;
                schur[b][a] = v;
            }
        }
        double[][] factor = new CholeskyDecomposition(new Array2DRowRealMatrix(schur, false), 1e-9, 1e-300)
                .getL().getData();
        return new Draw(o, u, regression, factor);
    }

    /** @return the training rows that miss a whitened cell */
    int rowCount() {
        return rows.length;
    }

    /** @return whether training row {@code r} misses a whitened cell */
    boolean has(int r) {
        return slot[r] >= 0;
    }

    /**
     * Draws the missing whitened cells of training row {@code r} (which {@link #has}) from the
     * Gaussian's conditional distribution given its observed whitened cells, in y.
     *
     * @param r the training row
     * @param y p values (modified: the observed whitened cells as given, the missing ones drawn)
     * @param rng the generator (advanced by one Gaussian per missing cell)
     */
    void drawInPlace(int r, double[] y, SplittableRandom rng) {
        int i = slot[r];
        int p = columns.length;
        Draw dr = draws[i];
        for (int a = 0; a < p; a++) {
            y[a] = known[i * p + a];
        }
        int nu = dr.missing.length;
        double[] xi = xiScratch; // nu <= p values used
        for (int a = 0; a < nu; a++) {
            xi[a] = rng.nextGaussian();
        }
        for (int a = 0; a < nu; a++) {
            double v = mean[dr.missing[a]];
            for (int k = 0; k < dr.observed.length; k++) {
                v += dr.regression[a][k] * (y[dr.observed[k]] - mean[dr.observed[k]]);
            }
            for (int b = 0; b <= a; b++) {
                v += dr.factor[a][b] * xi[b];
            }
            y[dr.missing[a]] = v;
        }
    }

    /**
     * For training row {@code r}: its whitened cells drawn as {@link #drawInPlace} does, whitened,
     * into {@code row}, the other cells untouched.
     *
     * @param r the training row (which {@link #has})
     * @param row d model-space values (modified in the whitened columns)
     * @param offset where the row starts in {@code row}
     * @param rng the generator
     */
    void drawWhitenedInPlace(int r, float[] row, int offset, SplittableRandom rng) {
        double[] y = yScratch;
        drawInPlace(r, y, rng);
        double[] z = whitening.whiten(y, zScratch);
        for (int a = 0; a < columns.length; a++) {
            row[offset + columns[a]] = (float) z[a];
        }
    }

    /**
     * The observed and a drawn whitened value of every row that misses one, in y, into rows of
     * {@code y0} (the start of a fit, before whitening).
     *
     * @param y0 n x d model-space rows; modified in the whitened columns of the rows that miss a cell
     * @param rng the generator
     */
    void fillInPlace(float[] y0, SplittableRandom rng) {
        double[] y = new double[columns.length];
        for (int r : rows) {
            drawInPlace(r, y, rng);
            for (int a = 0; a < columns.length; a++) {
                y0[r * d + columns[a]] = (float) y[a];
            }
        }
    }
}
