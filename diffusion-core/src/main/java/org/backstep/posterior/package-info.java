/**
 * Closed-form posteriors and divergences of diffusion processes, scalar in double and batched on ND4J:
 * Gaussian (Ho et al. 2020) and binomial (Sohl-Dickstein et al. 2015) diffusion, Gaussian and Bernoulli KL.
 */
package org.backstep.posterior;
