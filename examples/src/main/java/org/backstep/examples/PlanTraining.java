package org.backstep.examples;

import me.tongfei.progressbar.ConsoleProgressBarConsumer;
import me.tongfei.progressbar.ProgressBar;
import me.tongfei.progressbar.ProgressBarBuilder;
import me.tongfei.progressbar.ProgressBarStyle;
import org.backstep.Backstep;
import org.backstep.Defaults;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.io.AtomicFiles;
import org.backstep.option.TrainingBudget;
import org.backstep.plot.Charts;
import org.backstep.report.TrainingPlan;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/**
 * The training planner as one command: fits one model per number of diffusion steps T on the same
 * budget, on the invented reefer telemetry or a CSV file, prints the table and the recommended T,
 * and writes training-plan.csv and training-plan.png. See {@link #USAGE}.
 */
public final class PlanTraining {

    static final int[] DEFAULT_STEPS = {25, 50, 100, 200};
    static final double DEFAULT_SECONDS = 20.0;

    static final String USAGE = String.join("\n",
            "Usage: examples/plan-training [options] [FILE.csv]",
            "",
            "Trains one model per number of diffusion steps T, each on the same budget, and compares",
            "them on held-out rows: updates done, training time, held-out bound per dimension, sample",
            "quality and sampling cost; recommends the smallest T whose bound is within the tolerance",
            "of the best. Without FILE.csv it uses invented telemetry of refrigerated shipping",
            "containers (not measurements).",
            "",
            "Options:",
            "  --steps T,T,...         values of T to try, each at least 2 (default: 25,50,100,200)",
            "  --seconds S             wall-clock training budget per model (default: 20); the updates",
            "                          done depend on the machine's speed and load",
            "  --updates N             a fixed number of minibatch updates per model instead: the same",
            "                          table in every run, except the timing columns",
            "  --tolerance X           nats per dimension (default: 0.02)",
            "  --hidden W,W,...        hidden widths (default: 256,256,256)",
            "  --seed S                the seed (default: 1)",
            "  --holdout K             hold out rows whose 0-based index i has i % K == 0 (default: 5)",
            "  --binary COL[,COL...]   columns of FILE.csv that are binary (0/1); others are inferred",
            "  --missing TOKEN         the token of a missing cell in FILE.csv (default: empty cell)",
            "  --containers N          demo only: containers in the invented fleet (default: 24)",
            "  --days N                demo only: days of readings (default: 3)",
            "  --out DIR               where training-plan.csv and training-plan.png go (default: the",
            "                          current folder)",
            "  --no-progress           no progress bar",
            "  --help                  this text");

    private PlanTraining() {
    }

