package org.backstep.quality;

import org.apache.commons.math3.stat.inference.KolmogorovSmirnovTest;
import org.backstep.schedule.Require;

/**
 * Per-column and nearest-record statistics of synthetic rows against real ones.
 */
public final class SampleQuality {

    private SampleQuality() {
    }

    /**
     * The two-sample Kolmogorov-Smirnov statistic D = sup_x |F_a(x) - G_b(x)| of each column
     * (computed by commons-math3's {@link KolmogorovSmirnovTest}).
     *
     * @param a rows x columns, not modified
     * @param b rows x the same columns, not modified
     * @return D per column
     */
    public static double[] kolmogorovSmirnov(double[][] a, double[][] b) {
        Require.notNull("a", a);
        Require.notNull("b", b);
        Require.atLeast("rows of a", a.length, 1);
        Require.atLeast("rows of b", b.length, 1);
        int d = a[0].length;
        if (b[0].length != d) {
            throw new IllegalArgumentException("a has " + d + " columns and b has " + b[0].length + "; expected the same");
        }
        KolmogorovSmirnovTest ks = new KolmogorovSmirnovTest();
        double[] out = new double[d];
        for (int c = 0; c < d; c++) {
            out[c] = ks.kolmogorovSmirnovStatistic(column(a, c), column(b, c));
        }
        return out;
    }

    /**
     * For each row of {@code from}, the Euclidean distance to its closest row of {@code to}; for a
     * memorization check, compare these distances for synthetic rows with those for held-out rows
     * (both against the training rows): synthetic rows much closer than held-out ones suggest that
     * the model reproduces training rows.
     *
     * @param from rows to measure, not modified
     * @param to reference rows, not modified
     * @return the nearest distance of each row of {@code from}
     */
    public static double[] nearestDistances(double[][] from, double[][] to) {
        Require.notNull("from", from);
        Require.notNull("to", to);
        Require.atLeast("rows of to", to.length, 1);
        double[] out = new double[from.length];
        for (int i = 0; i < from.length; i++) {
            double best = Double.POSITIVE_INFINITY;
            for (double[] r : to) {
                double s = 0.0;
                for (int c = 0; c < r.length; c++) {
                    double diff = from[i][c] - r[c];
                    s += diff * diff;
                    if (s >= best) {
                        break;
                    }
                }
                best = Math.min(best, s);
            }
            out[i] = Math.sqrt(best);
        }
        return out;
    }

    /**
     * Per column, how far two samples' distributions lie apart, in [0, 1]: for each of the first
     * {@code numeric} columns the two-sample Kolmogorov-Smirnov statistic
     * ({@link #kolmogorovSmirnov}); for each later column, a categorical one whose cells are category
     * indices 0..K_j-1, the total variation distance between the category shares,
     * TV = 1/2 sum_k |p_k - q_k| = max over sets A of |P(A) - Q(A)| (Levin, Peres &amp; Wilmer 2009,
     * "Markov Chains and Mixing Times", proposition 4.2). The Kolmogorov-Smirnov statistic of a
     * category index would depend on the arbitrary order of the labels; the total variation
     * distance does not, and it is the supremum over all sets where Kolmogorov-Smirnov takes the
     * supremum over half-lines.
     *
     * @param a rows x columns, not modified
     * @param b rows x the same columns, not modified
     * @param numeric how many leading columns are numbers (continuous, integer or binary)
     * @param categories K of each of the remaining columns, in order
     * @return one distance per column
     * @throws IllegalArgumentException if the widths disagree or a cell is not a category index
     */
    public static double[] columnDistances(double[][] a, double[][] b, int numeric, int[] categories) {
        Require.notNull("a", a);
        Require.notNull("b", b);
        Require.notNull("categories", categories);
        Require.atLeast("rows of a", a.length, 1);
        Require.atLeast("rows of b", b.length, 1);
        Require.atLeast("numeric", numeric, 0);
        int d = numeric + categories.length;
        if (a[0].length != d || b[0].length != d) {
            throw new IllegalArgumentException("a has " + a[0].length + " columns and b " + b[0].length + "; expected "
                    + d + " (" + numeric + " numeric and " + categories.length + " categorical)");
        }
        double[] out = new double[d];
        if (numeric > 0) {
            KolmogorovSmirnovTest ks = new KolmogorovSmirnovTest();
            for (int c = 0; c < numeric; c++) {
                out[c] = ks.kolmogorovSmirnovStatistic(column(a, c), column(b, c));
            }
        }
        for (int j = 0; j < categories.length; j++) {
            int c = numeric + j;
            double[] p = shares(a, c, categories[j]);
            double[] q = shares(b, c, categories[j]);
            double tv = 0.0;
            for (int k = 0; k < p.length; k++) {
                tv += Math.abs(p[k] - q[k]);
            }
            out[c] = 0.5 * tv;
        }
        return out;
    }

    /**
     * The rows with each categorical column (the last {@code categories.length}, cells category
     * indices) replaced by K_j indicators, each scaled by 1/sqrt(2) so that two different categories
     * lie at distance 1 apart, as the two values of a binary column do; for distance-based
     * statistics (the energy test, nearest-row distances), which a category index would distort
     * (its labels' order is arbitrary).
     *
     * @param rows rows x (numeric + categories.length), not modified
     * @param numeric how many leading columns are numbers, copied as they are
     * @param categories K of each categorical column, in order
     * @return new rows x (numeric + sum K_j)
     * @throws IllegalArgumentException if a row's width disagrees or a cell is not a category index
     */
    public static double[][] oneHot(double[][] rows, int numeric, int[] categories) {
        Require.notNull("rows", rows);
        Require.notNull("categories", categories);
        Require.atLeast("numeric", numeric, 0);
        if (categories.length == 0) {
            return rows;
        }
        int width = numeric;
        for (int k : categories) {
            width += k;
        }
        double scale = Math.sqrt(0.5);
        double[][] out = new double[rows.length][width];
        for (int i = 0; i < rows.length; i++) {
            if (rows[i].length != numeric + categories.length) {
                throw new IllegalArgumentException("row " + i + " has " + rows[i].length + " columns; expected "
                        + (numeric + categories.length));
            }
            System.arraycopy(rows[i], 0, out[i], 0, numeric);
            int at = numeric;
            for (int j = 0; j < categories.length; j++) {
                out[i][at + index(rows[i][numeric + j], categories[j], i, numeric + j)] = scale;
                at += categories[j];
            }
        }
        return out;
    }

    private static double[] shares(double[][] rows, int c, int k) {
        double[] p = new double[k];
        for (int i = 0; i < rows.length; i++) {
            p[index(rows[i][c], k, i, c)] += 1.0 / rows.length;
        }
        return p;
    }

    private static int index(double cell, int k, int row, int column) {
        if (!(cell >= 0 && cell < k && cell == Math.rint(cell))) {
            throw new IllegalArgumentException("row " + row + ", column " + column + " is " + cell
                    + "; expected a category index from 0 to " + (k - 1));
        }
        return (int) cell;
    }

    private static double[] column(double[][] rows, int c) {
        double[] v = new double[rows.length];
        for (int i = 0; i < rows.length; i++) {
            v[i] = rows[i][c];
        }
        return v;
    }
}
