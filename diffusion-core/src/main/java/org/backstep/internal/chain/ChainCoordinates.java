package org.backstep.internal.chain;

import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.ConcurrentHashMap;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.schedule.Require;
import org.backstep.table.Whitening;

/**
 * The whitened coordinates of a chain ({@code org.backstep.option.Coordinates#WHITENED}): the
 * chain runs in z = W (y - m) over the whitened model columns (the real continuous ones), y the
 * standardized model-space cells, W = Sigma^(-1/2) ({@link Whitening}); other columns are as they
 * are. Immutable apart from a cache of factorizations; safe to share between threads.
 *
 * <p><b>Replacement of observed cells in z</b> ({@link #replaceKnown}). At step s the forward
 * process gives z_s = sqrt(abar_s) z_0 + sqrt(1 - abar_s) e, so x_s = sqrt(abar_s) m + W^-1 z_s
 * = sqrt(abar_s) y_0 + sqrt(1 - abar_s) W^-1 e: in y-coordinates the noise has covariance
 * (1 - abar_s) Sigma and, for data N(m, Sigma), x_s has covariance Sigma at every s. The observed
 * cells o of x_s are set to a fresh draw of q(x_s^o | y^o) = sqrt(abar_s) y^o + sqrt(1 - abar_s)
 * (W^-1 e)^o, and the missing cells u are moved by the Gaussian regression on the change,
 * x_s^u += Sigma_uo Sigma_oo^-1 (x_s^o,new - x_s^o,old): for jointly Gaussian x_s the residual
 * x_s^u - Sigma_uo Sigma_oo^-1 x_s^o is independent of x_s^o (Anderson 2003, "An Introduction to
 * Multivariate Statistical Analysis", theorem 2.5.1), so the move keeps the missing cells'
 * conditional law given the new observed ones. In z the whole move is
 * dz = W Sigma[:, o] Sigma_oo^-1 dx^o = W^-1[:, o] Sigma_oo^-1 dx^o (since W Sigma = W^-1).
 * Sigma_oo is factorized once per pattern of observed cells (commons-math3 Cholesky) and kept with
 * W^-1[:, o]; a row then costs p + 2 p |o| + |o|^2 multiply-adds and allocates nothing.
 */
final class ChainCoordinates {

    /** Patterns of observed cells whose factorization is kept; beyond it the cache starts afresh. */
    private static final int CACHE_PATTERNS = 4096;

    final Whitening whitening;
    /** The chain columns whitened, ascending, each below dc. */
    final int[] columns;
    private final int p;
    private final double[] mean;
    private final double[][] w;
    private final double[][] wInv;
    private final double[][] sigma;
    private final Map<String, Pattern> patterns = new ConcurrentHashMap<>();
    /** whitened[j]: chain column j is whitened (j up to the last whitened column). */
    private final boolean[] whitened;

    ChainCoordinates(Whitening whitening, int[] columns) {
        Require.notNull("whitening", whitening);
        Require.notNull("columns", columns);
        if (whitening.dimensions() != columns.length) {
            throw new IllegalArgumentException("the whitening has " + whitening.dimensions() + " columns; the chain whitens "
                    + columns.length);
        }
        this.whitening = whitening;
        this.columns = columns.clone();
        this.p = columns.length;
        this.mean = whitening.mean();
        this.w = whitening.matrix();
        this.wInv = whitening.inverseMatrix();
        this.sigma = whitening.covariance();
        int end = 0;
        for (int j : this.columns) {
            end = Math.max(end, j + 1);
        }
        this.whitened = new boolean[end];
        for (int j : this.columns) {
            whitened[j] = true;
        }
    }

    /** @return log |det W|, to add to a log density of z for the log density of y */
    double logDeterminant() {
        return whitening.logDeterminant();
    }

