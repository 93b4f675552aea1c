/**
 * Noise schedules of a diffusion process in double precision: beta, alpha, alpha-bar, SNR and the
 * posterior variance per step, and strided sub-schedules for sampling with fewer steps.
 */
package org.backstep.schedule;
