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

    private static double[] column(double[][] rows, int c) {
        double[] v = new double[rows.length];
        for (int i = 0; i < rows.length; i++) {
            v[i] = rows[i][c];
        }
        return v;
    }
}
