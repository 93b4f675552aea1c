package org.backstep.examples;

import org.apache.commons.math3.stat.descriptive.rank.Percentile;

import java.util.Arrays;

/** Small statistics and row selections the main job's steps share. */
final class Stats {

    private Stats() {
    }

    /** Held-out rows are ordered by container and time: take rows spread evenly over them, not the first ones. */
    static int[] spread(int n, int total) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = (int) ((long) i * total / n);
        }
        return r;
    }

    static double[][] subsample(double[][] rows, int max, long seed) {
        if (rows.length <= max) {
            return rows;
        }
        double[][] out = new double[max][];
        double step = rows.length / (double) max;
        for (int i = 0; i < max; i++) {
            out[i] = rows[(int) (i * step)];
        }
        return out;
    }

    static int[] concat(int[] a, int[] b) {
        int[] r = Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, r, a.length, b.length);
        return r;
    }

    static double mean(double[] v) {
        return Arrays.stream(v).average().orElse(Double.NaN);
    }

    static double sd(double[] v) {
        double m = mean(v);
        double s = 0;
        for (double x : v) {
            s += (x - m) * (x - m);
        }
        return Math.sqrt(s / Math.max(1, v.length - 1));
    }

    /** The empirical q-quantile, type 7 of Hyndman &amp; Fan 1996 (commons-math3's R_7), q in (0, 1]. */
    static double quantile(double[] v, double q) {
        return new Percentile().withEstimationType(Percentile.EstimationType.R_7).evaluate(v, 100.0 * q);
    }
}
