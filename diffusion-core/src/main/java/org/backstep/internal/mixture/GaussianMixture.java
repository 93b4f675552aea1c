package org.backstep.internal.mixture;

import org.backstep.schedule.Require;

/**
 * A mixture of K Gaussians in d dimensions, p(x) = sum_k pi_k N(x; m_k, S_k), with its log-density
 * summed in log space: log p(x) = logsumexp_k (log pi_k - d/2 log(2 pi) - 1/2 log det S_k
 * - 1/2 (x - m_k)^T S_k^-1 (x - m_k)) (the log-sum-exp trick: the largest term factored out, so
 * that no exp underflows to a zero density). Each S_k is factorized once (Cholesky, S_k = L_k L_k^T).
 * Immutable: arrays are copied in and out.
 */
public final class GaussianMixture {

    private static final double LOG_TWO_PI = Math.log(2 * Math.PI);

    private final double[] weights;
    private final double[][] means;
    private final double[][][] covariances;
    private final double[] shrinkage;
    private final double[][][] cholesky;
    private final double[] logNormalizer;   // log pi_k - d/2 log 2 pi - 1/2 log det S_k

    private GaussianMixture(double[] weights, double[][] means, double[][][] covariances, double[] shrinkage) {
        this.weights = weights;
        this.means = means;
        this.covariances = covariances;
        this.shrinkage = shrinkage;
        int k = weights.length;
        int d = means[0].length;
        cholesky = new double[k][][];
        logNormalizer = new double[k];
        for (int c = 0; c < k; c++) {
            cholesky[c] = cholesky(covariances[c], "covariance of component " + c);
            double logDet = 0.0;
            for (int j = 0; j < d; j++) {
                logDet += 2 * Math.log(cholesky[c][j][j]);
            }
            logNormalizer[c] = Math.log(weights[c]) - 0.5 * d * LOG_TWO_PI - 0.5 * logDet;
        }
    }

    /**
     * @param weights pi_k, each positive, summing to 1 within 1e-9 (copied)
     * @param means m_k, K rows of d values (copied)
     * @param covariances S_k, K symmetric positive definite d x d matrices (copied)
     * @param shrinkage per component, the share of its covariance that came from the regularization
     *     (kept for the record), each in [0, 1] (copied)
     * @return the mixture
     * @throws IllegalArgumentException naming the part that is out of shape, not finite, not
     *     symmetric or not positive definite
     */
    public static GaussianMixture of(double[] weights, double[][] means, double[][][] covariances, double[] shrinkage) {
        Require.notNull("weights", weights);
        Require.notNull("means", means);
        Require.notNull("covariances", covariances);
        Require.notNull("shrinkage", shrinkage);
        int k = weights.length;
        if (k == 0) {
            throw new IllegalArgumentException("weights is empty; a mixture needs at least one component");
        }
        if (means.length != k || covariances.length != k || shrinkage.length != k) {
            throw new IllegalArgumentException("weights, means, covariances and shrinkage have " + k + ", " + means.length
                    + ", " + covariances.length + " and " + shrinkage.length + " components; expected the same count");
        }
        if (means[0] == null || means[0].length == 0) {
            throw new IllegalArgumentException("means[0] is empty; a component needs at least one dimension");
        }
        int d = means[0].length;
        double total = 0.0;
        double[] w = weights.clone();
        double[][] m = new double[k][];
        double[][][] s = new double[k][d][];
        for (int c = 0; c < k; c++) {
            if (!(w[c] > 0) || !Double.isFinite(w[c])) {
                throw new IllegalArgumentException("weights[" + c + "] is " + w[c] + "; expected a positive weight");
            }
            total += w[c];
            Require.inClosed("shrinkage[" + c + "]", shrinkage[c], 0.0, 1.0);
            if (means[c] == null || means[c].length != d) {
                throw new IllegalArgumentException("means[" + c + "] has " + (means[c] == null ? "no" : means[c].length)
                        + " values; expected " + d);
            }
            m[c] = means[c].clone();
            if (covariances[c] == null || covariances[c].length != d) {
                throw new IllegalArgumentException("covariances[" + c + "] has "
                        + (covariances[c] == null ? "no" : covariances[c].length) + " rows; expected " + d);
            }
            for (int i = 0; i < d; i++) {
                if (!Double.isFinite(m[c][i])) {
                    throw new IllegalArgumentException("means[" + c + "][" + i + "] is " + m[c][i]);
                }
                double[] row = covariances[c][i];
                if (row == null || row.length != d) {
                    throw new IllegalArgumentException("covariances[" + c + "] row " + i + " has "
                            + (row == null ? "no" : row.length) + " values; expected " + d);
                }
                s[c][i] = row.clone();
                for (int j = 0; j < d; j++) {
                    if (!Double.isFinite(row[j])) {
                        throw new IllegalArgumentException("covariances[" + c + "][" + i + "][" + j + "] is " + row[j]);
                    }
                }
            }
            for (int i = 0; i < d; i++) {
                for (int j = 0; j < i; j++) {
                    if (Math.abs(s[c][i][j] - s[c][j][i]) > 1e-9 * Math.sqrt(Math.abs(s[c][i][i] * s[c][j][j]))) {
                        throw new IllegalArgumentException("covariances[" + c + "] is not symmetric at [" + i + "][" + j + "]");
                    }
                }
            }
        }
        if (Math.abs(total - 1.0) > 1e-9) {
            throw new IllegalArgumentException("weights sum to " + total + "; expected 1");
        }
        return new GaussianMixture(w, m, s, shrinkage.clone());
    }

