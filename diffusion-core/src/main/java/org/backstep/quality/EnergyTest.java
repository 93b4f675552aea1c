package org.backstep.quality;

import org.backstep.schedule.Require;

import java.util.SplittableRandom;

/**
 * The two-sample energy-distance test of Szekely &amp; Rizzo 2004 ("Testing for equal distributions
 * in high dimension", InterStat), with a permutation p-value.
 * <pre>
 *   E_{n,m} = 2/(nm) sum_i sum_j |x_i - y_j| - 1/n^2 sum_i sum_k |x_i - x_k| - 1/m^2 sum_j sum_l |y_j - y_l|
 *   T       = nm/(n+m) E_{n,m}
 *   p       = (1 + #{permutations with T* &gt;= T}) / (1 + R)
 * </pre>
 * with Euclidean distances. The pairwise distances are computed once; each permutation relabels.
 *
 * @param statistic T, the scaled energy statistic
 * @param energyDistance E_{n,m}, the energy distance itself
 * @param pValue the permutation p-value
 * @param permutations R
 */
public record EnergyTest(double statistic, double energyDistance, double pValue, int permutations) {

    /** Largest pooled sample accepted, so the distance matrix stays within memory. */
    public static final int MAX_POOLED_ROWS = 6000;

    /**
     * Runs the test.
     *
     * @param a the first sample, rows x columns, not modified
     * @param b the second sample, same columns, not modified
     * @param permutations R, at least 1
     * @param seed the seed of the permutations
     * @return the statistic and p-value
     * @throws IllegalArgumentException on empty or ragged samples, different column counts, or a
     *     pooled size past {@link #MAX_POOLED_ROWS}
     */
    public static EnergyTest run(double[][] a, double[][] b, int permutations, long seed) {
        Require.notNull("a", a);
        Require.notNull("b", b);
        Require.atLeast("rows of a", a.length, 2);
        Require.atLeast("rows of b", b.length, 2);
        Require.atLeast("permutations", permutations, 1);
        int n = a.length;
        int m = b.length;
        int total = n + m;
        if (total > MAX_POOLED_ROWS) {
            throw new IllegalArgumentException("a and b hold " + total + " rows together; expected at most "
                    + MAX_POOLED_ROWS + " (subsample them)");
        }
        int d = a[0].length;
        double[][] pooled = new double[total][];
        for (int i = 0; i < n; i++) {
            pooled[i] = checkRow("a", i, a[i], d);
        }
        for (int j = 0; j < m; j++) {
            pooled[n + j] = checkRow("b", j, b[j], d);
        }
        float[] dist = new float[total * total];
        for (int i = 0; i < total; i++) {
            for (int k = i + 1; k < total; k++) {
                double s = 0.0;
                for (int c = 0; c < d; c++) {
                    double diff = pooled[i][c] - pooled[k][c];
                    s += diff * diff;
                }
                float v = (float) Math.sqrt(s);
                dist[i * total + k] = v;
                dist[k * total + i] = v;
            }
        }
        boolean[] inA = new boolean[total];
        for (int i = 0; i < n; i++) {
            inA[i] = true;
        }
        double e = energy(dist, total, inA, n, m);
        double t = (double) n * m / total * e;
        SplittableRandom rng = new SplittableRandom(seed);
        int[] idx = new int[total];
        for (int i = 0; i < total; i++) {
            idx[i] = i;
        }
        int atLeast = 0;
        boolean[] perm = new boolean[total];
        for (int r = 0; r < permutations; r++) {
            for (int i = total - 1; i > 0; i--) {
                int j = rng.nextInt(i + 1);
                int tmp = idx[i];
                idx[i] = idx[j];
                idx[j] = tmp;
            }
            java.util.Arrays.fill(perm, false);
            for (int i = 0; i < n; i++) {
                perm[idx[i]] = true;
            }
            double tp = (double) n * m / total * energy(dist, total, perm, n, m);
            if (tp >= t) {
                atLeast++;
            }
        }
        return new EnergyTest(t, e, (1.0 + atLeast) / (1.0 + permutations), permutations);
    }

    private static double[] checkRow(String name, int i, double[] row, int d) {
        if (row == null || row.length != d) {
            throw new IllegalArgumentException("row " + i + " of " + name + " has " + (row == null ? 0 : row.length)
                    + " columns; expected " + d);
        }
        for (int c = 0; c < d; c++) {
            if (!Double.isFinite(row[c])) {
                throw new IllegalArgumentException("row " + i + ", column " + c + " of " + name + " is " + row[c]
                        + "; expected a finite number");
            }
        }
        return row;
    }

    private static double energy(float[] dist, int total, boolean[] inA, int n, int m) {
        double ab = 0.0;
        double aa = 0.0;
        double bb = 0.0;
        for (int i = 0; i < total; i++) {
            boolean ai = inA[i];
            int row = i * total;
            for (int k = i + 1; k < total; k++) {
                double v = dist[row + k];
                if (ai == inA[k]) {
                    if (ai) {
                        aa += v;
                    } else {
                        bb += v;
                    }
                } else {
                    ab += v;
                }
            }
        }
        return 2.0 * ab / ((double) n * m) - 2.0 * aa / ((double) n * n) - 2.0 * bb / ((double) m * m);
    }
}
