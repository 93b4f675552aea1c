package org.backstep.internal.plan;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.Parallel;
import org.backstep.internal.train.Trainer;
import org.backstep.internal.train.TrainingRun;
import org.backstep.option.BoundOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.option.TrainingBudget;
import org.backstep.report.TrainingPlan;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;
import org.backstep.report.BoundReport;
import org.backstep.report.CheckedSample;
import org.backstep.report.SampleCheck;
import org.backstep.report.StepPlan;

import org.backstep.quality.EnergyTest;
import org.backstep.quality.SampleQuality;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.CancellationException;
import java.util.function.BooleanSupplier;

import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Evaluates step counts on held-out rows: the strided chains of one fitted model for sampling
 * ({@link StepPlan}), and models fitted with different T on one budget ({@link TrainingPlan}).
 */
public final class StepPlanner {

    private static final Logger LOG = LoggerFactory.getLogger(StepPlanner.class);

    /** Rows drawn per candidate for the sample-quality statistics (and held-out rows used, at most). */
    static final int QUALITY_ROWS = 1000;
    /** Permutations of the energy test. */
    static final int PERMUTATIONS = 199;

    private StepPlanner() {
    }

    public static StepPlan plan(Engine model, Table heldOut, double tolerance, long seed, int[] counts) {
        int[] ks = counts.clone();
        Arrays.sort(ks);
        for (int i = 0; i < ks.length; i++) {
            if (ks[i] < 1 || ks[i] > model.steps()) {
                throw new IllegalArgumentException("step count " + ks[i] + " is outside 1.." + model.steps());
            }
            if (i > 0 && ks[i] == ks[i - 1]) {
                throw new IllegalArgumentException("step count " + ks[i] + " is listed twice");
            }
        }
        Table held = qualityRows(heldOut);
        double[][] heldModel = model.transform().toModelSpace(held);
        double[][] heldOneHot = oneHot(model, heldModel);
        List<StepPlan.Row> rows = new ArrayList<>();
        warmUp(model, held.rows(), SamplingPlan.ancestral(ks[0]), seed);
        for (int k : ks) {
            BoundReport bound = model.bound(held, BoundOptions.exactStrided(k), seed);
            double perDimension = bound.meanNats() / bound.dimensions();
            Quality q;
            try {
                q = Quality.measure(model, held.rows(), heldModel, heldOneHot, SamplingPlan.ancestral(k), seed + k, seed);
            } catch (IllegalStateException e) {     // the chain left the float range (ReverseRun)
                LOG.info("step plan: the sampling chain of {} steps diverged: {}", k, e.getMessage());
                rows.add(new StepPlan.Row(k, perDimension, Double.NaN, Double.NaN, Double.NaN, Double.NaN, true, Double.NaN));
                continue;
            }
            rows.add(new StepPlan.Row(k, perDimension, q.energyDistance(), q.pValue(), q.maxKs(), q.millisPer1000(),
                    q.check().diverged(), q.check().shareBeyond()));
        }
        List<StepPlan.Row> usable = rows.stream().filter(r -> !r.samplesDiverged()).toList();
        List<StepPlan.Row> candidates = usable.isEmpty() ? rows : usable;
        StepPlan.Row best = candidates.stream().min((a, b) -> Double.compare(a.boundNatsPerDimension(), b.boundNatsPerDimension()))
                .orElseThrow();
        StepPlan.Row pick = candidates.stream().filter(r -> r.boundNatsPerDimension() <= best.boundNatsPerDimension() + tolerance)
                .findFirst().orElse(best);
        StepPlan.Row largest = rows.get(rows.size() - 1);
        String reason = String.format(Locale.ROOT,
                "%d steps: its held-out bound, %.4f nats per dimension, is within %.4f of the best (%.4f at %d steps), "
                        + "and it draws 1,000 samples in %.0f ms against %.0f ms at %d steps.",
                pick.steps(), pick.boundNatsPerDimension(), tolerance, best.boundNatsPerDimension(), best.steps(),
                pick.millisPer1000(), largest.millisPer1000(), largest.steps());
        if (usable.isEmpty()) {
            reason += " The samples of every step count diverged, so this rests on the bound alone.";
        } else if (usable.size() < rows.size()) {
            reason += " Passed over " + rows.stream().filter(StepPlan.Row::samplesDiverged)
                    .map(r -> Integer.toString(r.steps())).collect(java.util.stream.Collectors.joining(", "))
                    + " steps, whose samples diverged.";
        }
        return new StepPlan(rows, tolerance, pick.steps(), reason);
    }

