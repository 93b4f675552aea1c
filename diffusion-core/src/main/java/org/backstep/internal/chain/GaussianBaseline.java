package org.backstep.internal.chain;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.backstep.option.Baseline;
import org.backstep.posterior.GaussianDiffusion;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The closed-form part of the estimator ({@link Baseline}): the exact reverse model of the
 * continuous columns of Gaussian data N(m, S) in model space, to which the network adds its
 * correction. With S = U diag(l) U^T (commons-math3's EigenDecomposition), at step t of the
 * training schedule:
 * <pre>
 *   epsilon-hat = U diag(sqrt(1 - abar_t) / (abar_t l_k + 1 - abar_t)) U^T (x_t - sqrt(abar_t) m) + network
 *   (the conditional mean E[eps | x_t] of jointly Gaussian eps and x_t; Ho et al. 2020, eq. 4)
 *
 *   Var(x_{t-1} | x_t) = U diag(c_tk) U^T,  c_tk = p_k beta_t / (alpha_t p_k + beta_t),
 *   p_k = abar_{t-1} l_k + 1 - abar_{t-1}   (x_{t-1} ~ N(., p), x_t = sqrt(alpha_t) x_{t-1} + sqrt(beta_t) e)
 *
 *   v = (log diag_j - log beta-tilde_t) / (log beta_t - log beta-tilde_t) + network,
 *   diag_j = sum_k U_jk^2 c_tk
 * </pre>
 * so that with a zero network the kernel variance exp(v log beta_t + (1 - v) log beta-tilde_t)
 * (Nichol &amp; Dhariwal 2021, eq. 15) is the diagonal of the exact reverse covariance: for S = I
 * the kernel is exact (v = 1, sigma_t^2 = beta_t); for a correlated S the kernels are the
 * best diagonal ones (the diagonal of a Gaussian's covariance minimizes the KL divergence from it
 * among diagonal Gaussians of the same mean; common practice, no source), and their gap to the
 * full reverse covariance shrinks with the step size (each kernel's covariance is beta_t I
 * + O(beta_t^2)). Immutable; per-step factors in double.
 */
public final class GaussianBaseline implements ClosedFormPart {

    /**
     * Eigenvalues of S are kept at or above this (model-space units, where each column has unit
     * variance over the table): a column that is a linear function of others would otherwise give a
     * reverse variance of zero at t = 1. Common practice, no source.
     */
    public static final double EIGENVALUE_FLOOR = 1e-6;

    private final Baseline kind;
    private final int dc;
    private final double[] mean;
    private final double[][] covariance;
    private final double shrinkage;
    private final double[][] basis;      // U, dc x dc, columns are eigenvectors
    private final boolean identity;      // S = I and m = 0: U = I, no rotation
    private final double[] sqrtAbar;     // [t]
    private final double[][] scale;      // [t][k]
    private final double[][] v;          // [t][j]

    private GaussianBaseline(Baseline kind, double[] mean, double[][] covariance, double shrinkage,
                             NoiseSchedule schedule) {
        this.kind = kind;
        this.dc = mean.length;
        this.mean = mean;
        this.covariance = covariance;
        this.shrinkage = shrinkage;
        this.identity = kind == Baseline.STANDARD_NORMAL;
        double[] l = new double[dc];
        basis = new double[dc][dc];
        if (identity) {
            for (int k = 0; k < dc; k++) {
                l[k] = 1.0;
                basis[k][k] = 1.0;
            }
        } else if (dc > 0) {
            EigenDecomposition e = new EigenDecomposition(new Array2DRowRealMatrix(covariance, true));
            for (int k = 0; k < dc; k++) {
                l[k] = Math.max(EIGENVALUE_FLOOR, e.getRealEigenvalue(k));
                double[] u = e.getEigenvector(k).toArray();
                for (int j = 0; j < dc; j++) {
                    basis[j][k] = u[j];
                }
            }
        }
        int steps = schedule.steps();
        GaussianDiffusion g = GaussianDiffusion.of(schedule);
        sqrtAbar = new double[steps + 1];
        scale = new double[steps + 1][dc];
        v = new double[steps + 1][dc];
        for (int t = 1; t <= steps; t++) {
            double abar = schedule.alphaBar(t);
            double oneMinus = schedule.oneMinusAlphaBar(t);
            double abarPrev = t == 1 ? 1.0 : schedule.alphaBar(t - 1);
            double oneMinusPrev = t == 1 ? 0.0 : schedule.oneMinusAlphaBar(t - 1);
            double beta = schedule.beta(t);
            double alpha = schedule.alpha(t);
            sqrtAbar[t] = Math.sqrt(abar);
            double[] c = new double[dc];
            for (int k = 0; k < dc; k++) {
                scale[t][k] = Math.sqrt(oneMinus) / (abar * l[k] + oneMinus);
                double p = abarPrev * l[k] + oneMinusPrev;
                c[k] = p * beta / (alpha * p + beta);
            }
            double logBeta = Math.log(beta);
            double logTilde = g.posteriorLogVarianceClipped(t);
            double span = logBeta - logTilde;
            for (int j = 0; j < dc; j++) {
                double diag = 0.0;
                for (int k = 0; k < dc; k++) {
                    diag += basis[j][k] * basis[j][k] * c[k];
                }
                v[t][j] = Math.abs(span) < 1e-12 ? 1.0 : (Math.log(diag) - logTilde) / span;
            }
        }
    }

    /**
     * The baseline of {@code kind} for these training rows, or null for {@link Baseline#NONE} or
     * when no continuous column is diffused.
     *
     * @param x0 n rows of d model-space cells, continuous first (not modified)
     * @param schedule the training schedule of the continuous columns
     */
    public static GaussianBaseline fit(Baseline kind, float[] x0, int n, int d, int dc, NoiseSchedule schedule) {
        Require.notNull("kind", kind);
        if (dc == 0) {
            return null;    // binary columns only: nothing to add, and the network is initialized as without a baseline
        }
        return switch (kind) {
            case NONE -> null;
            case STANDARD_NORMAL -> standardNormal(dc, schedule);
            case FITTED_GAUSSIAN -> fitted(x0, n, d, dc, schedule);
            case FITTED_MIXTURE -> throw new IllegalArgumentException("kind is FITTED_MIXTURE, not one Gaussian;"
                    + " fit it with ClosedFormPart.fit");
        };
    }

    /** The reverse model of N(0, I) data. */
    public static GaussianBaseline standardNormal(int dc, NoiseSchedule schedule) {
        double[][] identity = new double[dc][dc];
        for (int j = 0; j < dc; j++) {
            identity[j][j] = 1.0;
        }
        return new GaussianBaseline(Baseline.STANDARD_NORMAL, new double[dc], identity, 0.0, schedule);
    }

    /**
     * A baseline from stored parts (the model file).
     *
     * @param mean m, dc values (copied)
     * @param covariance S, dc x dc, symmetric (copied)
     * @param shrinkage the shrinkage intensity that made S, in [0, 1] (kept for the record)
     */
    public static GaussianBaseline of(Baseline kind, double[] mean, double[][] covariance, double shrinkage,
                                      NoiseSchedule schedule) {
        Require.notNull("kind", kind);
        Require.notNull("mean", mean);
        Require.notNull("covariance", covariance);
        if (kind == Baseline.NONE) {
            throw new IllegalArgumentException("kind is NONE; a model without a baseline has no baseline parts");
        }
        int dc = mean.length;
        if (covariance.length != dc) {
            throw new IllegalArgumentException("covariance has " + covariance.length + " rows; expected " + dc);
        }
        double[][] s = new double[dc][];
        for (int i = 0; i < dc; i++) {
            if (covariance[i] == null || covariance[i].length != dc) {
                throw new IllegalArgumentException("covariance row " + i + " has "
                        + (covariance[i] == null ? "no" : covariance[i].length) + " values; expected " + dc);
            }
            s[i] = covariance[i].clone();
            for (int j = 0; j < dc; j++) {
                if (!Double.isFinite(s[i][j])) {
                    throw new IllegalArgumentException("covariance[" + i + "][" + j + "] is " + s[i][j]);
                }
            }
            if (!Double.isFinite(mean[i])) {
                throw new IllegalArgumentException("mean[" + i + "] is " + mean[i]);
            }
        }
        for (int i = 0; i < dc; i++) {
            if (!(s[i][i] > 0)) {
                throw new IllegalArgumentException("covariance[" + i + "][" + i + "] is " + s[i][i] + "; expected a positive variance");
            }
            for (int j = 0; j < i; j++) {
                if (Math.abs(s[i][j] - s[j][i]) > 1e-9 * Math.sqrt(s[i][i] * s[j][j])) {
                    throw new IllegalArgumentException("covariance is not symmetric at [" + i + "][" + j + "]");
                }
            }
        }
        Require.inClosed("shrinkage", shrinkage, 0.0, 1.0);
        return new GaussianBaseline(kind, mean.clone(), s, shrinkage, schedule);
    }

    /**
     * Fits m (the mean) and S on the continuous cells of the training rows: the population
     * variances on the diagonal and the sample correlations shrunk toward zero,
     * S_ij = (1 - lambda) r_ij sqrt(S_ii S_jj), with Schaefer &amp; Strimmer's estimate of the
     * intensity, lambda = sum_{i != j} Var(r_ij) / sum_{i != j} r_ij^2 clipped to [0, 1], where
     * Var(r_ij) = n / (n - 1)^3 sum_k (w_kij - mean_k w_kij)^2 and w_kij the products of the
     * standardized cells (Schaefer &amp; Strimmer 2005, "A Shrinkage Approach to Large-Scale Covariance
     * Matrix Estimation and Implications for Functional Genomics", Statistical Applications in
     * Genetics and Molecular Biology 4(1), article 32, section 2.3 and table 1, target D, the
     * "diagonal, unequal variance" target).
     */
    static GaussianBaseline fitted(float[] x0, int n, int d, int dc, NoiseSchedule schedule) {
        double[] m = new double[dc];
        double[] var = new double[dc];
        for (int r = 0; r < n; r++) {
            for (int j = 0; j < dc; j++) {
                m[j] += x0[r * d + j];
            }
        }
        for (int j = 0; j < dc; j++) {
            m[j] /= n;
        }
        for (int r = 0; r < n; r++) {
            for (int j = 0; j < dc; j++) {
                double e = x0[r * d + j] - m[j];
                var[j] += e * e;
            }
        }
        double[] sdUnbiased = new double[dc];
        for (int j = 0; j < dc; j++) {
            sdUnbiased[j] = n > 1 ? Math.sqrt(var[j] / (n - 1)) : 0.0;
            var[j] = Math.max(EIGENVALUE_FLOOR, var[j] / n);
        }
        double[][] r = new double[dc][dc];
        double num = 0.0;
        double den = 0.0;
        double[] y = new double[n * dc];
        for (int k = 0; k < n; k++) {
            for (int j = 0; j < dc; j++) {
                y[k * dc + j] = sdUnbiased[j] > 0 ? (x0[k * d + j] - m[j]) / sdUnbiased[j] : 0.0;
            }
        }
        for (int i = 0; i < dc; i++) {
            for (int j = 0; j < i; j++) {
                double wbar = 0.0;
                for (int k = 0; k < n; k++) {
                    wbar += y[k * dc + i] * y[k * dc + j];
                }
                wbar /= n;
                double ss = 0.0;
                for (int k = 0; k < n; k++) {
                    double w = y[k * dc + i] * y[k * dc + j] - wbar;
                    ss += w * w;
                }
                double rij = n > 1 ? n / (n - 1.0) * wbar : 0.0;
                r[i][j] = rij;
                r[j][i] = rij;
                num += n > 1 ? 2 * n / Math.pow(n - 1.0, 3) * ss : 0.0;
                den += 2 * rij * rij;
            }
        }
        double lambda = den > 0 ? Math.max(0.0, Math.min(1.0, num / den)) : 1.0;
        double[][] s = new double[dc][dc];
        for (int i = 0; i < dc; i++) {
            s[i][i] = var[i];
            for (int j = 0; j < i; j++) {
                double c = (1.0 - lambda) * r[i][j] * Math.sqrt(var[i] * var[j]);
                s[i][j] = c;
                s[j][i] = c;
            }
        }
        return new GaussianBaseline(Baseline.FITTED_GAUSSIAN, m, s, lambda, schedule);
    }

    /**
     * Adds the closed form to one row of the network's output, in place.
     *
     * @param xt the row x_t, its continuous cells from {@code xo} (not modified)
     * @param step the training-schedule step t of the row, 1..T
     * @param out the network's output row, from {@code oo}: epsilon-hat at [oo, oo + dc), v at
     *     [oo + dc, oo + 2 dc) when {@code learned} (modified)
     * @param scratch at least dc doubles, overwritten
     */
    @Override
    public void addToRowInPlace(float[] xt, int xo, int step, float[] out, int oo, boolean learned, double[] scratch) {
        double sa = sqrtAbar[step];
        double[] sc = scale[step];
        if (identity) {
            for (int j = 0; j < dc; j++) {
                out[oo + j] += (float) (sc[j] * xt[xo + j]);
            }
        } else {
            for (int k = 0; k < dc; k++) {
                double p = 0.0;
                for (int j = 0; j < dc; j++) {
                    p += basis[j][k] * (xt[xo + j] - sa * mean[j]);
                }
                scratch[k] = p * sc[k];
            }
            for (int j = 0; j < dc; j++) {
                double e = 0.0;
                double[] uj = basis[j];
                for (int k = 0; k < dc; k++) {
                    e += uj[k] * scratch[k];
                }
                out[oo + j] += (float) e;
            }
        }
        if (learned) {
            double[] vt = v[step];
            for (int j = 0; j < dc; j++) {
                out[oo + dc + j] += (float) vt[j];
            }
        }
    }

    /**
     * @param step the training-schedule step t
     * @return the gain A_t = U diag(sqrt(1 - abar_t) / (abar_t l_k + 1 - abar_t)) U^T of epsilon-hat =
     *     A_t (x_t - sqrt(abar_t) m), dc x dc, symmetric (a new array)
     */
    double[][] gain(int step) {
        double[][] a = new double[dc][dc];
        double[] sc = scale[step];
        for (int i = 0; i < dc; i++) {
            for (int j = 0; j <= i; j++) {
                double v = 0.0;
                for (int k = 0; k < dc; k++) {
                    v += basis[i][k] * sc[k] * basis[j][k];
                }
                a[i][j] = v;
                a[j][i] = v;
            }
        }
        return a;
    }

    /**
     * @param step the training-schedule step t, 1..T
     * @return tr(A_t) = sum_k sqrt(1 - abar_t) / (abar_t l_k + 1 - abar_t), the trace of the Jacobian
     *     d eps-hat / d x_t of the closed-form part (constant in x_t: the part is linear), which the
     *     flow likelihood's divergence adds to the network's own (Song et al. 2021, eq. 39)
     */
    public double trace(int step) {
        double t = 0.0;
        for (double s : scale[step]) {
            t += s;
        }
        return t;
    }

    /** Adds tr(A_t), the same for every row (the part is linear in x_t). */
    @Override
    public void addTracesInPlace(float[] x, int d, int rows, int step, double[] trace) {
        double linear = trace(step);
        for (int r = 0; r < rows; r++) {
            trace[r] += linear;
        }
    }

    /** @return this (one Gaussian) */
    @Override
    public GaussianBaseline linear() {
        return this;
    }

    /** @return dc */
    @Override
    public int scratchSize() {
        return dc;
    }

    /** @return the v of each column at training-schedule step t (a copy) */
    double[] v(int step) {
        return v[step].clone();
    }

    /** @return m (not a copy: callers in this package only read it) */
    double[] meanView() {
        return mean;
    }

    /** @return the kind of baseline */
    @Override
    public Baseline kind() {
        return kind;
    }

    /** @return m, a copy */
    public double[] mean() {
        return mean.clone();
    }

    /** @return S as fitted (before the eigenvalue floor), a copy */
    public double[][] covariance() {
        double[][] c = new double[dc][];
        for (int i = 0; i < dc; i++) {
            c[i] = covariance[i].clone();
        }
        return c;
    }

    /** @return lambda, the shrinkage intensity of the correlations (0 for STANDARD_NORMAL) */
    public double shrinkage() {
        return shrinkage;
    }

    /** @return Dc */
    @Override
    public int continuousColumns() {
        return dc;
    }
}
