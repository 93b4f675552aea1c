package org.backstep.internal.chain;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.backstep.internal.mixture.GaussianMixture;
import org.backstep.internal.mixture.MixtureFit;
import org.backstep.option.Baseline;
import org.backstep.posterior.GaussianDiffusion;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The closed-form part of a Gaussian mixture ({@link Baseline#FITTED_MIXTURE}): the exact reverse
 * model of the continuous columns of data sum_k pi_k N(m_k, S_k) in model space, to which the
 * network adds its correction. With S_k = U_k diag(l_k) U_k^T (commons-math3's EigenDecomposition)
 * and x_t = sqrt(abar_t) x_0 + sqrt(1 - abar_t) eps (Ho et al. 2020, eq. 4), x_t given component k
 * is N(sqrt(abar_t) m_k, C_k), C_k = abar_t S_k + (1 - abar_t) I = U_k diag(abar_t l_k + 1 - abar_t) U_k^T,
 * and
 * <pre>
 *   e_k(x_t)     = sqrt(1 - abar_t) C_k^-1 (x_t - sqrt(abar_t) m_k)      (E[eps | x_t, k], Gaussian conditioning)
 *   log w_k(x_t) = log pi_k - 1/2 log det C_k - 1/2 (x_t - sqrt(abar_t) m_k)^T C_k^-1 (x_t - sqrt(abar_t) m_k) - log Z
 *   epsilon-hat  = sum_k w_k(x_t) e_k(x_t) + network                        (E[eps | x_t])
 * </pre>
 * the weights normalized in log space (the largest factored out). C_k^-1 and log det C_k come per
 * step from the eigenvalues, 1 / (abar_t l_ki + 1 - abar_t) and sum_i log(abar_t l_ki + 1 - abar_t),
 * precomputed in double for every step; the eigenvectors are shared by all steps, so the memory
 * does not grow with K x T x Dc^2 (two Dc x Dc products per component and row).
 *
 * <p>With learned variances, v = (log diag_j - log beta-tilde_t) / (log beta_t - log beta-tilde_t)
 * + network (Nichol &amp; Dhariwal 2021, eq. 15), diag_j the j-th diagonal entry of the mixture's
 * exact reverse covariance by the law of total variance:
 * <pre>
 *   diag_j = sum_k w_k c_kj + beta_t^2 / (alpha_t (1 - abar_t)) sum_k w_k (e_kj - eps_j)^2
 * </pre>
 * c_kj the diagonal of component k's reverse covariance ({@link GaussianBaseline}'s, U_k diag(c) U_k^T
 * with c_i = p_i beta_t / (alpha_t p_i + beta_t), p_i = abar_{t-1} l_ki + 1 - abar_{t-1}), and the second
 * sum the spread of the components' reverse means mu_k = (x_t - beta_t / sqrt(1 - abar_t) e_k) / sqrt(alpha_t)
 * (Ho et al. 2020, eq. 11). The kernel's mean is the exact reverse mean E[x_{t-1} | x_t], so this is
 * the best diagonal Gaussian kernel for that mean (matching the reverse distribution's second moments
 * minimizes the KL divergence from it among Gaussians; common practice, no source). The weighted
 * within-component diagonal alone was not taken: it leaves out the spread between components, which
 * dominates where x_t lies between them.
 *
 * <p>The trace of the part's Jacobian (the flow likelihood's divergence): with g_k = -C_k^-1 (x_t - sqrt(abar_t) m_k)
 * the components' scores, d w_k / d x_t = w_k (g_k - sum_j w_j g_j), so
 * <pre>
 *   tr(d eps-hat / d x_t) = sqrt(1 - abar_t) sum_k w_k tr(C_k^-1) - (1 / sqrt(1 - abar_t)) sum_k w_k |e_k - eps|^2
 * </pre>
 * A mixture of one component is {@link GaussianBaseline} itself (the same numbers, and the exact bound's
 * control variate, {@link #linear()}). Immutable; per-step factors in double.
 */
public final class MixtureBaseline implements ClosedFormPart {

    private final GaussianMixture mixture;
    private final double[] bic;
    private final GaussianBaseline single;   // K = 1: the part is this Gaussian
    private final int dc;
    private final int k;
    private final double[][] means;          // [k][j]
    private final double[][][] basis;        // [k][j][i]: U_k, columns are eigenvectors
    private final double[] sqrtAbar;         // [t]
    private final double[] sqrtOneMinus;     // [t]
    private final double[][][] inverse;      // [t][k][i]: 1 / (abar_t l_ki + 1 - abar_t)
    private final double[][] logNormalizer;  // [t][k]: log pi_k - 1/2 log det C_k
    private final double[][] traceInverse;   // [t][k]: tr(C_k^-1)
    private final double[][][] within;       // [t][k][j]: diagonal of component k's reverse covariance
    private final double[] between;          // [t]: beta_t^2 / (alpha_t (1 - abar_t))
    private final double[] logTilde;         // [t]
    private final double[] span;             // [t]: log beta_t - log beta-tilde_t

    private MixtureBaseline(GaussianMixture mixture, double[] bic, GaussianBaseline single, NoiseSchedule schedule) {
        this.mixture = mixture;
        this.bic = bic;
        this.single = single;
        this.dc = mixture.dimensions();
        this.k = mixture.components();
        int steps = schedule.steps();
        if (single != null) {
            means = null;
            basis = null;
            sqrtAbar = null;
            sqrtOneMinus = null;
            inverse = null;
            logNormalizer = null;
            traceInverse = null;
            within = null;
            between = null;
            logTilde = null;
            span = null;
            return;
        }
        double[] pi = mixture.weights();
        means = new double[k][];
        basis = new double[k][dc][dc];
        double[][] l = new double[k][dc];
        for (int c = 0; c < k; c++) {
            means[c] = mixture.mean(c);
            EigenDecomposition e = new EigenDecomposition(new Array2DRowRealMatrix(mixture.covariance(c), false));
            for (int i = 0; i < dc; i++) {
                l[c][i] = Math.max(GaussianBaseline.EIGENVALUE_FLOOR, e.getRealEigenvalue(i));
                double[] u = e.getEigenvector(i).toArray();
                for (int j = 0; j < dc; j++) {
                    basis[c][j][i] = u[j];
                }
            }
        }
        GaussianDiffusion g = GaussianDiffusion.of(schedule);
        sqrtAbar = new double[steps + 1];
        sqrtOneMinus = new double[steps + 1];
        inverse = new double[steps + 1][k][dc];
        logNormalizer = new double[steps + 1][k];
        traceInverse = new double[steps + 1][k];
        within = new double[steps + 1][k][dc];
        between = new double[steps + 1];
        logTilde = new double[steps + 1];
        span = new double[steps + 1];
        double[] cov = new double[dc];
        for (int t = 1; t <= steps; t++) {
            double abar = schedule.alphaBar(t);
            double oneMinus = schedule.oneMinusAlphaBar(t);
            double abarPrev = t == 1 ? 1.0 : schedule.alphaBar(t - 1);
            double oneMinusPrev = t == 1 ? 0.0 : schedule.oneMinusAlphaBar(t - 1);
            double beta = schedule.beta(t);
            double alpha = schedule.alpha(t);
            sqrtAbar[t] = Math.sqrt(abar);
            sqrtOneMinus[t] = Math.sqrt(oneMinus);
            between[t] = beta * beta / (alpha * oneMinus);
            logTilde[t] = g.posteriorLogVarianceClipped(t);
            span[t] = Math.log(beta) - logTilde[t];
            for (int c = 0; c < k; c++) {
                double logDet = 0.0;
                double tr = 0.0;
                for (int i = 0; i < dc; i++) {
                    double ci = abar * l[c][i] + oneMinus;
                    inverse[t][c][i] = 1.0 / ci;
                    tr += 1.0 / ci;
                    logDet += Math.log(ci);
                    double p = abarPrev * l[c][i] + oneMinusPrev;
                    cov[i] = p * beta / (alpha * p + beta);
                }
                logNormalizer[t][c] = Math.log(pi[c]) - 0.5 * logDet;
                traceInverse[t][c] = tr;
                for (int j = 0; j < dc; j++) {
                    double diag = 0.0;
                    for (int i = 0; i < dc; i++) {
                        diag += basis[c][j][i] * basis[c][j][i] * cov[i];
                    }
                    within[t][c][j] = diag;
                }
            }
        }
    }

    /**
     * Fits the mixture on the continuous cells of the training rows ({@link MixtureFit#chooseByBic}),
     * the one-component candidate being {@link GaussianBaseline}'s fitted Gaussian (Schaefer &amp;
     * Strimmer's shrinkage), so that K = 1 is exactly {@link Baseline#FITTED_GAUSSIAN}.
     *
     * @param x0 n rows of d model-space cells, continuous first (not modified)
     * @param schedule the training schedule of the continuous columns
     * @param seed the seed of the EM starts
     */
    static MixtureBaseline fit(float[] x0, int n, int d, int dc, NoiseSchedule schedule, long seed) {
        GaussianBaseline gaussian = GaussianBaseline.fitted(x0, n, d, dc, schedule);
        GaussianMixture one = GaussianMixture.of(new double[] {1.0}, new double[][] {gaussian.mean()},
                new double[][][] {gaussian.covariance()}, new double[] {gaussian.shrinkage()});
        double[][] x = new double[n][dc];
        for (int r = 0; r < n; r++) {
            for (int j = 0; j < dc; j++) {
                x[r][j] = x0[r * d + j];
            }
        }
        MixtureFit.Choice choice = MixtureFit.chooseByBic(x, one, seed);
        GaussianMixture chosen = choice.mixture();
        return new MixtureBaseline(chosen, choice.bic(), chosen.components() == 1 ? gaussian : null, schedule);
    }

    /**
     * A part from a stored mixture (the model file).
     *
     * @param mixture the mixture in model space
     * @param bic the BIC of each K tried at the fit (kept for the record; copied), or an empty array
     * @param schedule the training schedule of the continuous columns
     */
    public static MixtureBaseline of(GaussianMixture mixture, double[] bic, NoiseSchedule schedule) {
        Require.notNull("mixture", mixture);
        Require.notNull("bic", bic);
        Require.notNull("schedule", schedule);
        GaussianBaseline one = mixture.components() == 1 ? GaussianBaseline.of(Baseline.FITTED_GAUSSIAN,
                mixture.mean(0), mixture.covariance(0), mixture.shrinkage()[0], schedule) : null;
        return new MixtureBaseline(mixture, bic.clone(), one, schedule);
    }

    @Override
    public Baseline kind() {
        return Baseline.FITTED_MIXTURE;
    }

    @Override
    public int continuousColumns() {
        return dc;
    }

    @Override
    public int scratchSize() {
        return single != null ? single.scratchSize() : k * dc + k + dc;
    }

    /**
     * The components' e_k (at [0, K dc)), the weights w_k (at [K dc, K dc + K)) of one row, into scratch.
     */
    private void components(float[] xt, int xo, int step, double[] scratch) {
        double sa = sqrtAbar[step];
        double sn = sqrtOneMinus[step];
        int wo = k * dc;
        int po = wo + k;
        double most = Double.NEGATIVE_INFINITY;
        for (int c = 0; c < k; c++) {
            double[][] u = basis[c];
            double[] m = means[c];
            double[] inv = inverse[step][c];
            java.util.Arrays.fill(scratch, po, po + dc, 0.0);
            for (int j = 0; j < dc; j++) {
                double y = xt[xo + j] - sa * m[j];
                double[] uj = u[j];
                for (int i = 0; i < dc; i++) {
                    scratch[po + i] += uj[i] * y;
                }
            }
            double quad = 0.0;
            for (int i = 0; i < dc; i++) {
                double p = scratch[po + i];
                quad += p * p * inv[i];
                scratch[po + i] = p * inv[i];
            }
            double lw = logNormalizer[step][c] - 0.5 * quad;
            scratch[wo + c] = lw;
            most = Math.max(most, lw);
            int eo = c * dc;
            for (int j = 0; j < dc; j++) {
                double e = 0.0;
                double[] uj = u[j];
                for (int i = 0; i < dc; i++) {
                    e += uj[i] * scratch[po + i];
                }
                scratch[eo + j] = sn * e;
            }
        }
        double total = 0.0;
        for (int c = 0; c < k; c++) {
            double w = Math.exp(scratch[wo + c] - most);
            scratch[wo + c] = w;
            total += w;
        }
        for (int c = 0; c < k; c++) {
            scratch[wo + c] /= total;
        }
    }

    @Override
    public void addToRowInPlace(float[] xt, int xo, int step, float[] out, int oo, boolean learned, double[] scratch) {
        if (single != null) {
            single.addToRowInPlace(xt, xo, step, out, oo, learned, scratch);
            return;
        }
        components(xt, xo, step, scratch);
        int wo = k * dc;
        for (int j = 0; j < dc; j++) {
            double eps = 0.0;
            for (int c = 0; c < k; c++) {
                eps += scratch[wo + c] * scratch[c * dc + j];
            }
            out[oo + j] += (float) eps;
            if (learned) {
                double diag = 0.0;
                double spread = 0.0;
                for (int c = 0; c < k; c++) {
                    double w = scratch[wo + c];
                    double e = scratch[c * dc + j] - eps;
                    diag += w * within[step][c][j];
                    spread += w * e * e;
                }
                diag += between[step] * spread;
                out[oo + dc + j] += (float) (Math.abs(span[step]) < 1e-12 ? 1.0 : (Math.log(diag) - logTilde[step]) / span[step]);
            }
        }
    }

    @Override
    public void addTracesInPlace(float[] x, int d, int rows, int step, double[] trace) {
        if (single != null) {
            single.addTracesInPlace(x, d, rows, step, trace);
            return;
        }
        double[] scratch = new double[scratchSize()];
        double[] eps = new double[dc];
        int wo = k * dc;
        double sn = sqrtOneMinus[step];
        for (int r = 0; r < rows; r++) {
            components(x, r * d, step, scratch);
            java.util.Arrays.fill(eps, 0.0);
            double linear = 0.0;
            for (int c = 0; c < k; c++) {
                double w = scratch[wo + c];
                linear += w * traceInverse[step][c];
                for (int j = 0; j < dc; j++) {
                    eps[j] += w * scratch[c * dc + j];
                }
            }
            double spread = 0.0;
            for (int c = 0; c < k; c++) {
                double w = scratch[wo + c];
                for (int j = 0; j < dc; j++) {
                    double e = scratch[c * dc + j] - eps[j];
                    spread += w * e * e;
                }
            }
            trace[r] += sn * linear - spread / sn;
        }
    }

    /** @return the Gaussian when the mixture has one component, else null */
    @Override
    public GaussianBaseline linear() {
        return single;
    }

    /** @return the fitted mixture in model space */
    public GaussianMixture mixture() {
        return mixture;
    }

    /** @return the BIC of each K tried at the fit (index K - 1), a copy; empty when not recorded */
    public double[] bic() {
        return bic.clone();
    }
}
