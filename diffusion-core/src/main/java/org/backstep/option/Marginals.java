package org.backstep.option;

/**
 * How each real continuous column is mapped into the model space before it is diffused (integer,
 * binary and categorical columns are never mapped this way, and the columns named by
 * {@code logColumns} are always log-standardized).
 *
 * <p>Two families of per-column maps z_j = f_j(x_j), each with its exact log-Jacobian in every
 * density the model reports (log p_x(x) = log p_z(z) + sum_j log f_j'(x_j); Dinh et al. 2017,
 * section 3.1):
 * <ul>
 *   <li>standardized: z = (x - m) / s, the training mean and population standard deviation;</li>
 *   <li>normal scores: z = Phi^-1(F_h(x)), F_h(x) = (1/n) sum_i Phi((x - k_i) / h) the
 *       distribution function of the training values k_i smoothed by Gaussian kernels of bandwidth
 *       h = c h_S, h_S Silverman's rule 0.9 min(sd, IQR / 1.34) n^(-1/5) (Silverman 1986, "Density
 *       Estimation for Statistics and Data Analysis", eq. 3.31), log f'(x) = log f_h(x) - log phi(z).
 *       With whitened coordinates and the N(0, I) part, a zero network is then a Gaussian copula
 *       (Liu, Lafferty &amp; Wasserman 2009, "The Nonparanormal", JMLR 10:2295-2328).</li>
 * </ul>
 *
 * <p>The multiple c is chosen without the network, by the K-fold cross-validated log-likelihood of
 * the model's zero-network part (the Gaussian of the whitening, fitted on the maps' values of the
 * other folds and shrunk by Ledoit &amp; Wolf's intensity) in the caller's units, the log-Jacobian
 * included ({@code org.backstep.table.MarginalCriterion}); the same criterion scores the
 * standardized maps, so the two families are compared on one scale.
 */
public enum Marginals {
    /** Every real continuous column standardized (the maps of format versions 1 to 6 without normal scores). */
    STANDARDIZED,
    /**
     * Every real continuous column by its normal scores, the bandwidth multiple chosen by the
     * cross-validated criterion above; no comparison with the standardized maps.
     */
    NORMAL_SCORES,
    /**
     * Chosen at fit time: the criterion scores the standardized maps and the normal scores at each
     * bandwidth multiple; unless the best normal scores beat the standardized maps there by more than
     * 0.05 nats per record and on a majority of rows (a sign test), the fit is standardized (one fit
     * and the criterion). Otherwise two models are trained, one per family, and the one with the
     * lower mean exact bound on the complete checkpoint rows is kept: K =
     * {@code org.backstep.Defaults.MARGINALS_COMPARISON_DRAWS} draws per term and the control
     * variates at every step, in the caller's units (log-Jacobian included). Two fits, the criterion
     * and the comparison took 3.4 times a standardized fit on breast_cancer
     * (diffusion-bench/results/marginals.txt, run D). Without checkpoint rows the criterion alone
     * decides. The provenance's notes give the criterion's figures and both bounds. The default
     * ({@code org.backstep.Defaults.MARGINALS}).
     */
    CHOSEN
}
