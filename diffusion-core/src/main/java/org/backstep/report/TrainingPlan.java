package org.backstep.report;

import org.backstep.option.TrainingBudget;
import org.backstep.schedule.Require;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.stream.Collectors;

/**
 * The training planner's findings: for each number of diffusion steps T, a model fitted with that
 * T and every other option of the builder on the same {@link TrainingBudget}, and how it does on
 * held-out rows; and the recommended T.
 *
 * <p>The figures of a row, all in model space (continuous columns standardized by the training
 * rows, the same transform for every T since every model is fitted on the same rows):
 * <ul>
 *   <li>the held-out bound per dimension, b(T) = (1/(n D)) sum_i L(x_i), with L the negative
 *       variational bound of record x_i (Ho et al. 2020, eq. 5: L = L_T + sum_{t&gt;1} L_{t-1} + L_0),
 *       computed over all T terms with one draw of x_t per term and per record (the "exact" bound of
 *       {@code DiffusionModel.bound}); its standard error s / (sqrt(n) D), s the standard deviation of
 *       L(x_i) over the n held-out records (so it includes the draws' noise);</li>
 *   <li>the energy distance between n samples drawn through all T steps and the n held-out rows,
 *       with its permutation p-value (Szekely &amp; Rizzo 2004), and the largest per-column
 *       two-sample Kolmogorov-Smirnov statistic;</li>
 *   <li>the measured wall time to draw 1,000 samples through all T steps (ancestral sampling).</li>
 * </ul>
 *
 * <p>The rule: with b* the smallest bound among the models whose samples stayed finite, the
 * recommended T is the smallest such T with b(T) &lt;= b* + tolerance. A larger T is not free on
 * a fixed budget: each of its steps is learned from fewer updates, and sampling costs T network
 * evaluations per record.
 *
 * <p>Determinism: with an update budget the same seed and thread count give the same table except
 * the timing columns ({@link Row#trainingSeconds()}, {@link Row#millisPer1000()}); with a
 * wall-clock budget the number of updates, and so every figure, depends on the machine's speed and
 * load.
 *
 * <p>Caution: a bound per dimension compares models on the same rows; it is not a calibrated
 * probability of anything.
 *
 * @param budget the training budget each model had
 * @param tolerance the tolerance in nats per dimension, at least 0
 * @param rows one per T, in increasing T
 */
public record TrainingPlan(TrainingBudget budget, double tolerance, List<Row> rows) {

    /** Validates and copies the list. */
    public TrainingPlan {
        Require.notNull("budget", budget);
        Require.nonNegative("tolerance", tolerance);
        Require.notNull("rows", rows);
        Require.atLeast("number of rows", rows.size(), 1);
        for (int i = 0; i < rows.size(); i++) {
            Require.notNull("rows[" + i + "]", rows.get(i));
            if (i > 0 && rows.get(i).steps() <= rows.get(i - 1).steps()) {
                throw new IllegalArgumentException("rows[" + i + "] has T = " + rows.get(i).steps() + " after T = "
                        + rows.get(i - 1).steps() + "; expected rows in increasing T");
            }
        }
        rows = List.copyOf(rows);
    }

