package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.Locale;

/**
 * How far a sample strayed from the data the model was trained on, checked in model space (each
 * continuous column standardized, or log-standardized, by the training rows). With m_j and M_j the
 * smallest and largest value of diffused continuous column j over the training rows and
 * w_j = M_j - m_j its width, a sampled row lies <em>beyond the bound</em> when for some column j
 * its value x_j satisfies x_j &lt; m_j - {@value #BOUND_WIDTHS} w_j or x_j &gt; M_j +
 * {@value #BOUND_WIDTHS} w_j. A model that has learned its data draws no such row (ten widths of
 * the training range lie dozens of standard deviations away); a reverse chain that diverges, for
 * instance at too few steps for its schedule, draws many, long before a value leaves the float
 * range. Binary columns are always 0 or 1 and are not checked. Common practice, no source: the
 * bound is a plausibility test, not a statistical test.
 *
 * <p>Where the training range is not known (model files of format versions 1 and 2 do not store
 * it), the range of a standardized column is bounded by Samuelson's inequality: n values of mean 0
 * and population standard deviation 1 all lie within +-sqrt(n - 1) (Samuelson 1968, "How deviant
 * can you be?", JASA 63, p. 1522); {@link #rangeBasis()} says which range was used.
 *
 * @param rows rows sampled
 * @param rowsBeyond rows with at least one value beyond the bound
 * @param largestExcess the largest distance of a sampled value outside its column's training range,
 *     in units of that column's width (0 when every value lies within the range)
 * @param boundWidths the bound, in widths of the training range beyond it: {@value #BOUND_WIDTHS}
 * @param rangeBasis what the range is: "training rows", "Samuelson bound of n training rows" or
 *     "none" (a model over a supplied estimator, which knows no training rows)
 */
public record SampleCheck(int rows, int rowsBeyond, double largestExcess, double boundWidths, String rangeBasis) {

    /** The stated bound: ten widths of the training range beyond the range, on either side. */
    public static final double BOUND_WIDTHS = 10.0;

    /** Validates the counts. */
    public SampleCheck {
        Require.atLeast("rows", rows, 0);
        Require.inRange("rowsBeyond", rowsBeyond, 0, rows);
        if (!(largestExcess >= 0)) {
            throw new IllegalArgumentException("largestExcess is " + largestExcess + "; expected a number of at least 0");
        }
        Require.positive("boundWidths", boundWidths);
        Require.notNull("rangeBasis", rangeBasis);
    }

    /** @return rowsBeyond / rows, the share of rows beyond the bound (0 for no rows) */
    public double shareBeyond() {
        return rows == 0 ? 0.0 : rowsBeyond / (double) rows;
    }

    /** @return whether any row lies beyond the bound: the samples come from a diverging chain */
    public boolean diverged() {
        return rowsBeyond > 0;
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT, "%d of %d sampled rows (%.2f%%) lie beyond %.0f widths of the training range "
                + "(model space; range from %s); the farthest value lies %.3g widths outside the range",
                rowsBeyond, rows, 100.0 * shareBeyond(), boundWidths, rangeBasis, largestExcess);
    }
}
