package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to screen records: each record's score is its bound in nats (by {@code bound}), and a record
 * is flagged when its score exceeds the {@code quantile} of the held-out records' scores (the
 * empirical quantile, Hyndman &amp; Fan 1996, type 7). A sampled bound uses at most T draws.
 *
 * <p>Start from {@code org.backstep.Defaults#screening()}.
 *
 * @param quantile in (0, 1), e.g. 0.99
 * @param bound how each score is computed
 */
public record ScreeningOptions(double quantile, BoundOptions bound) {

    /** Validates. */
    public ScreeningOptions {
        Require.inOpen("quantile", quantile, 0.0, 1.0);
        Require.notNull("bound", bound);
    }

    /** @param value in (0, 1) @return a copy with this quantile */
    public ScreeningOptions withQuantile(double value) {
        return new ScreeningOptions(value, bound);
    }

    /** @param value not null @return a copy scoring by this bound */
    public ScreeningOptions withBound(BoundOptions value) {
        return new ScreeningOptions(quantile, value);
    }
}
