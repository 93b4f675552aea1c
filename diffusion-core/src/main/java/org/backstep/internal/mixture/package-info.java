/**
 * Gaussian mixtures (not API): a fitted mixture's parameters and log-density ({@code GaussianMixture}),
 * and its fit by EM with covariances regularized by a conjugate prior, the number of components
 * chosen by BIC ({@code MixtureFit}).
 */
package org.backstep.internal.mixture;
