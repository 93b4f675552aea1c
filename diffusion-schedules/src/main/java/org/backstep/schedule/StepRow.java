package org.backstep.schedule;

/**
 * One row of a schedule's per-step table, as printed by {@link NoiseSchedule#toTableText()}.
 *
 * @param step the step t, 1-based
 * @param sourceStep the step of the schedule this one was strided from (equal to {@code step} for
 *     a schedule that was not strided)
 * @param beta beta_t
 * @param alpha alpha_t = 1 - beta_t
 * @param alphaBar alpha-bar_t = prod_{s<=t} alpha_s
 * @param snr alpha-bar_t / (1 - alpha-bar_t)
 * @param logSnr log(alpha-bar_t) - log(1 - alpha-bar_t)
 * @param posteriorVariance beta-tilde_t = beta_t (1 - alpha-bar_{t-1}) / (1 - alpha-bar_t)
 */
public record StepRow(int step, int sourceStep, double beta, double alpha, double alphaBar, double snr,
                      double logSnr, double posteriorVariance) {
}
