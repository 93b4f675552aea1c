package org.backstep.option;

/**
 * The coordinates in which the continuous columns are diffused. The chain of every job (training,
 * bound, sampling, imputation, denoising) runs in these coordinates; every figure a job reports is
 * in the caller's standardized model space.
 *
 * <p>With y the standardized model-space cells of the CONTINUOUS columns (integer, binary and
 * categorical columns are never whitened: an integer column's decoder needs its own axis), m their
 * training mean and Sigma their training covariance shrunk toward a multiple of the identity by
 * Ledoit &amp; Wolf's estimate of the intensity (2004, "A well-conditioned estimator for
 * large-dimensional covariance matrices", J. Multivariate Analysis 88:365-411, section 3.3), the
 * whitened coordinates are
 * <pre>
 *   z = W (y - m),   W = Sigma^(-1/2)   (symmetric "ZCA" whitening; Kessy, Lewis &amp; Strimmer 2018,
 *                                        "Optimal Whitening and Decorrelation", section 3)
 *   log p_y(y) = log p_z(z) + log |det W|   (the change of variables; Dinh et al. 2017, section 3.1)
 * </pre>
 * so bounds and likelihoods add log |det W| = -(1/2) log det Sigma back. With
 * {@link Baseline#STANDARD_NORMAL} a zero network is then the Gaussian N(m, Sigma) fitted on the
 * training rows. Imputation holds the observed cells in y while the chain runs in z by the
 * regression-adjusted replacement of {@link Conditioning#REPLACEMENT} (see there); denoising replaces
 * the directions of the readings' noise in z, W S W = U diag(lambda) U^T, each down to its own level.
 */
public enum Coordinates {
    /** Each continuous column standardized on its own (format versions 1 to 4). */
    STANDARDIZED,
    /**
     * The continuous columns whitened by the training covariance, z = Sigma^(-1/2) (y - m); the
     * default ({@code org.backstep.Defaults.COORDINATES}). Training rows with a gap are trained on:
     * m and Sigma by EM for the normal with missing values, the gaps drawn afresh from that Gaussian's
     * conditional at every use. Imputation by {@link Conditioning#KERNEL_PRODUCT} is refused: fit
     * with {@link #STANDARDIZED} for it. Denoising releases each direction of the readings' noise in
     * these coordinates at its own level ({@code org.backstep.DiffusionModel#denoise}); on the demo's
     * correlated fleet a standardized fit still denoised 5 to 8% better in RMSE.
     */
    WHITENED
}
