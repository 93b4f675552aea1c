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
    FITTED_GAUSSIAN
}
