package org.backstep.internal.train;

import org.backstep.internal.chain.ModelParts;
import org.backstep.option.FitOptions;
import org.backstep.option.TrainingBudget;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.TrainingListener;

import java.util.function.BooleanSupplier;

/**
 * The training engine's entry: fits in one go by a {@link TrainingRun}, whose rows come from
 * {@link TrainingRows}, steps from {@link StepSampler} and loss from {@link LossGradient}. It returns
 * the {@link ModelParts} that the front door builds the model from.
 */
public final class Trainer {

    private Trainer() {
    }

    /**
     * A fit's parts and what its training spent.
     *
     * @param parts the fitted model's parts
     * @param updates minibatch updates done
     * @param epochs updates over minibatches per epoch (the last epoch may be cut short)
     * @param updateSeconds wall time spent on updates, without the checkpoint evaluations
     */
    public record Fitted(ModelParts parts, long updates, double epochs, double updateSeconds) {
    }

    /**
     * Fits, for the options' epochs or to a budget, in one go.
     *
     * @param options validated options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @param listener hears the progress
     * @param stop asked after every update whether to stop
     * @param budget null to train for the options' epochs; otherwise a fixed number of updates or
     *     a wall-clock time of updates, which replaces the epochs (see {@link TrainingBudget})
     * @return the parts and the cost
     */
    public static Fitted fit(FitOptions options, Table table, Table checkpointRows, TrainingListener listener,
                             BooleanSupplier stop, TrainingBudget budget) {
        return fit(options, table, checkpointRows, null, listener, stop, budget);
    }

    /**
     * Fits as {@link #fit(FitOptions, Table, Table, TrainingListener, BooleanSupplier, TrainingBudget)},
     * with the given column transforms instead of transforms fitted on the table.
     *
     * @param transform the column transforms, with the table's names and kinds, or null to fit them
     * @return the parts and the cost
     */
    public static Fitted fit(FitOptions options, Table table, Table checkpointRows, TableTransform transform,
                             TrainingListener listener, BooleanSupplier stop, TrainingBudget budget) {
        try (TrainingRun run = new TrainingRun(options, table, checkpointRows, transform, listener, stop, budget)) {
            run.advance(Long.MAX_VALUE);
            return run.finish();
        }
    }

    /** Refuses {@code b} (called {@code name} in the message) unless its columns are those of {@code a}. */
    public static void checkSameLayout(Table a, Table b, String name) {
        TrainingRows.checkSameLayout(a, b, name);
    }

    static double seconds(long started) {
        return (System.nanoTime() - started) / 1e9;
    }
}
