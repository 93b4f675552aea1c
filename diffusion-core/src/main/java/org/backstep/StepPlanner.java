package org.backstep;

import org.backstep.option.FitOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.option.TrainingBudget;
import org.backstep.report.TrainingPlan;
import org.backstep.training.TrainingListener;
import org.backstep.report.BoundReport;
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
final class StepPlanner {

    private static final Logger LOG = LoggerFactory.getLogger(StepPlanner.class);

    /**
     * Updates of an untimed fit before the first timed one of a wall-clock plan, so that the first
     * T does not pay for the JIT compiler's and the native libraries' start-up (our choice).
     */
    static final int WARM_UP_UPDATES = 30;

    /** Rows drawn per candidate for the sample-quality statistics (and held-out rows used, at most). */
    static final int QUALITY_ROWS = 1000;
    /** Permutations of the energy test. */
    static final int PERMUTATIONS = 199;

    private StepPlanner() {
    }

    static StepPlan plan(DiffusionModel model, Table heldOut, double tolerance, long seed, int[] counts) {
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
        Table held = heldOut.rows() > QUALITY_ROWS ? heldOut.selectRows(evenlySpaced(QUALITY_ROWS, heldOut.rows())) : heldOut;
        double[][] heldModel = model.transform().toModelSpace(held);
        List<StepPlan.Row> rows = new ArrayList<>();
        for (int k : ks) {
            BoundReport bound = model.bound(held, k, seed);
            long start = System.nanoTime();
            Table samples = model.sample(held.rows(), SamplingPlan.ancestral(k), seed + k);
            double millis = (System.nanoTime() - start) / 1e6 * 1000.0 / held.rows();
            double[][] sampleModel = model.transform().toModelSpace(samples);
            EnergyTest energy = EnergyTest.run(sampleModel, heldModel, PERMUTATIONS, seed);
            double maxKs = Arrays.stream(SampleQuality.kolmogorovSmirnov(sampleModel, heldModel)).max().orElse(0.0);
            rows.add(new StepPlan.Row(k, bound.meanNats() / bound.dimensions(), energy.energyDistance(),
                    energy.pValue(), maxKs, millis));
        }
        StepPlan.Row best = rows.stream().min((a, b) -> Double.compare(a.boundNatsPerDimension(), b.boundNatsPerDimension()))
                .orElseThrow();
        StepPlan.Row pick = rows.stream().filter(r -> r.boundNatsPerDimension() <= best.boundNatsPerDimension() + tolerance)
                .findFirst().orElse(best);
        StepPlan.Row largest = rows.get(rows.size() - 1);
        String reason = String.format(Locale.ROOT,
                "%d steps: its held-out bound, %.4f nats per dimension, is within %.4f of the best (%.4f at %d steps), "
                        + "and it draws 1,000 samples in %.0f ms against %.0f ms at %d steps.",
                pick.steps(), pick.boundNatsPerDimension(), tolerance, best.boundNatsPerDimension(), best.steps(),
                pick.millisPer1000(), largest.millisPer1000(), largest.steps());
        return new StepPlan(rows, tolerance, pick.steps(), reason);
    }

    /**
     * Fits one model per entry of {@code perSteps} (validated options, in increasing T) on the
     * budget and evaluates each on the held-out rows; see {@link TrainingPlan}.
     */
    static TrainingPlan planTraining(List<FitOptions> perSteps, Table training, Table heldOut, TrainingBudget budget,
                                     double tolerance, TrainingListener listener, BooleanSupplier stop) {
        Table complete = heldOut.completeRows();
        Table held = complete.rows() > QUALITY_ROWS ? complete.selectRows(evenlySpaced(QUALITY_ROWS, complete.rows())) : complete;
        if (!budget.isDeterministic()) {
            Trainer.run(perSteps.get(0), training, null, TrainingListener.NONE, stop, TrainingBudget.updates(WARM_UP_UPDATES));
        }
        List<TrainingPlan.Row> rows = new ArrayList<>();
        for (FitOptions options : perSteps) {
            int t = options.steps();
            if (stop.getAsBoolean()) {
                throw new CancellationException("the training plan was stopped on request before T = " + t
                        + ", after " + rows.size() + " of " + perSteps.size() + " models");
            }
            Trainer.Fitted fitted = Trainer.run(options, training, null, listener, stop, budget);
            if (stop.getAsBoolean()) {
                throw new CancellationException("the training plan was stopped on request while training T = " + t
                        + ", after " + rows.size() + " of " + perSteps.size() + " models");
            }
            rows.add(evaluate(fitted, held, options.seed()));
            LOG.info("training plan: T = {} done ({} updates in {} s)", t, fitted.updates(), fitted.updateSeconds());
        }
        return new TrainingPlan(budget, tolerance, rows);
    }

    private static TrainingPlan.Row evaluate(Trainer.Fitted fitted, Table held, long seed) {
        DiffusionModel model = fitted.model();
        int t = model.steps();
        BoundReport bound = model.bound(held, seed);
        double d = bound.dimensions();
        double perDimension = bound.meanNats() / d;
        double standardError = bound.standardErrorOfMean() / d;
        Table samples;
        long start = System.nanoTime();
        try {
            samples = model.sample(held.rows(), SamplingPlan.ancestral(), seed + t);
        } catch (IllegalStateException e) {     // the chain left the float range (ReverseRun)
            LOG.info("training plan: the sampling chain of T = {} diverged: {}", t, e.getMessage());
            return new TrainingPlan.Row(t, fitted.updates(), fitted.epochs(), fitted.updateSeconds(), perDimension,
                    standardError, Double.NaN, Double.NaN, Double.NaN, Double.NaN, true);
        }
        double millis = (System.nanoTime() - start) / 1e6 * 1000.0 / held.rows();
        double[][] heldModel = model.transform().toModelSpace(held);
        double[][] sampleModel = model.transform().toModelSpace(samples);
        EnergyTest energy = EnergyTest.run(sampleModel, heldModel, PERMUTATIONS, seed);
        double maxKs = Arrays.stream(SampleQuality.kolmogorovSmirnov(sampleModel, heldModel)).max().orElse(0.0);
        return new TrainingPlan.Row(t, fitted.updates(), fitted.epochs(), fitted.updateSeconds(), perDimension,
                standardError, energy.energyDistance(), energy.pValue(), maxKs, millis, false);
    }

    /** n row indices spread evenly over 0..total-1, so that a table sorted by time or unit is not cut to its start. */
    static int[] evenlySpaced(int n, int total) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = (int) ((long) i * total / n);
        }
        return r;
    }
}