    /**
     * Fits one model per entry of {@code perSteps} (validated options, in increasing T) on the
     * budget and evaluates each on the held-out rows; see {@link TrainingPlan}.
     */
    public static TrainingPlan planTraining(List<FitOptions> perSteps, Table training, Table heldOut,
                                            TrainingBudget budget, int rounds, double tolerance,
                                            TrainingListener listener, BooleanSupplier stop) {
        Table held = qualityRows(heldOut.completeRows());
        int models = perSteps.size();
        long perModel = budget.wallClock().map(java.time.Duration::toNanos).orElseGet(() -> (long) budget.updates().orElseThrow());
        List<TrainingRun> runs = new ArrayList<>();
        List<Trainer.Fitted> fitted = new ArrayList<>();
        try {
            TrainingListener relay = p -> listener.onProgress(planProgress(p, runs, budget, models));
            for (FitOptions options : perSteps) {
                runs.add(new TrainingRun(options, training, null, relay, stop, budget));
            }
            for (int round = 1; round <= rounds; round++) {
                long until = round == rounds ? Long.MAX_VALUE : perModel / rounds * round;
                for (int i = 0; i < models; i++) {
                    TrainingRun run = runs.get((i + round - 1) % models);
                    run.advance(until);
                    if (stop.getAsBoolean()) {
                        throw new CancellationException("the training plan was stopped on request in round " + round
                                + " of " + rounds + " (its models train in turns, each 1/" + rounds + " of its budget per round)");
                    }
                }
            }
            for (TrainingRun run : runs) {
                fitted.add(run.finish());
            }
        } finally {
            runs.forEach(TrainingRun::close);
        }
        warmUp(new Engine(fitted.get(0).parts()), held.rows(), SamplingPlan.ancestral(), perSteps.get(0).seed());
        List<TrainingPlan.Row> rows = new ArrayList<>();
        for (Trainer.Fitted f : fitted) {
            rows.add(evaluate(f, held, f.parts().options().seed()));
            LOG.info("training plan: T = {} done ({} updates in {} s)", f.parts().options().steps(), f.updates(), f.updateSeconds());
        }
        return new TrainingPlan(budget, tolerance, rows);
    }

    /**
     * The whole plan's progress, from one model's: step and totalSteps count the updates of every
     * model together (a model that stopped early counts the updates it made, so that the plan ends
     * when the last model ends), secondsLeft the plan's training time left; the other fields are the
     * reporting model's.
     */
    private static TrainingProgress planProgress(TrainingProgress p, List<TrainingRun> runs, TrainingBudget budget,
                                                 int models) {
        long updates = 0;
        long nanos = 0;
        int stopped = 0;
        long stoppedUpdates = 0;
        long stoppedNanos = 0;
        for (TrainingRun r : runs) {
            updates += r.updates();
            nanos += r.updateNanos();
            if (r.stoppedEarly()) {
                stopped++;
                stoppedUpdates += r.updates();
                stoppedNanos += r.updateNanos();
            }
        }
        if (budget.isDeterministic()) {
            long total = (long) budget.updates().orElseThrow() * (models - stopped) + stoppedUpdates;
            double left = updates == 0 ? Double.NaN : nanos / 1e9 * (total - updates) / updates;
            return new TrainingProgress(p.epoch(), p.epochs(), updates, total, p.loss(), p.checkpointBound(),
                    p.rowsPerSecond(), Math.max(0.0, left));
        }
        long totalNanos = budget.wallClock().orElseThrow().toNanos() * (models - stopped) + stoppedNanos;
        long estimated = Math.max(updates, Math.round(updates * (double) totalNanos / Math.max(1L, nanos)));
        return new TrainingProgress(p.epoch(), p.epochs(), updates, estimated, p.loss(), p.checkpointBound(),
                p.rowsPerSecond(), Math.max(0.0, (totalNanos - nanos) / 1e9));
    }

