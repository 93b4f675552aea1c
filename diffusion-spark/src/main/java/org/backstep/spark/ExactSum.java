package org.backstep.spark;

import java.io.Serializable;
import java.util.Arrays;

/**
 * The exact sum of doubles, kept as a short list of non-overlapping partial sums and rounded once
 * at the end, so that the result depends on the values only, not on their order or on how they
 * were split into parts and merged: a sum over a DataFrame's partitions is the same to the last bit
 * however the rows are partitioned.
 *
 * <p>Adding x: for each partial y, from the smallest, hi = x + y and lo = y - (hi - x) (with
 * |x| &gt;= |y|, Dekker's Fast-Two-Sum: hi + lo = x + y exactly); nonzero lo are kept as partials,
 * and hi goes on; the last hi is appended (Shewchuk 1997, "Adaptive precision floating-point
 * arithmetic and fast robust geometric predicates", Grow-Expansion, Theorem 10). Merging adds the
 * other's partials one by one, which is exact. {@link #value()} adds the partials from the largest
 * down until a sum is inexact, then corrects the half-way case, which rounds the exact sum to the
 * nearest double (ties to even). Not thread-safe.
 */
final class ExactSum implements Serializable {

    private static final long serialVersionUID = 1L;

    private double[] partials = new double[4];
    private int count;

    /**
     * Adds a finite value.
     *
     * @param value the value
     * @throws ArithmeticException if the sum leaves the range of doubles
     */
    void add(double value) {
        double x = value;
        int kept = 0;
        for (int j = 0; j < count; j++) {
            double y = partials[j];
            if (Math.abs(x) < Math.abs(y)) {
                double swap = x;
                x = y;
                y = swap;
            }
            double hi = x + y;
            double lo = y - (hi - x);
            if (lo != 0.0) {
                partials[kept++] = lo;
            }
            x = hi;
        }
        if (!Double.isFinite(x)) {
            throw new ArithmeticException("a sum of the column's values left the range of doubles (" + x + ")");
        }
        if (kept == partials.length) {
            partials = Arrays.copyOf(partials, 2 * kept);
        }
        partials[kept++] = x;
        count = kept;
    }

    /**
     * Adds the other sum's value, exactly.
     *
     * @param other another sum (not modified)
     * @return this
     */
    ExactSum merge(ExactSum other) {
        for (int j = 0; j < other.count; j++) {
            add(other.partials[j]);
        }
        return this;
    }

    /** @return the exact sum rounded to the nearest double, ties to even */
    double value() {
        if (count == 0) {
            return 0.0;
        }
        int k = count - 1;
        double hi = partials[k];
        double lo = 0.0;
        while (k > 0) {
            double x = hi;
            double y = partials[--k];
            hi = x + y;
            lo = y - (hi - x);
            if (lo != 0.0) {
                break;
            }
        }
        // half-way: the partials below lo push the exact sum past the tie, in lo's direction
        if (k > 0 && ((lo < 0.0 && partials[k - 1] < 0.0) || (lo > 0.0 && partials[k - 1] > 0.0))) {
            double y = lo * 2.0;
            double x = hi + y;
            if (y == x - hi) {
                hi = x;
            }
        }
        return hi;
    }
}
