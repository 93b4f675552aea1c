package org.backstep.option;

/** How synthetic records are drawn from a fitted model. */
public enum SamplerKind {
    /**
     * Ancestral sampling, x_{t-1} ~ p(x_{t-1} | x_t) from t = T down to 1 (Ho et al. 2020,
     * algorithm 2), through the full or a strided schedule (Nichol &amp; Dhariwal 2021, section 4).
     */
    ANCESTRAL,
    /**
     * Implicit sampling (Song, Meng &amp; Ermon 2021, eq. 12): x_{t-1} = sqrt(alpha-bar_{t-1})
     * x0-hat + sqrt(1 - alpha-bar_{t-1} - sigma_t^2) epsilon-hat + sigma_t z with
     * sigma_t = eta sqrt((1 - alpha-bar_{t-1})/(1 - alpha-bar_t)) sqrt(1 - alpha-bar_t/alpha-bar_{t-1})
     * (eq. 16); eta = 0 is deterministic given x_T. Binary columns use their reverse Bernoulli kernels.
     */
    IMPLICIT
}
