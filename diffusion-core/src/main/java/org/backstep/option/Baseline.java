package org.backstep.option;

/**
 * The closed-form part of the reverse model of the continuous columns: the network adds a learned
 * correction to the exact reverse model of a Gaussian, so that a network that outputs zero is that
 * Gaussian's reverse chain and training moves away from it only where the data say so.
 *
 * <p>For x_0 ~ N(m, S) and x_t = sqrt(abar_t) x_0 + sqrt(1 - abar_t) eps (Ho et al. 2020, eq. 4),
 * x_t is Gaussian with covariance abar_t S + (1 - abar_t) I, and the exact noise prediction is linear:
 * <pre>
 *   E[eps | x_t] = sqrt(1 - abar_t) (abar_t S + (1 - abar_t) I)^-1 (x_t - sqrt(abar_t) m)
 * </pre>
 * (the conditional mean of jointly Gaussian vectors). The estimator's epsilon-hat is this plus the
 * network's output; with learned variances its v is the network's output plus the v whose kernel
 * variance equals the diagonal of the exact reverse covariance Var(x_{t-1} | x_t) of that Gaussian
 * (with S = I this v is 1: sigma_t^2 = beta_t is exact for N(0, I) data). The network's output
 * layer starts at zero, so a fit starts at the closed form. Binary columns are unchanged.
 */
public enum Baseline {
    /** No closed-form part: epsilon-hat and v are the network's outputs (format versions 1 to 3). */
    NONE,
    /** The reverse model of N(0, I) data: m = 0, S = I, so epsilon-hat = sqrt(1 - abar_t) x_t + network. */
    STANDARD_NORMAL,
    /**
     * The reverse model of the Gaussian fitted on the training rows in model space: m their mean, S
     * their covariance with the correlations shrunk toward zero by Schaefer &amp; Strimmer's (2005)
     * estimate of the shrinkage intensity, so that S is invertible however few the rows.
     */
    FITTED_GAUSSIAN,
    /**
     * The reverse model of a Gaussian mixture sum_k pi_k N(m_k, S_k) fitted on the training rows in
     * model space (whitened when the coordinates are WHITENED). x_t is then the mixture of
     * N(sqrt(abar_t) m_k, C_k), C_k = abar_t S_k + (1 - abar_t) I, and the exact noise prediction is
     * <pre>
     *   E[eps | x_t] = sum_k w_k(x_t) sqrt(1 - abar_t) C_k^-1 (x_t - sqrt(abar_t) m_k),
     *   w_k(x_t) = pi_k N(x_t; sqrt(abar_t) m_k, C_k) / sum_j pi_j N(x_t; sqrt(abar_t) m_j, C_j)
     * </pre>
     * (the posterior of the component given x_t, times each component's Gaussian conditional mean;
     * equivalently -sqrt(1 - abar_t) times the score of x_t's density, Vincent 2011, "A Connection
     * Between Score Matching and Denoising Autoencoders", section 4). With learned variances v is the
     * network's output plus the v whose kernel variance is the diagonal of the mixture's exact
     * reverse covariance Var(x_{t-1} | x_t): the w-weighted diagonals of the components' reverse
     * covariances plus the spread of their reverse means (the law of total variance), which is the
     * best diagonal Gaussian kernel for that mean (moment matching). The mixture is fitted by EM with
     * each covariance regularized by a conjugate prior (Fraley &amp; Raftery 2007), K = 1..6 chosen
     * by BIC; K = 1 is exactly {@link #FITTED_GAUSSIAN}'s Gaussian. A model with this part is
     * written as model format version 6.
     *
     * <p>Measured (diffusion-bench/results/mixture-baseline.txt, whitened coordinates, default budget,
     * 2 fit seeds): no better than {@link #STANDARD_NORMAL} on iris (2.85 against 2.86 nats per record)
     * and worse on breast_cancer (1.74 against -0.33) and diabetes (8.76 against 7.77): a trained model
     * stays near the mixture's own figure. Its bound terms have no control variate, so its per-record
     * score is noisier. Not a default; kept as a measured option.
     */
    FITTED_MIXTURE
}
