package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.List;
import java.util.Locale;

/**
 * The step-count planner's findings: for each candidate step count K (a strided sub-schedule of
 * the training schedule, Nichol &amp; Dhariwal 2021, section 4), the held-out bound of the K-step
 * chain, the quality of its samples, whether they diverge ({@link SampleCheck}), and the measured
 * cost; and the recommended K, the smallest whose samples do not diverge and whose held-out bound
 * lies within the tolerance of the best such K (if every K diverges, the bound alone decides).
 *
 * @param rows one per step count, in increasing K
 * @param tolerance the tolerance in nats per dimension
 * @param recommended the recommended step count
 * @param reason one sentence saying why
 */
public record StepPlan(List<Row> rows, double tolerance, int recommended, String reason) {

    /** Copies the list. */
    public StepPlan {
        Require.notNull("rows", rows);
        rows = List.copyOf(rows);
        Require.nonNegative("tolerance", tolerance);
        Require.notNull("reason", reason);
    }

    /**
     * One candidate step count.
     *
     * @param steps K
     * @param boundNatsPerDimension the exact held-out bound of the K-step chain, nats per dimension (model space)
     * @param energyDistance the energy distance between K-step samples and held-out rows (model space;
     *     NaN if the chain left the float range)
     * @param energyPValue its permutation p-value (Szekely &amp; Rizzo 2004; NaN as above)
     * @param maxKs the largest per-column two-sample Kolmogorov-Smirnov statistic; for a categorical
     *     column, the total variation distance of its category shares (NaN as above)
     * @param millisPer1000 measured wall time to draw 1,000 samples, milliseconds (NaN as above)
     * @param samplesDiverged whether the K-step samples diverge: some lie beyond the bound of
     *     {@link SampleCheck} or the chain left the float range; such a K is not recommended
     * @param shareBeyond the share of K-step samples beyond that bound (NaN if the chain left the float range)
     */
    public record Row(int steps, double boundNatsPerDimension, double energyDistance, double energyPValue,
                      double maxKs, double millisPer1000, boolean samplesDiverged, double shareBeyond) {

        /** Validates: a NaN stands only in the sample figures of diverged samples. */
        public Row {
            Require.atLeast("steps", steps, 1);
            if (!samplesDiverged) {
                Require.inClosed("shareBeyond", shareBeyond, 0.0, 0.0);
            } else if (!Double.isNaN(shareBeyond)) {
                Require.inClosed("shareBeyond", shareBeyond, 0.0, 1.0);
            }
        }

        /**
         * A step count whose samples stayed within the bound.
         *
         * @param steps K
         * @param boundNatsPerDimension the held-out bound of the K-step chain, nats per dimension
         * @param energyDistance the energy distance of K-step samples to the held-out rows
         * @param energyPValue its p-value
         * @param maxKs the largest per-column Kolmogorov-Smirnov statistic
         * @param millisPer1000 milliseconds per 1,000 samples
         */
        public Row(int steps, double boundNatsPerDimension, double energyDistance, double energyPValue, double maxKs,
                   double millisPer1000) {
            this(steps, boundNatsPerDimension, energyDistance, energyPValue, maxKs, millisPer1000, false, 0.0);
        }
    }

    /** @return the rows as CSV with a header line */
    public String toCsv() {
        StringBuilder sb = new StringBuilder("steps,bound_nats_per_dim,energy_distance,energy_p_value,max_ks,"
                + "ms_per_1000_samples,samples_diverged,share_beyond_bound,recommended\n");
        for (Row r : rows) {
            sb.append(String.format(Locale.ROOT, "%d,%.6f,%s,%s,%s,%s,%b,%s,%b%n", r.steps(), r.boundNatsPerDimension(),
                    cell("%.6f", r.energyDistance()), cell("%.4f", r.energyPValue()), cell("%.4f", r.maxKs()),
                    cell("%.1f", r.millisPer1000()), r.samplesDiverged(), cell("%.4f", r.shareBeyond()),
                    r.steps() == recommended));
        }
        return sb.toString();
    }

    /** A CSV cell: the number, or empty where it is NaN. */
    private static String cell(String format, double v) {
        return Double.isNaN(v) ? "" : String.format(Locale.ROOT, format, v);
    }

    @Override
    public String toString() {
        StringBuilder sb = new StringBuilder();
        sb.append(String.format(Locale.ROOT, "%7s %14s %10s %8s %8s %12s%n", "steps", "bound nats/dim", "energy", "p", "max KS",
                "ms/1000"));
        for (Row r : rows) {
            sb.append(String.format(Locale.ROOT, "%7d %14.4f %10.4f %8.3f %8.3f %12.1f%s%s%n", r.steps(),
                    r.boundNatsPerDimension(), r.energyDistance(), r.energyPValue(), r.maxKs(), r.millisPer1000(),
                    r.samplesDiverged() ? String.format(Locale.ROOT, "  diverged (%s beyond the bound)",
                            Double.isNaN(r.shareBeyond()) ? "left the float range" : String.format(Locale.ROOT, "%.1f%%",
                                    100 * r.shareBeyond())) : "",
                    r.steps() == recommended ? "  <- recommended" : ""));
        }
        sb.append(reason).append('\n');
        return sb.toString();
    }
}
