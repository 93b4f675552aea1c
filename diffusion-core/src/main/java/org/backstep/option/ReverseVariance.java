package org.backstep.option;

/**
 * The variance of the Gaussian reverse kernels p(x_{t-1} | x_t) of the continuous columns.
 */
public enum ReverseVariance {
    /** sigma_t^2 = beta_t, the upper bound on the reverse variance (Ho et al. 2020, section 3.2). */
    FIXED_BETA,
    /**
     * sigma_t^2 = beta-tilde_t, the posterior variance, the lower bound (Ho et al. 2020, section
     * 3.2); at t = 1 the usual clip replaces it by beta-tilde_2.
     */
    FIXED_POSTERIOR,
    /**
     * sigma_t^2 = exp(v log beta_t + (1 - v) log beta-tilde_t) with v predicted per cell
     * (Nichol &amp; Dhariwal 2021, eq. 15), trained through the bound terms.
     */
    LEARNED
}
