package org.backstep.report;

import org.backstep.schedule.Require;
import org.backstep.table.Table;

/**
 * Synthetic rows and the check of how far they strayed from the training data (see
 * {@link SampleCheck}).
 *
 * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
 *
 * @param table the sampled rows in original units, with the training columns
 * @param check the share of rows beyond the stated bound in model space
 */
public record CheckedSample(Table table, SampleCheck check) {

    /** Checks that both parts are present and agree on the row count. */
    public CheckedSample {
        Require.notNull("table", table);
        Require.notNull("check", check);
        if (table.rows() != check.rows()) {
            throw new IllegalArgumentException("table has " + table.rows() + " rows but check counts " + check.rows());
        }
    }
}
