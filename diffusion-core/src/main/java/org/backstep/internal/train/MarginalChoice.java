package org.backstep.internal.train;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import java.util.function.BooleanSupplier;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.ModelParts;
import org.backstep.option.BoundOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.Marginals;
import org.backstep.table.Table;
import org.backstep.training.Provenance;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * A fit whose maps of the real continuous columns are chosen ({@link Marginals#CHOSEN}): the first
 * run's rows are prepared with the maps the cross-validated criterion prefers
 * ({@link org.backstep.table.MarginalCriterion}, in {@link TrainingRows}); when that is normal
 * scores and there are complete checkpoint rows, a second model is trained with standardized maps on
 * the same split and seed, and the model with the lower mean exact bound on the checkpoint rows (K draws per
 * term with the control variates at every step, a low-noise figure: see {@code BoundOptions}),
 * in the caller's units (each model's exact log-Jacobian included, so the two figures are densities
 * of the same records in the same units), is kept; the same draws serve both models (common random
 * numbers). Without checkpoint rows the criterion alone decides. Any other {@link Marginals} fits
 * once, as {@link Trainer#fit} does.
 *
 * <p>The listener hears both runs as one: in the first, the planned epochs, steps and time are
 * doubled; in the second, the first run's epochs and steps are added.
 */
public final class MarginalChoice {

    private static final Logger LOG = LoggerFactory.getLogger(MarginalChoice.class);
    /** Added to the fit's seed for the comparison's draws (any fixed constant). */
    private static final long COMPARISON_SEED = 0x3C6EF372FE94F82BL;

    private MarginalChoice() {
    }

    /**
     * Fits, choosing the maps when the options ask for it.
     *
     * @param options validated options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @param listener hears the progress of both runs as one
     * @param stop asked after every update whether to stop (a stop in the first run skips the second)
     * @param comparisonDraws the term draws of the exact bound with control variates that compares the
     *     two models ({@link BoundOptions#withTermDraws}, {@link BoundOptions#withLinearization})
     * @return the kept model's parts (its options those given) and the cost of both runs
     */
    public static Trainer.Fitted fit(FitOptions options, Table table, Table checkpointRows, TrainingListener listener,
                                     BooleanSupplier stop, int comparisonDraws) {
        if (options.marginals() != Marginals.CHOSEN) {
            return Trainer.fit(options, table, checkpointRows, listener, stop, null);
        }
        long started = System.nanoTime();
        Relay relay = new Relay(listener);
        Trainer.Fitted first;
        Table held;
        try (TrainingRun run = new TrainingRun(options, table, checkpointRows, null, relay, stop, null)) {
            held = run.checkpointTable();
            boolean compare = run.normalScores() && held != null;
            relay.first = compare;
            run.advance(Long.MAX_VALUE);
            first = run.finish();
            if (!compare) {
                return run.normalScores() ? withNotes(first, options, List.of("marginals CHOSEN: no complete checkpoint"
                        + " rows to compare the families on, so the criterion's choice (normal scores) was kept"),
                        Double.NaN) : first;
            }
        }
        if (stop.getAsBoolean()) {
            return withNotes(first, options, List.of("marginals CHOSEN: stopped on request before the standardized fit;"
                    + " normal scores kept"), Double.NaN);
        }
        relay.first = false;
        relay.epochOffset = first.parts().provenance().history().size();
        relay.stepOffset = first.updates();
        Trainer.Fitted second = Trainer.fit(options.withMarginals(Marginals.STANDARDIZED), table, checkpointRows, relay,
                stop, null);
        long compared = System.nanoTime();
        // uniform draws with the control variates at every step, not the allocated steady bound: the
        // allocation measures a profile of each model on 64 records of its own, which on 15 to 60
        // checkpoint rows costs ten times the scores themselves
        BoundOptions how = BoundOptions.exact().withTermDraws(comparisonDraws).withLinearization(true);
        long seed = options.seed() + COMPARISON_SEED;
        double scores = new Engine(first.parts()).bound(held, how, seed).meanNatsOriginalUnits();
        double standardized = new Engine(second.parts()).bound(held, how, seed).meanNatsOriginalUnits();
        boolean keepScores = scores < standardized;
        String note = String.format(java.util.Locale.ROOT, "marginals CHOSEN: exact bound (%d term draws, control variates) on the %d"
                + " complete checkpoint rows, nats per record in the caller's units: normal scores %.4f, standardized"
                + " %.4f (%.1f s); %s kept", comparisonDraws, held.rows(), scores, standardized,
                Trainer.seconds(compared), keepScores ? "normal scores" : "standardized");
        LOG.info(note);
        Trainer.Fitted kept = keepScores ? first : second;
        double seconds = Trainer.seconds(started);
        List<String> notes = new ArrayList<>();
        if (!keepScores) {
            // the criterion's figures, noted by the first run's rows, belong to the record of the choice
            for (String n : first.parts().provenance().notes()) {
                if (n.startsWith("marginals ")) {
                    notes.add(n);
                }
            }
        }
        notes.add(note);
        Trainer.Fitted out = withNotes(kept, options, notes, seconds);
        return new Trainer.Fitted(out.parts(), first.updates() + second.updates(), first.epochs() + second.epochs(),
                first.updateSeconds() + second.updateSeconds());
    }

    /** The fit with notes added to its provenance, its options those given, and (unless NaN) the training seconds. */
    private static Trainer.Fitted withNotes(Trainer.Fitted f, FitOptions options, List<String> more, double seconds) {
        ModelParts p = f.parts();
        Provenance nv = p.provenance().withMoreNotes(more, seconds);
        return new Trainer.Fitted(new ModelParts(options, p.transform(), p.network(), p.estimator(), nv, p.range(),
                p.whitening()), f.updates(), f.epochs(), f.updateSeconds());
    }

    /** Passes progress on, as one plan over two runs when {@link #first} or an offset is set. */
    private static final class Relay implements TrainingListener {
        private final TrainingListener to;
        /** True while the first of two runs trains. */
        boolean first;
        int epochOffset;
        long stepOffset;
        /** The first run's planned steps and epochs, from its first report (0 before it). */
        long plannedSteps;
        int plannedEpochs;
        /** Seconds per step of the first run, from its latest estimate of the time left. */
        double perStep;

        Relay(TrainingListener to) {
            this.to = to;
        }

        @Override
        public void onProgress(TrainingProgress p) {
            if (first) {
                if (plannedSteps == 0) {
                    plannedSteps = p.totalSteps();
                    plannedEpochs = p.epochs();
                }
                // the second run is planned as long as the first was; a first run that stopped early ends its
                // own part of the plan where it stopped (its last report's totals are its steps and epochs)
                to.onProgress(new TrainingProgress(p.epoch(), p.epochs() + plannedEpochs, p.step(),
                        p.totalSteps() + plannedSteps, p.loss(), p.checkpointBound(), p.rowsPerSecond(), secondRun(p)));
            } else if (stepOffset > 0) {
                to.onProgress(new TrainingProgress(p.epoch() + epochOffset, p.epochs() + epochOffset,
                        p.step() + stepOffset, p.totalSteps() + stepOffset, p.loss(), p.checkpointBound(),
                        p.rowsPerSecond(), p.secondsLeft()));
            } else {
                to.onProgress(p);
            }
        }

        /** Seconds left in the first run plus an estimate of the second (as long as the first was planned). */
        private double secondRun(TrainingProgress p) {
            if (p.step() == 0 || Double.isNaN(p.secondsLeft())) {
                return p.secondsLeft();
            }
            if (p.totalSteps() > p.step()) {
                perStep = p.secondsLeft() / (p.totalSteps() - p.step());
            }
            return p.secondsLeft() + perStep * plannedSteps;
        }
    }
}