    /**
     * y to z in place, row by row.
     *
     * @param x rows x d, model-space rows; the whitened cells must not be NaN
     */
    void toChain(float[] x, int rows, int d) {
        double[] y = new double[p];
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int a = 0; a < p; a++) {
                y[a] = x[o + columns[a]] - mean[a];
            }
            for (int a = 0; a < p; a++) {
                double sum = 0.0;
                for (int b = 0; b < p; b++) {
                    sum += w[a][b] * y[b];
                }
                x[o + columns[a]] = (float) sum;
            }
        }
    }

    /** z to y in place, row by row: y = m + W^-1 z. */
    void fromChain(float[] x, int rows, int d) {
        double[] z = new double[p];
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int a = 0; a < p; a++) {
                z[a] = x[o + columns[a]];
            }
            for (int a = 0; a < p; a++) {
                double sum = mean[a];
                for (int b = 0; b < p; b++) {
                    sum += wInv[a][b] * z[b];
                }
                x[o + columns[a]] = (float) sum;
            }
        }
    }

    /** @return true if chain column j is whitened */
    boolean whitens(int j) {
        return j >= 0 && j < whitened.length && whitened[j];
    }

    /**
     * The regression-adjusted replacement of the observed whitened cells of every row at step s
     * (see the class comment); at s = 0 the observed cells become exactly y^o (to float rounding).
     *
     * @param chain the chain (its alpha-bar)
     * @param x rows x d chain rows at step s, modified in place
     * @param known rows x d standardized model-space rows, NaN where a cell is missing
     * @param s the step, 0..K
     * @param rng one generator per row (entries may repeat): p normal draws from row r's with an observed whitened cell when s &gt; 0
     */
    void replaceKnown(Chain chain, float[] x, float[] known, int rows, int s, SplittableRandom[] rng) {
        int d = chain.d;
        double sa = chain.sqrtAbar[s];
        double sn = chain.sqrtOneMinusAbar[s];
        int[] obs = new int[p];
        double[] e = new double[p];
        double[] z = new double[p];
        // buffers of the call: the right-hand side (solved in place), the key of a pattern, and the previous
        // row's pattern (rows often share one)
        double[] c = new double[p];
        char[] key = new char[p];
        Pattern last = null;
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int no = 0;
            for (int a = 0; a < p; a++) {
                if (!Float.isNaN(known[o + columns[a]])) {
                    obs[no++] = a;
                }
            }
            if (no == 0) {
                continue;
            }
            if (s > 0) {
                for (int a = 0; a < p; a++) {
                    e[a] = rng[r].nextGaussian();
                }
            }
            for (int b = 0; b < p; b++) {
                z[b] = x[o + columns[b]];
            }
            // y^o old and (W^-1 e)^o: four observed cells at a time, each sum over b in its own order
            // (independent sums interleaved, so the values are those of one sum at a time)
            int i = 0;
            for (; i + 3 < no; i += 4) {
                int a0 = obs[i];
                int a1 = obs[i + 1];
                int a2 = obs[i + 2];
                int a3 = obs[i + 3];
                double[] w0 = wInv[a0];
                double[] w1 = wInv[a1];
                double[] w2 = wInv[a2];
                double[] w3 = wInv[a3];
                double old0 = sa * mean[a0];
                double old1 = sa * mean[a1];
                double old2 = sa * mean[a2];
                double old3 = sa * mean[a3];
                double n0 = 0.0;
                double n1 = 0.0;
                double n2 = 0.0;
                double n3 = 0.0;
                if (s > 0) {
                    for (int b = 0; b < p; b++) {
                        double zb = z[b];
                        double eb = e[b];
                        old0 += w0[b] * zb;
                        old1 += w1[b] * zb;
                        old2 += w2[b] * zb;
                        old3 += w3[b] * zb;
                        n0 += w0[b] * eb;
                        n1 += w1[b] * eb;
                        n2 += w2[b] * eb;
                        n3 += w3[b] * eb;
                    }
                } else {
                    for (int b = 0; b < p; b++) {
                        double zb = z[b];
                        old0 += w0[b] * zb;
                        old1 += w1[b] * zb;
                        old2 += w2[b] * zb;
                        old3 += w3[b] * zb;
                    }
                }
                c[i] = (sa * known[o + columns[a0]] + sn * n0) - old0;
                c[i + 1] = (sa * known[o + columns[a1]] + sn * n1) - old1;
                c[i + 2] = (sa * known[o + columns[a2]] + sn * n2) - old2;
                c[i + 3] = (sa * known[o + columns[a3]] + sn * n3) - old3;
            }
            for (; i < no; i++) {
                int a = obs[i];
                double[] wa = wInv[a];
                double old = sa * mean[a];
                double noise = 0.0;
                for (int b = 0; b < p; b++) {
                    old += wa[b] * z[b];
                    if (s > 0) {
                        noise += wa[b] * e[b];
                    }
                }
                double fresh = sa * known[o + columns[a]] + sn * noise;
                c[i] = fresh - old;
            }
            if (last == null || no != last.obs.length || !java.util.Arrays.equals(obs, 0, no, last.obs, 0, no)) {
                java.util.Arrays.fill(key, '0');
                for (int k = 0; k < no; k++) {
                    key[obs[k]] = '1';
                }
                last = pattern(new String(key), obs, no);
            }
            last.solveInPlace(c);
            // z += W^-1[:, o] c, four cells at a time (each sum over i in its own order)
            double[][] g = last.wInvObserved;
            int a = 0;
            for (; a + 3 < p; a += 4) {
                double[] g0 = g[a];
                double[] g1 = g[a + 1];
                double[] g2 = g[a + 2];
                double[] g3 = g[a + 3];
                double sum0 = z[a];
                double sum1 = z[a + 1];
                double sum2 = z[a + 2];
                double sum3 = z[a + 3];
                for (int k = 0; k < no; k++) {
                    double ck = c[k];
                    sum0 += g0[k] * ck;
                    sum1 += g1[k] * ck;
                    sum2 += g2[k] * ck;
                    sum3 += g3[k] * ck;
                }
                x[o + columns[a]] = (float) sum0;
                x[o + columns[a + 1]] = (float) sum1;
                x[o + columns[a + 2]] = (float) sum2;
                x[o + columns[a + 3]] = (float) sum3;
            }
            for (; a < p; a++) {
                double[] ga = g[a];
                double sum = z[a];
                for (int k = 0; k < no; k++) {
                    sum += ga[k] * c[k];
                }
                x[o + columns[a]] = (float) sum;
            }
        }
    }

    private Pattern pattern(String key, int[] obs, int no) {
        Pattern found = patterns.get(key);
        if (found != null) {
            return found;
        }
        RealMatrix m = new Array2DRowRealMatrix(no, no);
        for (int i = 0; i < no; i++) {
            for (int k = 0; k < no; k++) {
                m.setEntry(i, k, sigma[obs[i]][obs[k]]);
            }
        }
        // Sigma is positive definite (Whitening refuses a singular one), so is every principal submatrix
        double[][] lt = new CholeskyDecomposition(m, 1e-12, 1e-300).getLT().getData();
        Pattern made = new Pattern(java.util.Arrays.copyOf(obs, no), lt, wInv);
        if (patterns.size() >= CACHE_PATTERNS) {
            patterns.clear();
        }
        patterns.put(key, made);
        return made;
    }

    /**
     * One pattern of observed cells: its indices, the Cholesky factor of Sigma_oo and the columns
     * W^-1[:, o]. {@link #solveInPlace} is the forward and back substitution of commons-math3's
     * {@code CholeskyDecomposition} solver (3.6.1) operation for operation, so the values are the
     * same to the bit; it only reads L^T by rows in both passes and allocates nothing.
     */
    static final class Pattern {
        final int[] obs;
        /** L^T: lt[j][i] = L[i][j], the rows read by the forward pass. */
        private final double[][] lt;
        /** L: l[j][i] = L^T[i][j] for i &lt; j, the rows read by the back pass. */
        private final double[][] l;
        /** p x no: W^-1[a][obs[i]]. */
        final double[][] wInvObserved;

        Pattern(int[] obs, double[][] lt, double[][] wInv) {
            int no = obs.length;
            this.obs = obs;
            this.lt = lt;
            this.l = new double[no][no];
            for (int j = 0; j < no; j++) {
                for (int i = 0; i < no; i++) {
                    l[j][i] = lt[i][j];
                }
            }
            this.wInvObserved = new double[wInv.length][no];
            for (int a = 0; a < wInv.length; a++) {
                for (int i = 0; i < no; i++) {
                    wInvObserved[a][i] = wInv[a][obs[i]];
                }
            }
        }

        /** Solves Sigma_oo c = b in place; b in the first obs.length entries of {@code v}. */
        void solveInPlace(double[] v) {
            int m = obs.length;
            // L y = b
            for (int j = 0; j < m; j++) {
                double[] ltJ = lt[j];
                v[j] /= ltJ[j];
                double vj = v[j];
                for (int i = j + 1; i < m; i++) {
                    v[i] -= vj * ltJ[i];
                }
            }
            // L^T c = y
            for (int j = m - 1; j >= 0; j--) {
                double[] lJ = l[j];
                v[j] /= lt[j][j];
                double vj = v[j];
                for (int i = 0; i < j; i++) {
                    v[i] -= vj * lJ[i];
                }
            }
        }
    }
}
