package org.backstep.examples;

import me.tongfei.progressbar.ConsoleProgressBarConsumer;
import me.tongfei.progressbar.ProgressBar;
import me.tongfei.progressbar.ProgressBarBuilder;
import me.tongfei.progressbar.ProgressBarStyle;
import org.backstep.Backstep;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.option.TrainingBudget;
import org.backstep.report.TrainingPlan;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;

import java.io.IOException;
import java.io.PrintStream;
import java.time.Duration;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/**
 * The training planner as one command: fits one model per number of diffusion steps T on the same
 * budget, on the invented reefer telemetry or a CSV file, prints the table and the recommended T,
 * and writes training-plan.csv and training-plan.png. {@code examples/plan-training --help} lists
 * the options.
 */
public final class PlanTraining {

    static final Command COMMAND = new Command("plan-training", List.of("FILE.csv"), 0,
            "Trains one model per number of diffusion steps T, each on the same budget, and compares them on the"
                    + " held-out rows: updates done, training time, held-out bound per dimension, sample quality and"
                    + " sampling cost; recommends the smallest T whose bound is within the tolerance of the best."
                    + " Writes training-plan.csv and training-plan.png. Without FILE.csv it uses invented telemetry of"
                    + " refrigerated shipping containers (not measurements).",
            List.of(Option.TRAIN_STEPS_LIST, Option.SECONDS, Option.UPDATES, Option.TOLERANCE, Option.HIDDEN, Option.SEED,
                    Option.HOLDOUT, Option.BINARY, Option.CATEGORICAL, Option.INTEGER, Option.MISSING, Option.CONTAINERS, Option.DAYS, Option.OUT,
                    Option.NO_PROGRESS),
            PlanTraining::execute);

    private PlanTraining() {
    }

    /**
     * @param args see {@code examples/plan-training --help}
     */
    public static void main(String[] args) {
        COMMAND.main(args);
    }

    /**
     * Runs the command; returns the exit code instead of exiting.
     *
     * @param args the arguments
     * @param out where the table goes
     * @param err where errors go
     * @return 0 on success, 2 for bad arguments, 1 for a failure
     */
    static int run(String[] args, PrintStream out, PrintStream err) {
        return COMMAND.run(args, out, err);
    }

    private static void execute(Settings s, PrintStream out) throws IOException, TableFormatException {
        Table table = s.file() == null ? FleetTables.cells(CommandTables.inventedFleet(s.containers, s.days, s.seed, out))
                : CommandTables.csv(s.file(), s.missing, s.binary, s.categorical, s.integer, out).table();
        Table train = table.filterRows(i -> i % s.holdout != 0);
        Table held = table.filterRows(i -> i % s.holdout == 0);
        TrainingBudget budget = s.updates > 0 ? TrainingBudget.updates(s.updates)
                : TrainingBudget.wallClock(Duration.ofMillis(Math.round(s.seconds * 1000)));
        int[] steps = s.trainStepsList.clone();
        Arrays.sort(steps);
        out.printf(Locale.ROOT, "%s; T = %s, %s per model%n", CommandTables.split(train, held, s.holdout),
                Arrays.toString(steps), budget);
        TrainingPlan plan;
        try (Progress progress = new Progress(s.progress, steps, budget)) {
            plan = Backstep.builder().hidden(s.hidden).seed(s.seed).listener(progress)
                    .planTraining(train, held, budget, s.tolerance, steps);
        }
        out.print(plan);
        out.println("A bound per dimension compares models on the same rows; it is not a calibrated probability.");
        PlanFiles.writeTrainingPlan(plan, s.out, out);
    }

    /**
     * One bar over the whole plan. The library trains the models in turns and reports the whole
     * plan's progress: the updates of all models together, and the training time left.
     */
    private static final class Progress implements TrainingListener, AutoCloseable {
        private static final int SCALE = 1000;
        private final ProgressBar bar;
        private final int models;
        private final double totalSeconds;

        Progress(boolean show, int[] steps, TrainingBudget budget) {
            this.models = steps.length;
            this.totalSeconds = budget.wallClock().map(d -> d.toNanos() / 1e9 * steps.length).orElse(0.0);
            this.bar = show ? new ProgressBarBuilder().setTaskName("Training").setInitialMax(SCALE)
                    .setStyle(ProgressBarStyle.ASCII).setConsumer(new ConsoleProgressBarConsumer(System.err))
                    .setUpdateIntervalMillis(250).build() : null;
        }

        @Override
        public void onProgress(TrainingProgress p) {
            if (bar == null) {
                return;
            }
            double share = totalSeconds > 0 ? 1.0 - p.secondsLeft() / totalSeconds
                    : p.step() / (double) Math.max(1, p.totalSteps());
            bar.stepTo(Math.round(SCALE * Math.min(1.0, Math.max(0.0, share))));
            bar.setExtraMessage(String.format(Locale.ROOT, " %d models, %d updates, loss %.2f", models,
                    p.step(), p.loss()));
        }

        @Override
        public void close() {
            if (bar != null) {
                bar.close();
            }
        }
    }
}
