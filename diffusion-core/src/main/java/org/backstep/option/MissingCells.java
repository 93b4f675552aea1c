package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * What a job that scores records (screening, drift) does with a missing (NaN) cell: refuse the
 * table, naming the first missing cell, or impute the record first. An imputed record is scored
 * once per completion drawn (k = {@code imputation.draws()} draws of the missing cells from the
 * model's conditional distribution given the observed ones, see {@link ImputationOptions}), and
 * its score is the mean of those k scores: an estimate of E[-log p(x_obs, x_mis) | x_obs]
 * = -log p(x_obs) + H(x_mis | x_obs), so an incomplete record scores higher than its observed
 * cells alone would by the conditional entropy of its missing cells (in model space). The report
 * notes every imputed cell.
 *
 * <p>Caution: imputed values are not measurements.
 *
 * @param impute false to refuse, true to impute
 * @param imputation how to impute; null when refusing
 */
public record MissingCells(boolean impute, ImputationOptions imputation) {

    /** Validates: imputing needs its options; refusing has none. */
    public MissingCells {
        if (impute) {
            Require.notNull("imputation", imputation);
        } else if (imputation != null) {
            throw new IllegalArgumentException("imputation is " + imputation
                    + "; refusing missing cells takes no imputation options (null)");
        }
    }

    /** @return refuse a table with a missing cell, naming its row and column */
    public static MissingCells refuse() {
        return new MissingCells(false, null);
    }

    /**
     * @param how the imputation's draws, steps, rounds and method (its level is not used)
     * @return impute each incomplete record and score the mean over its completions
     */
    public static MissingCells impute(ImputationOptions how) {
        Require.notNull("how", how);
        return new MissingCells(true, how);
    }

    @Override
    public String toString() {
        return impute ? "impute missing cells (" + imputation + ")" : "refuse missing cells";
    }
}