    private static TrainingPlan.Row evaluate(Trainer.Fitted fitted, Table held, long seed) {
        Engine model = new Engine(fitted.parts());
        int t = model.steps();
        BoundReport bound = model.bound(held, BoundOptions.exact(), seed);
        double d = bound.dimensions();
        double perDimension = bound.meanNats() / d;
        double standardError = bound.standardErrorOfMean() / d;
        Quality q;
        try {
            double[][] heldModel = model.transform().toModelSpace(held);
            q = Quality.measure(model, held.rows(), heldModel, oneHot(model, heldModel), SamplingPlan.ancestral(), seed + t, seed);
        } catch (IllegalStateException e) {     // the chain left the float range (ReverseRun)
            LOG.info("training plan: the sampling chain of T = {} diverged: {}", t, e.getMessage());
            return new TrainingPlan.Row(t, fitted.updates(), fitted.epochs(), fitted.updateSeconds(), perDimension,
                    standardError, Double.NaN, Double.NaN, Double.NaN, Double.NaN, true);
        }
        return new TrainingPlan.Row(t, fitted.updates(), fitted.epochs(), fitted.updateSeconds(), perDimension,
                standardError, q.energyDistance(), q.pValue(), q.maxKs(), q.millisPer1000(), false, q.check().shareBeyond());
    }

    /** Model-space rows with their categorical columns one-hot, as the energy test sees them. */
    private static double[][] oneHot(Engine model, double[][] modelRows) {
        int[] categories = model.transform().modelledCategories();
        return SampleQuality.oneHot(modelRows, modelRows[0].length - categories.length, categories);
    }

    /** At most {@link #QUALITY_ROWS} rows of {@code table}, spread evenly over it. */
    private static Table qualityRows(Table table) {
        return table.rows() > QUALITY_ROWS ? table.selectRows(evenlySpaced(QUALITY_ROWS, table.rows())) : table;
    }

    /**
     * An untimed sampling run of at most one chunk of rows: without it the first timed run pays for
     * compiling the sampler (measured: up to 1.6x slower in a fresh JVM).
     */
    private static void warmUp(Engine model, int rows, SamplingPlan plan, long seed) {
        try {
            model.sample(Math.min(rows, Parallel.CHUNK_ROWS), plan, seed);
        } catch (IllegalStateException e) {
            LOG.debug("warm-up sampling diverged: {}", e.getMessage());
        }
    }

    /**
     * The quality and cost of {@code rows} samples drawn with a plan: the energy distance to the
     * held-out rows with its permutation p-value (Szekely &amp; Rizzo 2004; categorical columns
     * one-hot), the largest per-column two-sample Kolmogorov-Smirnov statistic (for a categorical
     * column the total variation distance of its category shares, {@link SampleQuality#columnDistances}),
     * and the wall time per 1,000 samples.
     */
    private record Quality(double energyDistance, double pValue, double maxKs, double millisPer1000, SampleCheck check) {

        /**
         * Draws and scores the samples, with their check against the training range; throws
         * IllegalStateException if the chain leaves the float range.
         */
        static Quality measure(Engine model, int rows, double[][] heldModel, double[][] heldOneHot, SamplingPlan plan,
                               long sampleSeed, long testSeed) {
            long start = System.nanoTime();
            CheckedSample drawn = model.sampleChecked(rows, plan, sampleSeed);
            double millis = (System.nanoTime() - start) / 1e6 * 1000.0 / rows;
            Table samples = drawn.table();
            double[][] sampleModel = model.transform().toModelSpace(samples);
            // categorical columns: one-hot for the energy test, total variation for the column figure
            // (a category index's order is arbitrary); numbers as they are
            int[] categories = model.transform().modelledCategories();
            int numeric = sampleModel[0].length - categories.length;
            EnergyTest energy = EnergyTest.run(oneHot(model, sampleModel), heldOneHot, PERMUTATIONS, testSeed);
            double maxKs = Arrays.stream(SampleQuality.columnDistances(sampleModel, heldModel, numeric, categories))
                    .max().orElse(0.0);
            return new Quality(energy.energyDistance(), energy.pValue(), maxKs, millis, drawn.check());
        }
    }

    /** n row indices spread evenly over 0..total-1, so that a table sorted by time or unit is not cut to its start. */
    public static int[] evenlySpaced(int n, int total) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = (int) ((long) i * total / n);
        }
        return r;
    }
}