    /**
     * One model.
     *
     * @param steps T, at least 1
     * @param updates minibatch updates done, at least 0
     * @param epochs updates over minibatches per epoch
     * @param trainingSeconds wall time spent on updates (what a wall-clock budget counts)
     * @param boundNatsPerDimension b(T), the held-out bound in nats per dimension, model space
     * @param boundStandardError its standard error, nats per dimension
     * @param energyDistance the energy distance between samples and held-out rows (NaN if the samples diverged)
     * @param energyPValue its permutation p-value (NaN if the samples diverged)
     * @param maxKs the largest per-column Kolmogorov-Smirnov statistic (NaN if the samples diverged)
     * @param millisPer1000 milliseconds to draw 1,000 samples through all T steps (NaN if the samples diverged)
     * @param samplesDiverged whether the sampling chain left the float range (then the sample figures are NaN)
     * @param shareBeyond the share of its samples beyond the bound of {@link SampleCheck} (NaN if the chain
     *     left the float range); a model with such samples, or whose chain left the float range, is not
     *     recommended while another model is free of both
     */
    public record Row(int steps, long updates, double epochs, double trainingSeconds, double boundNatsPerDimension,
                      double boundStandardError, double energyDistance, double energyPValue, double maxKs,
                      double millisPer1000, boolean samplesDiverged, double shareBeyond) {

        /**
         * A row whose samples were not checked against the training range: none beyond it, or NaN
         * where the chain left the float range.
         */
        public Row(int steps, long updates, double epochs, double trainingSeconds, double boundNatsPerDimension,
                   double boundStandardError, double energyDistance, double energyPValue, double maxKs,
                   double millisPer1000, boolean samplesDiverged) {
            this(steps, updates, epochs, trainingSeconds, boundNatsPerDimension, boundStandardError, energyDistance,
                    energyPValue, maxKs, millisPer1000, samplesDiverged, samplesDiverged ? Double.NaN : 0.0);
        }

        /** @return whether some of its samples lay beyond the bound of {@link SampleCheck}: they diverge */
        public boolean samplesBeyondBound() {
            return shareBeyond > 0;
        }

        /** Validates: a NaN stands only in the sample figures of a diverged model. */
        public Row {
            Require.atLeast("steps", steps, 1);
            if (updates < 0) {
                throw new IllegalArgumentException("updates is " + updates + "; expected at least 0");
            }
            Require.nonNegative("epochs", epochs);
            Require.nonNegative("trainingSeconds", trainingSeconds);
            if (Double.isNaN(boundNatsPerDimension)) {
                throw new IllegalArgumentException("boundNatsPerDimension of T = " + steps + " is NaN; expected a number");
            }
            Require.nonNegative("boundStandardError", boundStandardError);
            if (!samplesDiverged) {
                Require.inClosed("shareBeyond", shareBeyond, 0.0, 1.0);
                Require.finite("energyDistance", energyDistance);
                Require.inClosed("energyPValue", energyPValue, 0.0, 1.0);
                Require.inClosed("maxKs", maxKs, 0.0, 1.0);
                Require.nonNegative("millisPer1000", millisPer1000);
            }
        }
    }

    /** @return the recommended T (see the class comment for the rule) */
    public int recommended() {
        return recommendedRow().steps();
    }

    /** @return the row of the recommended T */
    public Row recommendedRow() {
        List<Row> eligible = eligible();
        Row best = best(eligible);
        return eligible.stream().filter(r -> r.boundNatsPerDimension() <= best.boundNatsPerDimension() + tolerance)
                .findFirst().orElse(best);
    }

    /** @return one sentence saying why {@link #recommended()} was chosen */
    public String reason() {
        List<Row> eligible = eligible();
        boolean anyFinite = rows.stream().anyMatch(r -> !r.samplesDiverged());
        Row best = best(eligible);
        Row pick = recommendedRow();
        Row largest = eligible.get(eligible.size() - 1);
        StringBuilder sb = new StringBuilder();
        if (pick == best) {
            sb.append(String.format(Locale.ROOT, "T = %d has the best held-out bound, %.4f nats per dimension",
                    pick.steps(), pick.boundNatsPerDimension()));
            if (pick != eligible.get(0)) {
                sb.append(String.format(Locale.ROOT, ", and no smaller T comes within %.4f of it", tolerance));
            }
        } else {
            sb.append(String.format(Locale.ROOT,
                    "T = %d: its held-out bound, %.4f nats per dimension, is within %.4f of the best (%.4f at T = %d)",
                    pick.steps(), pick.boundNatsPerDimension(), tolerance, best.boundNatsPerDimension(), best.steps()));
        }
        if (anyFinite) {
            sb.append(String.format(Locale.ROOT, "; it draws 1,000 samples in %.0f ms", pick.millisPer1000()));
            if (largest != pick) {
                sb.append(String.format(Locale.ROOT, " against %.0f ms at T = %d", largest.millisPer1000(), largest.steps()));
            }
            List<Row> diverged = rows.stream().filter(r -> !eligible.contains(r)).toList();
            if (!diverged.isEmpty()) {
                sb.append("; passed over T = ").append(diverged.stream().map(r -> Integer.toString(r.steps()))
                        .collect(Collectors.joining(", "))).append(", whose sampling chains diverged");
            }
            if (eligible.stream().allMatch(Row::samplesBeyondBound)) {
                sb.append("; the samples of every model lay beyond the training range, so this rests on the bound alone");
            }
        } else {
            sb.append("; every model's sampling chain diverged, so this rests on the bound alone");
        }
        return sb.append('.').toString();
    }

