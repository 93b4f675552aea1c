package org.backstep.internal.chain;

import org.backstep.report.SampleCheck;
import org.backstep.schedule.Require;

import java.util.Arrays;

/**
 * The range of the training rows in model space, per diffused column (continuous columns first,
 * then binary, the layout of a model-space row), and the check of sampled rows against it (see
 * {@link SampleCheck} for the bound). Fitted models keep the range of their training rows; model
 * files of format versions 1 and 2, which did not store it, get Samuelson's bound of n
 * standardized values, +-sqrt(n - 1) (Samuelson 1968); a model over a supplied estimator has no
 * range and nothing lies beyond it.
 *
 * @param min the smallest training value of each model-space column (copied)
 * @param max the largest (copied), each at least its min
 * @param continuous the number of continuous columns, which come first; binary columns are not checked
 * @param basis what the range is, for the report
 */
public record ModelRange(double[] min, double[] max, int continuous, String basis) {

    /** The basis of a range measured on the training rows. */
    public static final String TRAINING_ROWS = "training rows";

    /** Validates: equal lengths, min at most max (infinite ends only for the empty range of {@link #none}). */
    public ModelRange {
        Require.notNull("min", min);
        Require.notNull("max", max);
        Require.notNull("basis", basis);
        if (min.length != max.length) {
            throw new IllegalArgumentException("min has " + min.length + " values and max " + max.length);
        }
        Require.inRange("continuous", continuous, 0, min.length);
        min = min.clone();
        max = max.clone();
        for (int j = 0; j < min.length; j++) {
            if (!(min[j] <= max[j]) || Double.isNaN(min[j]) || Double.isNaN(max[j])) {
                throw new IllegalArgumentException("range of model column " + j + " is [" + min[j] + ", " + max[j]
                        + "]; expected min at most max");
            }
        }
    }

    /**
     * @param x rows x d training rows in model space, row-major, not modified
     * @param rows the rows
     * @param d the width
     * @param continuous how many of the d columns are continuous (they come first)
     * @return the columns' smallest and largest values
     */
    public static ModelRange of(float[] x, int rows, int d, int continuous) {
        Require.atLeast("rows", rows, 1);
        double[] lo = new double[d];
        double[] hi = new double[d];
        Arrays.fill(lo, Double.POSITIVE_INFINITY);
        Arrays.fill(hi, Double.NEGATIVE_INFINITY);
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < d; j++) {
                double v = x[r * d + j];
                lo[j] = Math.min(lo[j], v);
                hi[j] = Math.max(hi[j], v);
            }
        }
        return new ModelRange(lo, hi, continuous, TRAINING_ROWS);
    }

    /**
     * Samuelson's bound: n values standardized by their own mean and population standard
     * deviation lie within +-sqrt(n - 1) (Samuelson 1968, JASA 63, p. 1522); binary columns in [0, 1].
     *
     * @param continuous continuous columns
     * @param binary binary columns
     * @param n the training rows, at least 2
     * @return the range
     */
    public static ModelRange samuelson(int continuous, int binary, int n) {
        Require.atLeast("n", n, 2);
        double b = Math.sqrt(n - 1.0);
        double[] lo = new double[continuous + binary];
        double[] hi = new double[continuous + binary];
        Arrays.fill(lo, 0, continuous, -b);
        Arrays.fill(hi, 0, continuous, b);
        Arrays.fill(hi, continuous, lo.length, 1.0);
        return new ModelRange(lo, hi, continuous, "Samuelson bound of " + n + " training rows");
    }

    /**
     * @param continuous continuous columns
     * @param binary binary columns
     * @return the range of a model that knows no training rows: nothing lies beyond it
     */
    public static ModelRange none(int continuous, int binary) {
        double[] lo = new double[continuous + binary];
        double[] hi = new double[continuous + binary];
        Arrays.fill(lo, Double.NEGATIVE_INFINITY);
        Arrays.fill(hi, Double.POSITIVE_INFINITY);
        return new ModelRange(lo, hi, continuous, "none");
    }

    /** @return a copy of the smallest values */
    @Override
    public double[] min() {
        return min.clone();
    }

    /** @return a copy of the largest values */
    @Override
    public double[] max() {
        return max.clone();
    }

    /** @return the number of model-space columns */
    public int width() {
        return min.length;
    }

    /**
     * Counts the rows with a continuous value beyond {@link SampleCheck#BOUND_WIDTHS} widths of its
     * column's range on either side. A column of width 0 (one training value) counts in units of 1,
     * the standard deviation of a standardized column.
     *
     * @param x rows x d sampled rows in model space, not modified
     * @param rows the rows
     * @return the check
     */
    public SampleCheck check(float[] x, int rows) {
        int d = min.length;
        int beyond = 0;
        double largest = 0.0;
        for (int r = 0; r < rows; r++) {
            boolean out = false;
            for (int j = 0; j < continuous; j++) {
                double w = max[j] - min[j] > 0 ? max[j] - min[j] : 1.0;
                double v = x[r * d + j];
                double excess = v < min[j] ? (min[j] - v) / w : v > max[j] ? (v - max[j]) / w : 0.0;
                if (!(excess <= SampleCheck.BOUND_WIDTHS)) {
                    out = true;
                }
                if (excess > largest || Double.isNaN(excess)) {
                    largest = Double.isNaN(excess) ? Double.POSITIVE_INFINITY : excess;
                }
            }
            beyond += out ? 1 : 0;
        }
        return new SampleCheck(rows, beyond, largest, SampleCheck.BOUND_WIDTHS, basis);
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof ModelRange r && Arrays.equals(min, r.min) && Arrays.equals(max, r.max)
                && continuous == r.continuous && basis.equals(r.basis);
    }

    @Override
    public int hashCode() {
        return (Arrays.hashCode(min) * 31 + Arrays.hashCode(max)) * 31 + continuous * 31 + basis.hashCode();
    }

    @Override
    public String toString() {
        return "ModelRange[min=" + Arrays.toString(min) + ", max=" + Arrays.toString(max) + ", continuous=" + continuous
                + ", basis=" + basis + "]";
    }
}
