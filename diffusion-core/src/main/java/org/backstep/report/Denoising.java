package org.backstep.report;

import org.backstep.schedule.Require;

import org.backstep.table.Table;

/**
 * Readings cleaned of additive Gaussian noise of known size: the mean and spread of k draws of the
 * model's posterior of the clean record given the noisy one.
 *
 * <p>Caution: denoised values are estimates, not measurements.
 *
 * @param mean per-cell posterior mean, original units
 * @param standardDeviation per-cell posterior standard deviation of the draws, original units
 * @param draws how many draws the figures rest on
 * @param step the step of the training chain whose noise level the readings were placed at
 */
public record Denoising(Table mean, Table standardDeviation, int draws, int step) {

    /** Checks that both tables are present. */
    public Denoising {
        Require.notNull("mean", mean);
        Require.notNull("standardDeviation", standardDeviation);
    }
}
