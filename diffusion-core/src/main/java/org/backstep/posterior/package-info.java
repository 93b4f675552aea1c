/**
 * Closed-form posteriors and divergences of diffusion processes, scalar in double: Gaussian
 * (Ho et al. 2020), binomial (Sohl-Dickstein et al. 2015) and multinomial (Hoogeboom et al. 2021)
 * diffusion, the discretized Gaussian decoder of integer values (Ho et al. 2020, eq. 13), the
 * Gaussian, Bernoulli and categorical KL with the library's one probability floor.
 */
package org.backstep.posterior;