    /** The lower Cholesky factor of a symmetric positive definite matrix (Golub &amp; Van Loan 2013, algorithm 4.2.2). */
    static double[][] cholesky(double[][] a, String what) {
        int d = a.length;
        double[][] l = new double[d][d];
        for (int j = 0; j < d; j++) {
            double s = a[j][j];
            for (int k = 0; k < j; k++) {
                s -= l[j][k] * l[j][k];
            }
            if (!(s > 0)) {
                throw new IllegalArgumentException(what + " is not positive definite (pivot " + j + " is " + s + ")");
            }
            l[j][j] = Math.sqrt(s);
            for (int i = j + 1; i < d; i++) {
                double t = a[i][j];
                for (int k = 0; k < j; k++) {
                    t -= l[i][k] * l[j][k];
                }
                l[i][j] = t / l[j][j];
            }
        }
        return l;
    }

    /**
     * The log of each component's weighted density at x, log pi_k + log N(x; m_k, S_k).
     *
     * @param x d values (not modified)
     * @param into K values (modified)
     * @param scratch d values (overwritten)
     */
    void componentLogDensities(double[] x, double[] into, double[] scratch) {
        int d = scratch.length;
        for (int c = 0; c < weights.length; c++) {
            double[][] l = cholesky[c];
            double[] m = means[c];
            double quad = 0.0;
            for (int i = 0; i < d; i++) {
                double t = x[i] - m[i];
                double[] li = l[i];
                for (int k = 0; k < i; k++) {
                    t -= li[k] * scratch[k];
                }
                t /= li[i];
                scratch[i] = t;
                quad += t * t;
            }
            into[c] = logNormalizer[c] - 0.5 * quad;
        }
    }

    /**
     * @param x d values (not modified)
     * @return log p(x), summed over the components in log space
     */
    public double logDensity(double[] x) {
        Require.notNull("x", x);
        if (x.length != dimensions()) {
            throw new IllegalArgumentException("x has " + x.length + " values; the mixture has " + dimensions() + " dimensions");
        }
        double[] terms = new double[weights.length];
        componentLogDensities(x, terms, new double[x.length]);
        return logSumExp(terms);
    }

    /** @return log sum_k exp(a_k), the largest term factored out */
    static double logSumExp(double[] a) {
        double max = Double.NEGATIVE_INFINITY;
        for (double v : a) {
            max = Math.max(max, v);
        }
        if (max == Double.NEGATIVE_INFINITY) {
            return max;
        }
        double s = 0.0;
        for (double v : a) {
            s += Math.exp(v - max);
        }
        return max + Math.log(s);
    }

    /** @return K */
    public int components() {
        return weights.length;
    }

    /** @return d */
    public int dimensions() {
        return means[0].length;
    }

    /** @return pi_k, a copy */
    public double[] weights() {
        return weights.clone();
    }

    /** @return m_k, a copy */
    public double[] mean(int k) {
        return means[k].clone();
    }

    /** @return S_k, a copy */
    public double[][] covariance(int k) {
        double[][] c = new double[covariances[k].length][];
        for (int i = 0; i < c.length; i++) {
            c[i] = covariances[k][i].clone();
        }
        return c;
    }

    /** @return the shrinkage record of each component, a copy */
    public double[] shrinkage() {
        return shrinkage.clone();
    }

    /**
     * @return the free parameters of a K-component, d-dimensional mixture with full covariances,
     *     (K - 1) + K d + K d (d + 1) / 2, the count BIC charges
     */
    public static long parameters(int k, int d) {
        return (k - 1L) + (long) k * d + (long) k * d * (d + 1L) / 2;
    }
}
