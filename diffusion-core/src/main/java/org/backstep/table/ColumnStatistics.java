package org.backstep.table;

import org.backstep.schedule.Require;

/**
 * What {@link TableTransform} needs to know of one continuous or integer column's observed
 * (non-missing) training cells to build its transform, computed wherever the rows are: by
 * {@link TableTransform#fit(Table, java.util.Set)} from a {@link Table}, or by a distributed engine's
 * aggregates over a table too large for one JVM, then given to
 * {@link TableTransform#fromStatistics}.
 *
 * <p>With y = x, or y = log x for a column modelled on the log scale, over the n observed cells:
 * the mean m = (1/n) sum y_i and the population standard deviation
 * s = sqrt((1/n) sum (y_i - m)^2). Any numerically stable way of computing them will do: a
 * corrected two-pass sum (Chan, Golub &amp; LeVeque 1983, "Algorithms for computing the sample
 * variance", eq. 1.7), or one pass of Welford's update merged over parts by the pairwise formula of
 * the same paper (eq. 2.1).
 *
 * @param observed n, the observed cells, at least 1
 * @param missing the missing cells, at least 0
 * @param min the smallest observed value x, original units, finite
 * @param max the largest observed value x, original units, finite, at least {@code min}
 * @param mean m, the mean of y, finite
 * @param sd s, the population standard deviation of y, finite and at least 0
 */
public record ColumnStatistics(long observed, long missing, double min, double max, double mean, double sd) {

    /**
     * Validates.
     *
     * @throws IllegalArgumentException naming the first field out of its range
     */
    public ColumnStatistics {
        if (observed < 1) {
            throw new IllegalArgumentException("observed is " + observed
                    + "; expected at least 1 observed cell to build a transform from");
        }
        if (missing < 0) {
            throw new IllegalArgumentException("missing is " + missing + "; expected at least 0");
        }
        Require.finite("min", min);
        Require.finite("max", max);
        if (!(min <= max)) {
            throw new IllegalArgumentException("min is " + min + " and max is " + max
                    + "; expected min <= max");
        }
        Require.finite("mean", mean);
        Require.nonNegative("sd", sd);
    }
}
