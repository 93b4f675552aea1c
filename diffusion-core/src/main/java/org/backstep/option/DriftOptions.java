package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to compare a new batch of records with a reference batch: both batches' records are scored
 * by {@code bound} (with common random numbers, as in a screen), and missing cells are refused or
 * imputed by {@code missing} for the scores (the per-column tests use the observed cells only).
 * See {@code org.backstep.report.DriftReport} for the tests.
 *
 * <p>Start from {@code org.backstep.Defaults#drift()}.
 *
 * @param bound how each score is computed (a sampled bound uses at most T draws)
 * @param missing what to do with a missing cell when scoring
 */
public record DriftOptions(BoundOptions bound, MissingCells missing) {

    /** Validates. */
    public DriftOptions {
        Require.notNull("bound", bound);
        Require.notNull("missing", missing);
    }

    /** @param value not null @return a copy scoring by this bound */
    public DriftOptions withBound(BoundOptions value) {
        return new DriftOptions(value, missing);
    }

    /** @param value not null @return a copy with this treatment of missing cells */
    public DriftOptions withMissing(MissingCells value) {
        return new DriftOptions(bound, value);
    }
}