    /**
     * @param args see {@link #USAGE}
     */
    public static void main(String[] args) {
        int code = run(args, System.out, System.err);
        if (code != 0) {
            System.exit(code);
        }
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
        Options o;
        try {
            o = Options.parse(args);
        } catch (IllegalArgumentException e) {
            err.println("plan-training: " + e.getMessage());
            err.println("Run examples/plan-training --help for the options.");
            return 2;
        }
        if (o.help) {
            out.println(USAGE);
            return 0;
        }
        try {
            Table table;
            if (o.file == null) {
                table = FleetTables.cells(CommandTables.inventedFleet(o.containers, o.days, o.seed, out));
            } else {
                table = CommandTables.csv(o.file, o.missing, o.binary, out);
            }
            Table train = table.filterRows(i -> i % o.holdout != 0);
            Table held = table.filterRows(i -> i % o.holdout == 0);
            TrainingBudget budget = o.updates > 0 ? TrainingBudget.updates(o.updates)
                    : TrainingBudget.wallClock(Duration.ofMillis(Math.round(o.seconds * 1000)));
            int[] steps = o.steps.clone();
            Arrays.sort(steps);
            out.printf(Locale.ROOT, "%d training rows, %d held out (row %% %d == 0); T = %s, %s per model%n",
                    train.rows(), held.rows(), o.holdout, Arrays.toString(steps), budget);
            TrainingPlan plan;
            try (Progress progress = new Progress(o.progress, steps, budget)) {
                plan = Backstep.builder().hidden(o.hidden).seed(o.seed).listener(progress)
                        .planTraining(train, held, budget, o.tolerance, steps);
            }
            out.print(plan);
            out.println("A bound per dimension compares models on the same rows; it is not a calibrated probability.");
            Files.createDirectories(o.out);
            Path csv = o.out.resolve("training-plan.csv");
            Path png = o.out.resolve("training-plan.png");
            AtomicFiles.write(csv, plan.toCsv().getBytes(StandardCharsets.UTF_8));
            if (plan.rows().stream().allMatch(TrainingPlan.Row::samplesDiverged)) {
                out.println("Wrote " + csv + " (no chart: every model's sampling chain diverged)");
            } else {
                Charts.save(Charts.trainingPlan(plan), png);
                out.println("Wrote " + csv + " and " + png);
            }
            return 0;
        } catch (TableFormatException e) {
            err.println("plan-training: " + e.getMessage());
            return 1;
        } catch (NoSuchFileException e) {
            err.println("plan-training: no such file: " + e.getFile());
            return 1;
        } catch (IOException | IllegalArgumentException | IllegalStateException e) {
            err.println("plan-training: " + e.getMessage());
            return 1;
        }
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

    /** Parsed command-line options. */
    static final class Options {
        Path file;
        List<String> binary = List.of();
        String missing = "";
        Path out = Path.of(".");
        int[] steps = DEFAULT_STEPS.clone();
        double seconds = DEFAULT_SECONDS;
        int updates = 0;
        double tolerance = 0.02;
        int[] hidden = Defaults.HIDDEN.stream().mapToInt(Integer::intValue).toArray();
        long seed = Defaults.SEED;
        int holdout = 5;
        int containers = 24;
        int days = 3;
        boolean progress = true;
        boolean help;

        static Options parse(String[] args) {
            Options o = new Options();
            boolean secondsGiven = false;
            for (int i = 0; i < args.length; i++) {
                String a = args[i];
                switch (a) {
                    case "--help", "-h" -> o.help = true;
                    case "--no-progress" -> o.progress = false;
                    case "--steps" -> {
                        o.steps = Arguments.list(Arguments.value(args, ++i, a), a, 2);
                        int[] sorted = o.steps.clone();
                        Arrays.sort(sorted);
                        for (int k = 1; k < sorted.length; k++) {
                            if (sorted[k] == sorted[k - 1]) {
                                throw new IllegalArgumentException(a + " lists " + sorted[k] + " twice");
                            }
                        }
                    }
                    case "--seconds" -> {
                        o.seconds = Arguments.number(Arguments.value(args, ++i, a), a);
                        if (!(o.seconds > 0) || !Double.isFinite(o.seconds)) {
                            throw new IllegalArgumentException(a + " is " + args[i] + "; expected a number of seconds above 0");
                        }
                        secondsGiven = true;
                    }
                    case "--updates" -> o.updates = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--tolerance" -> {
                        o.tolerance = Arguments.number(Arguments.value(args, ++i, a), a);
                        if (!(o.tolerance >= 0) || !Double.isFinite(o.tolerance)) {
                            throw new IllegalArgumentException(a + " is " + args[i] + "; expected a number of at least 0");
                        }
                    }
                    case "--hidden" -> o.hidden = Arguments.list(Arguments.value(args, ++i, a), a, 1);
                    case "--seed" -> {
                        String v = Arguments.value(args, ++i, a);
                        try {
                            o.seed = Long.parseLong(v.trim());
                        } catch (NumberFormatException e) {
                            throw new IllegalArgumentException(a + " is '" + v + "'; expected a whole number");
                        }
                    }
                    case "--holdout" -> o.holdout = Arguments.whole(Arguments.value(args, ++i, a), a, 2);
                    case "--binary" -> o.binary = Arrays.asList(Arguments.value(args, ++i, a).split(","));
                    case "--missing" -> o.missing = Arguments.value(args, ++i, a);
                    case "--containers" -> o.containers = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--days" -> o.days = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--out" -> o.out = Path.of(Arguments.value(args, ++i, a));
                    default -> {
                        if (a.startsWith("-")) {
                            throw new IllegalArgumentException("unknown option " + a);
                        }
                        if (o.file != null) {
                            throw new IllegalArgumentException("more than one file given: " + o.file + " and " + a);
                        }
                        o.file = Path.of(a);
                        if (!Files.isRegularFile(o.file)) {
                            throw new IllegalArgumentException("no such file: " + a);
                        }
                    }
                }
            }
            if (secondsGiven && o.updates > 0) {
                throw new IllegalArgumentException("--seconds and --updates both given; choose one budget");
            }
            return o;
        }
    }
}