    /**
     * The models a recommendation may pick: those whose samples neither left the float range nor
     * lay beyond the training range; if there are none, those whose samples stayed finite; if
     * there are none either, all.
     */
    private List<Row> eligible() {
        List<Row> finite = new ArrayList<>();
        List<Row> sound = new ArrayList<>();
        for (Row r : rows) {
            if (!r.samplesDiverged()) {
                finite.add(r);
                if (!r.samplesBeyondBound()) {
                    sound.add(r);
                }
            }
        }
        return !sound.isEmpty() ? sound : !finite.isEmpty() ? finite : rows;
    }

    private static Row best(List<Row> rows) {
        Row best = rows.get(0);
        for (Row r : rows) {
            if (r.boundNatsPerDimension() < best.boundNatsPerDimension()) {
                best = r;
            }
        }
        return best;
    }

    /** @return the rows as CSV with a header line; an empty cell where the samples diverged */
    public String toCsv() {
        int pick = recommended();
        StringBuilder sb = new StringBuilder("steps,updates,epochs,training_seconds,bound_nats_per_dim,"
                + "bound_standard_error,energy_distance,energy_p_value,max_ks,ms_per_1000_samples,samples_diverged,"
                + "share_beyond_bound,recommended\n");
        for (Row r : rows) {
            sb.append(String.format(Locale.ROOT, "%d,%d,%.2f,%.2f,%.6f,%.6f,%s,%s,%s,%s,%b,%s,%b%n", r.steps(), r.updates(),
                    r.epochs(), r.trainingSeconds(), r.boundNatsPerDimension(), r.boundStandardError(),
                    cell("%.6f", r.energyDistance()), cell("%.4f", r.energyPValue()), cell("%.4f", r.maxKs()),
                    cell("%.1f", r.millisPer1000()), r.samplesDiverged(), cell("%.4f", r.shareBeyond()),
                    r.steps() == pick));
        }
        return sb.toString();
    }

    private static String cell(String format, double v) {
        return Double.isNaN(v) ? "" : String.format(Locale.ROOT, format, v);
    }

    /** @return a text table with a header line, a row per T and the reason */
    @Override
    public String toString() {
        int pick = recommended();
        StringBuilder sb = new StringBuilder();
        sb.append(String.format(Locale.ROOT, "Budget per model: %s; tolerance %.4f nats per dimension%n", budget, tolerance));
        sb.append(String.format(Locale.ROOT, "%6s %8s %8s %8s %14s %8s %9s %6s %7s %9s%n", "T", "updates", "epochs",
                "train s", "bound nats/dim", "+/-", "energy", "p", "max KS", "ms/1000"));
        for (Row r : rows) {
            String quality = r.samplesDiverged()
                    ? String.format(Locale.ROOT, "%9s %6s %7s %9s", "diverged", "-", "-", "-")
                    : String.format(Locale.ROOT, "%9.4f %6.3f %7.3f %9.1f", r.energyDistance(), r.energyPValue(),
                            r.maxKs(), r.millisPer1000());
            sb.append(String.format(Locale.ROOT, "%6d %8d %8.1f %8.1f %14.4f %8.4f %s%s%s%n", r.steps(), r.updates(),
                    r.epochs(), r.trainingSeconds(), r.boundNatsPerDimension(), r.boundStandardError(), quality,
                    r.samplesBeyondBound() ? String.format(Locale.ROOT, "  %.1f%% of samples beyond the training range",
                            100 * r.shareBeyond()) : "",
                    r.steps() == pick ? "  <- recommended" : ""));
        }
        sb.append(reason()).append('\n');
        return sb.toString();
    }
}
