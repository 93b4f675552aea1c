package org.backstep.table;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.DecompositionSolver;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.SingularValueDecomposition;

import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * The maximum-likelihood mean and covariance of a multivariate normal from rows with missing cells
 * (NaN), by the EM algorithm of Little &amp; Rubin (2002, "Statistical Analysis with Missing Data",
 * 2nd ed., section 11.2.1; Dempster, Laird &amp; Rubin 1977), the cells missing at random. With o
 * and u a row's observed and missing cells and (mu, Sigma) the current estimate, the E step takes
 * <pre>
 *   x^_u = mu_u + Sigma_uo Sigma_oo^-1 (x_o - mu_o),   C_uu = Sigma_uu - Sigma_uo Sigma_oo^-1 Sigma_ou
 * </pre>
 * (x^_o = x_o, C zero outside uu), and the M step mu = (1/n) sum_i x^_i,
 * Sigma = (1/n) sum_i (x^_i x^_i^T + C_i) - mu mu^T, until no entry of mu or Sigma moves by more
 * than {@link #TOLERANCE}. Sigma_oo is factorized once per pattern of observed cells and iteration
 * (commons-math3 Cholesky; a singular Sigma_oo, collinear observed columns, falls back to the
 * pseudo-inverse of a singular value decomposition). Start: each column's observed mean and
 * population variance, no correlation. Without a missing cell the first M step is the complete
 * rows' mean and population covariance, and the iteration stops at once.
 *
 * <p>Also kept, for Ledoit-Wolf shrinkage ({@link Whitening#fitShrunkWithGaps}), the spread of the
 * rows' outer products about Sigma, (1/n^2) sum_i ||E_i - Sigma||^2 with ||A||^2 = tr(A A^T) / p and
 * E_i = (x^_i - mu)(x^_i - mu)^T + C_i the conditional expectation of row i's outer product at the
 * estimate (the complete rows' formula when nothing is missing).
 */
final class NormalWithGaps {

    /** The largest move of an entry of mu or Sigma at which the iteration stops (standardized units). */
    static final double TOLERANCE = 1e-10;
    /** Iterations at most (the fraction of missing information slows EM; common practice, no source). */
    static final int MAX_ITERATIONS = 5_000;

    final double[] mean;
    final double[][] covariance;
    /** (1/n^2) sum_i ||E_i - Sigma||^2, ||A||^2 = tr(A A^T) / p. */
    final double spread;
    final int iterations;

    private NormalWithGaps(double[] mean, double[][] covariance, double spread, int iterations) {
        this.mean = mean;
        this.covariance = covariance;
        this.spread = spread;
        this.iterations = iterations;
    }

    /** The rows sharing one pattern of observed cells. */
    private static final class Pattern {
        final int[] observed;
        final int[] missing;
        final int[] rows;

        Pattern(int[] observed, int[] missing, int[] rows) {
            this.observed = observed;
            this.missing = missing;
            this.rows = rows;
        }
    }

    /**
     * @param rows n &gt;= 2 rows of p values, NaN where a cell is missing, no infinite value; every
     *     column with at least one observed cell (not modified)
     * @return the estimate
     * @throws IllegalArgumentException naming a ragged row, an infinite cell or a column without an
     *     observed cell
     */
    static NormalWithGaps fit(double[][] rows) {
        int n = rows.length;
        int p = rows[0] == null ? 0 : rows[0].length;
        Map<String, java.util.List<Integer>> byPattern = new LinkedHashMap<>();
        double[] sum = new double[p];
        int[] seen = new int[p];
        for (int r = 0; r < n; r++) {
            if (rows[r] == null || rows[r].length != p) {
                throw new IllegalArgumentException("rows[" + r + "] has " + (rows[r] == null ? "no array (null)"
                        : rows[r].length + " values") + "; expected " + p);
            }
            char[] key = new char[p];
            for (int c = 0; c < p; c++) {
                double v = rows[r][c];
                if (Double.isInfinite(v)) {
                    throw new IllegalArgumentException("rows[" + r + "][" + c + "] is " + v
                            + "; expected a finite value or NaN for a missing cell");
                }
                key[c] = Double.isNaN(v) ? 'u' : 'o';
                if (!Double.isNaN(v)) {
                    sum[c] += v;
                    seen[c]++;
                }
            }
            byPattern.computeIfAbsent(new String(key), k -> new java.util.ArrayList<>()).add(r);
        }
        double[] mu = new double[p];
        double[][] sigma = new double[p][p];
        for (int c = 0; c < p; c++) {
            if (seen[c] == 0) {
                throw new IllegalArgumentException("column " + c + " has no observed cell; its mean and variance"
                        + " cannot be estimated");
            }
            mu[c] = sum[c] / seen[c];
        }
        for (int r = 0; r < n; r++) {
            for (int c = 0; c < p; c++) {
                double v = rows[r][c];
                if (!Double.isNaN(v)) {
                    sigma[c][c] += (v - mu[c]) * (v - mu[c]) / seen[c];
                }
            }
        }
        Pattern[] patterns = new Pattern[byPattern.size()];
        int at = 0;
        for (Map.Entry<String, java.util.List<Integer>> e : byPattern.entrySet()) {
            String key = e.getKey();
            int[] o = new int[p];
            int[] u = new int[p];
            int no = 0;
            int nu = 0;
            for (int c = 0; c < p; c++) {
                if (key.charAt(c) == 'o') {
                    o[no++] = c;
                } else {
                    u[nu++] = c;
                }
            }
            patterns[at++] = new Pattern(Arrays.copyOf(o, no), Arrays.copyOf(u, nu),
                    e.getValue().stream().mapToInt(Integer::intValue).toArray());
        }
        int iteration = 0;
        boolean moved = true;
        while (moved && iteration < MAX_ITERATIONS) {
            double[][] next = step(rows, patterns, mu, sigma, null);
            double[] nextMu = next[p];
            moved = false;
            for (int a = 0; a < p && !moved; a++) {
                if (Math.abs(nextMu[a] - mu[a]) > TOLERANCE) {
                    moved = true;
                }
                for (int b = 0; b < p && !moved; b++) {
                    if (Math.abs(next[a][b] - sigma[a][b]) > TOLERANCE) {
                        moved = true;
                    }
                }
            }
            mu = nextMu;
            sigma = Arrays.copyOf(next, p);
            iteration++;
        }
        double[] spread = new double[1];
        step(rows, patterns, mu, sigma, spread);
        return new NormalWithGaps(mu, sigma, spread[0], iteration);
    }

    /**
     * One E and M step from (mu, sigma); when {@code spread} is not null, also its entry 0 gets
     * (1/n^2) sum_i ||E_i - sigma||^2 at (mu, sigma).
     *
     * @return p + 1 rows: the new Sigma (rows 0..p-1), the new mu (row p)
     */
    private static double[][] step(double[][] rows, Pattern[] patterns, double[] mu, double[][] sigma,
                                   double[] spread) {
        int n = rows.length;
        int p = mu.length;
        double[] t1 = new double[p];
        double[][] t2 = new double[p][p];
        double[] x = new double[p];
        double[][] cond = new double[p][p];
        double spreadSum = 0.0;
        for (Pattern pat : patterns) {
            int[] o = pat.observed;
            int[] u = pat.missing;
            double[][] regression = null;     // |u| x |o|: Sigma_uo Sigma_oo^-1
            for (double[] c : cond) {
                Arrays.fill(c, 0.0);
            }
            if (u.length > 0) {
                regression = new double[u.length][o.length];
                if (o.length > 0) {
                    double[][] soo = new double[o.length][o.length];
                    for (int a = 0; a < o.length; a++) {
                        for (int b = 0; b < o.length; b++) {
                            soo[a][b] = sigma[o[a]][o[b]];
                        }
                    }
                    DecompositionSolver solver = solver(new Array2DRowRealMatrix(soo, false));
                    double[][] suo = new double[o.length][u.length];   // Sigma_ou
                    for (int a = 0; a < o.length; a++) {
                        for (int b = 0; b < u.length; b++) {
                            suo[a][b] = sigma[o[a]][u[b]];
                        }
                    }
                    RealMatrix coef = solver.solve(new Array2DRowRealMatrix(suo, false));   // Sigma_oo^-1 Sigma_ou
                    for (int a = 0; a < u.length; a++) {
                        for (int b = 0; b < o.length; b++) {
                            regression[a][b] = coef.getEntry(b, a);
                        }
                    }
                }
                for (int a = 0; a < u.length; a++) {
                    for (int b = 0; b < u.length; b++) {
                        double s = sigma[u[a]][u[b]];
                        for (int k = 0; k < o.length; k++) {
                            s -= regression[a][k] * sigma[o[k]][u[b]];
                        }
                        cond[u[a]][u[b]] = s;
                    }
                }
                for (int a = 0; a < u.length; a++) {    // symmetric to rounding: average the two halves
                    for (int b = 0; b < a; b++) {
                        double s = 0.5 * (cond[u[a]][u[b]] + cond[u[b]][u[a]]);
                        cond[u[a]][u[b]] = s;
                        cond[u[b]][u[a]] = s;
                    }
                }
            }
            for (int r : pat.rows) {
                for (int c : o) {
                    x[c] = rows[r][c];
                }
                for (int a = 0; a < u.length; a++) {
                    double s = mu[u[a]];
                    for (int k = 0; k < o.length; k++) {
                        s += regression[a][k] * (rows[r][o[k]] - mu[o[k]]);
                    }
                    x[u[a]] = s;
                }
                for (int a = 0; a < p; a++) {
                    t1[a] += x[a];
                    for (int b = 0; b < p; b++) {
                        t2[a][b] += x[a] * x[b] + cond[a][b];
                    }
                }
                if (spread != null) {
                    double s = 0.0;
                    for (int a = 0; a < p; a++) {
                        for (int b = 0; b < p; b++) {
                            double e = (x[a] - mu[a]) * (x[b] - mu[b]) + cond[a][b] - sigma[a][b];
                            s += e * e;
                        }
                    }
                    spreadSum += s / p;
                }
            }
        }
        double[][] out = new double[p + 1][];
        double[] m = new double[p];
        for (int a = 0; a < p; a++) {
            m[a] = t1[a] / n;
        }
        for (int a = 0; a < p; a++) {
            out[a] = new double[p];
            for (int b = 0; b < p; b++) {
                out[a][b] = t2[a][b] / n - m[a] * m[b];
            }
        }
        for (int a = 0; a < p; a++) {
            for (int b = 0; b < a; b++) {
                double s = 0.5 * (out[a][b] + out[b][a]);
                out[a][b] = s;
                out[b][a] = s;
            }
        }
        out[p] = m;
        if (spread != null) {
            spread[0] = spreadSum / ((double) n * n);
        }
        return out;
    }

    /** Cholesky of a symmetric positive definite Sigma_oo, else the pseudo-inverse (collinear columns). */
    private static DecompositionSolver solver(RealMatrix soo) {
        try {
            return new CholeskyDecomposition(soo, 1e-12, 1e-300).getSolver();
        } catch (RuntimeException notPositiveDefinite) {
            return new SingularValueDecomposition(soo).getSolver();
        }
    }
}
