package org.backstep.report;

import java.util.List;
import java.util.Locale;

/**
 * The step-count planner's findings: for each candidate step count K (a strided sub-schedule of
 * the training schedule, Nichol &amp; Dhariwal 2021, section 4), the held-out bound of the K-step
 * chain, the quality of its samples, and the measured cost; and the recommended K, the smallest
 * whose held-out bound lies within the tolerance of the best.
 *
 * @param rows one per step count, in increasing K
 * @param tolerance the tolerance in nats per dimension
 * @param recommended the recommended step count
 * @param reason one sentence saying why
 */
public record StepPlan(List<Row> rows, double tolerance, int recommended, String reason) {

    /** Copies the list. */
    public StepPlan {
        rows = List.copyOf(rows);
    }

    /**
     * One candidate step count.
     *
     * @param steps K
     * @param boundNatsPerDimension the exact held-out bound of the K-step chain, nats per dimension (model space)
     * @param energyDistance the energy distance between K-step samples and held-out rows (model space)
     * @param energyPValue its permutation p-value (Szekely &amp; Rizzo 2004)
     * @param maxKs the largest per-column two-sample Kolmogorov-Smirnov statistic
     * @param millisPer1000 measured wall time to draw 1,000 samples, milliseconds
     */
    public record Row(int steps, double boundNatsPerDimension, double energyDistance, double energyPValue,
                      double maxKs, double millisPer1000) {
    }

    /** @return the rows as CSV with a header line */
    public String toCsv() {
        StringBuilder sb = new StringBuilder("steps,bound_nats_per_dim,energy_distance,energy_p_value,max_ks,ms_per_1000_samples,recommended\n");
        for (Row r : rows) {
            sb.append(String.format(Locale.ROOT, "%d,%.6f,%.6f,%.4f,%.4f,%.1f,%b%n", r.steps(), r.boundNatsPerDimension(),
                    r.energyDistance(), r.energyPValue(), r.maxKs(), r.millisPer1000(), r.steps() == recommended));
        }
        return sb.toString();
    }

    @Override
    public String toString() {
        StringBuilder sb = new StringBuilder();
        sb.append(String.format(Locale.ROOT, "%7s %14s %10s %8s %8s %12s%n", "steps", "bound nats/dim", "energy", "p", "max KS",
                "ms/1000"));
        for (Row r : rows) {
            sb.append(String.format(Locale.ROOT, "%7d %14.4f %10.4f %8.3f %8.3f %12.1f%s%n", r.steps(),
                    r.boundNatsPerDimension(), r.energyDistance(), r.energyPValue(), r.maxKs(), r.millisPer1000(),
                    r.steps() == recommended ? "  <- recommended" : ""));
        }
        sb.append(reason).append('\n');
        return sb.toString();
    }
}
