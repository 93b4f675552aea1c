package org.backstep.internal.chain;

import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.ConcurrentHashMap;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.ArrayRealVector;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.DecompositionSolver;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.RealVector;
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
 * Sigma_oo is factorized once per pattern of observed cells (commons-math3 Cholesky).
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
    private final Map<String, DecompositionSolver> solvers = new ConcurrentHashMap<>();

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
        return java.util.Arrays.binarySearch(columns, j) >= 0;
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
        // buffers of the call: the right-hand side by count of observed cells (the solver needs its exact
        // length), the key of a pattern, and the previous row's pattern and solver (rows often share one)
        double[][] deltas = new double[p + 1][];
        char[] key = new char[p];
        int[] lastObs = new int[p];
        int lastNo = -1;
        DecompositionSolver last = null;
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
            double[] delta = deltas[no];
            if (delta == null) {
                delta = new double[no];
                deltas[no] = delta;
            }
            for (int i = 0; i < no; i++) {
                int a = obs[i];
                double old = sa * mean[a];
                double noise = 0.0;
                for (int b = 0; b < p; b++) {
                    old += wInv[a][b] * x[o + columns[b]];
                    if (s > 0) {
                        noise += wInv[a][b] * e[b];
                    }
                }
                double fresh = sa * known[o + columns[a]] + sn * noise;
                delta[i] = fresh - old;
            }
            if (no != lastNo || !java.util.Arrays.equals(obs, 0, no, lastObs, 0, no)) {
                java.util.Arrays.fill(key, '0');
                for (int i = 0; i < no; i++) {
                    key[obs[i]] = '1';
                }
                last = solver(new String(key), obs, no);
                System.arraycopy(obs, 0, lastObs, 0, no);
                lastNo = no;
            }
            RealVector c = last.solve(new ArrayRealVector(delta, false));
            for (int a = 0; a < p; a++) {
                double sum = x[o + columns[a]];
                for (int i = 0; i < no; i++) {
                    sum += wInv[a][obs[i]] * c.getEntry(i);
                }
                x[o + columns[a]] = (float) sum;
            }
        }
    }

    private DecompositionSolver solver(String key, int[] obs, int no) {
        DecompositionSolver found = solvers.get(key);
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
        DecompositionSolver made = new CholeskyDecomposition(m, 1e-12, 1e-300).getSolver();
        if (solvers.size() >= CACHE_PATTERNS) {
            solvers.clear();
        }
        solvers.put(key, made);
        return made;
    }
}
