package org.backstep.examples;

import org.backstep.Defaults;
import org.backstep.DiffusionModel;

import java.nio.file.Path;
import java.util.Arrays;
import java.util.function.BiConsumer;

/**
 * Every option of the example commands, each defined once: its name, its value, its help text and
 * what it sets in {@link Settings}. A command lists the options it accepts ({@link Command}); an
 * option that two commands accept means the same there, and its help reads the same.
 *
 * <p>Words used with one meaning only: T is the number of diffusion steps of the <em>training</em>
 * chain ({@code --train-steps}); K a number of steps of a strided <em>sampling</em> chain
 * ({@code --sample-steps}); the held-out rows are the rows the user's split keeps back
 * ({@code --holdout}, or the HELD_OUT.csv of plan-steps), never the trainer's own checkpoint rows.
 */
enum Option {

    TRAIN_STEPS("--train-steps", "T", "T, the diffusion steps of the training chain (default: " + Defaults.STEPS + ")",
            (s, v) -> s.trainSteps = Parse.whole(v, "--train-steps", 2)),
    TRAIN_STEPS_LIST("--train-steps", "T,T,...", "T, the diffusion steps of the training chain: the values to compare, one"
            + " model per T, each on the same budget (default: " + join(Settings.PLANNED_TRAIN_STEPS) + ")",
            (s, v) -> s.trainStepsList = Parse.distinct(Parse.list(v, "--train-steps", 2), "--train-steps")),
    SAMPLE_STEPS("--sample-steps", "K,K,...", "K, the steps of a strided sampling chain: the values the step-count planner"
            + " compares, each in 1..T (default: " + join(Defaults.PLANNER_STEP_COUNTS) + " and T, those below T)",
            (s, v) -> s.sampleSteps = Parse.distinct(Parse.list(v, "--sample-steps", 1), "--sample-steps")),
    TOLERANCE("--tolerance", "X", "how far above the best bound, in nats per dimension, a planner's cheaper choice may lie"
            + " (default: " + plain(Settings.TOLERANCE) + ")",
            (s, v) -> s.tolerance = Parse.nonNegative(v, "--tolerance")),
    EPOCHS("--epochs", "N", "training epochs (default: about " + Defaults.TRAINING_STEPS + " minibatch updates)",
            (s, v) -> s.epochs = Parse.whole(v, "--epochs", 1)),
    SECONDS("--seconds", "S", "wall-clock training budget per model (default: " + plain(Settings.PLANNED_SECONDS) + "); the updates done"
            + " depend on the machine's speed and load",
            (s, v) -> {
                s.seconds = Parse.positive(v, "--seconds");
                s.secondsGiven = true;
            }),
    UPDATES("--updates", "N", "a fixed number of minibatch updates per model instead of --seconds: the same results in"
            + " every run, except the timings",
            (s, v) -> s.updates = Parse.whole(v, "--updates", 1)),
    HIDDEN("--hidden", "W,W,...", "hidden widths of the network (default: " + join(Defaults.HIDDEN) + ")",
            (s, v) -> s.hidden = Parse.list(v, "--hidden", 1)),
    SEED("--seed", "S", "the seed of every random draw: the network's start, the samples, the invented data (default: " + Defaults.SEED + ")",
            (s, v) -> s.seed = Parse.seed(v, "--seed")),
    HOLDOUT("--holdout", "K", "the held-out rows, kept back from training and used to judge the model: those whose"
            + " 0-based index i has i % K == 0 (default: " + Settings.HOLDOUT + ")",
            (s, v) -> s.holdout = Parse.whole(v, "--holdout", 2)),
    BINARY("--binary", "COL[,COL...]", "columns of FILE.csv that are binary (0/1); others are inferred",
            (s, v) -> s.binary = Arrays.asList(v.split(","))),
    CATEGORICAL("--categorical", "COL[,COL...]", "columns of FILE.csv holding labels (a site, a mode, an alarm code), one"
            + " category per distinct label; a column holding any text that is not a number is categorical anyway, with a note",
            (s, v) -> s.categorical = Parse.names(v, "--categorical")),
    INTEGER("--integer", "COL[,COL...]", "columns of FILE.csv holding whole numbers (counts, ordinal codes): their samples and"
            + " imputations are whole numbers and their part of a score is a probability; other columns of whole numbers stay"
            + " continuous, with a note",
            (s, v) -> s.integer = Parse.names(v, "--integer")),
    MISSING("--missing", "TOKEN", "the token of a missing cell in the CSV file (default: an empty cell)",
            (s, v) -> s.missing = v),
    NOISE("--noise", "COL=SD[,COL=SD...]", "the sensor noise of continuous columns: a standard deviation above 0 in the"
            + " column's own units; the job then writes denoised.csv, those columns of each complete row cleaned of that"
            + " noise (default: none)",
            (s, v) -> s.noise = Parse.noise(v, "--noise")),
    COMPARE("--compare", "BATCH.csv", "a new batch with the columns of the table, compared with the table's held-out rows"
            + " for drift; the job writes drift.csv (default: none)",
            (s, v) -> s.compare = Parse.existingFile(v, "--compare")),
    CONTAINERS("--containers", "N", "without FILE.csv: containers in the invented fleet (default: " + Settings.CONTAINERS + ")",
            (s, v) -> s.containers = Parse.whole(v, "--containers", 1)),
    DAYS("--days", "N", "without FILE.csv: days of readings in the invented fleet (default: " + Settings.DAYS + ")",
            (s, v) -> s.days = Parse.whole(v, "--days", 1)),
    OUT("--out", "DIR", "the folder the command writes its files into (default: " + Settings.OUT + ")",
            (s, v) -> s.out = Path.of(v)),
    NO_PROGRESS("--no-progress", null, "no progress bar", (s, v) -> s.progress = false),
    HELP("--help", null, "this text", (s, v) -> s.help = true);

    final String name;
    /** The value's placeholder, or null for a flag. */
    final String value;
    final String help;
    private final BiConsumer<Settings, String> apply;

    Option(String name, String value, String help, BiConsumer<Settings, String> apply) {
        this.name = name;
        this.value = value;
        this.help = help;
        this.apply = apply;
    }

    /** Sets this option's value (null for a flag) in {@code settings}; throws IllegalArgumentException naming the option. */
    void apply(Settings settings, String v) {
        apply.accept(settings, v);
    }

    private static String plain(double value) {
        return new java.math.BigDecimal(Double.toString(value)).stripTrailingZeros().toPlainString();
    }

    private static String join(java.util.List<Integer> values) {
        return String.join(",", values.stream().map(String::valueOf).toList());
    }

    private static String join(int[] values) {
        return String.join(",", Arrays.stream(values).mapToObj(Integer::toString).toList());
    }

    /** Reading option values, with messages that name the option, its value and what was expected. */
    static final class Parse {

        private Parse() {
        }

        static double number(String v, String option) {
            try {
                double x = Double.parseDouble(v.trim());
                if (!Double.isFinite(x)) {
                    throw new NumberFormatException();
                }
                return x;
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException(option + " is '" + v + "'; expected a number");
            }
        }

        static double nonNegative(String v, String option) {
            double x = number(v, option);
            if (x < 0) {
                throw new IllegalArgumentException(option + " is " + v + "; expected a number of at least 0");
            }
            return x;
        }

        static double positive(String v, String option) {
            double x = number(v, option);
            if (x <= 0) {
                throw new IllegalArgumentException(option + " is " + v + "; expected a number above 0");
            }
            return x;
        }

        static int whole(String v, String option, int min) {
            int n;
            try {
                n = Integer.parseInt(v.trim());
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException(option + " is '" + v + "'; expected a whole number of at least " + min);
            }
            if (n < min) {
                throw new IllegalArgumentException(option + " is " + v + "; expected a whole number of at least " + min);
            }
            return n;
        }

        static long seed(String v, String option) {
            try {
                return Long.parseLong(v.trim());
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException(option + " is '" + v + "'; expected a whole number");
            }
        }

        /** A comma-separated list of whole numbers, each at least {@code min}. */
        static int[] list(String v, String option, int min) {
            String[] parts = v.split(",", -1);
            int[] r = new int[parts.length];
            for (int k = 0; k < parts.length; k++) {
                r[k] = whole(parts[k], option, min);
            }
            return r;
        }

        /**
         * "COL=SD[,COL=SD...]": column names with a standard deviation above 0 each, in the order given;
         * a column listed twice, a pair without "=", or a bad number is refused naming the column.
         */
        static java.util.Map<String, Double> noise(String v, String option) {
            java.util.Map<String, Double> out = new java.util.LinkedHashMap<>();
            for (String pair : v.split(",", -1)) {
                int eq = pair.lastIndexOf('=');
                if (eq <= 0 || pair.substring(0, eq).isBlank()) {
                    throw new IllegalArgumentException(option + " has '" + pair + "'; expected COL=SD, e.g. temperature=0.2");
                }
                String column = pair.substring(0, eq).strip();
                double sd = positive(pair.substring(eq + 1), option + " of column '" + column + "'");
                if (out.put(column, sd) != null) {
                    throw new IllegalArgumentException(option + " lists column '" + column + "' twice");
                }
            }
            return out;
        }

        /** A comma-separated list of column names, none blank, none twice. */
        static java.util.List<String> names(String v, String option) {
            java.util.List<String> out = new java.util.ArrayList<>();
            for (String part : v.split(",", -1)) {
                String name = part.strip();
                if (name.isEmpty()) {
                    throw new IllegalArgumentException(option + " is '" + v + "'; expected column names separated by commas");
                }
                if (out.contains(name)) {
                    throw new IllegalArgumentException(option + " lists column '" + name + "' twice");
                }
                out.add(name);
            }
            return java.util.List.copyOf(out);
        }

        /** A path to a regular file that exists. */
        static Path existingFile(String v, String option) {
            Path p = Path.of(v);
            if (!java.nio.file.Files.isRegularFile(p)) {
                throw new IllegalArgumentException(option + " names no such file: " + v);
            }
            return p;
        }

        /** The values, refused when one is listed twice. */
        static int[] distinct(int[] values, String option) {
            int[] sorted = values.clone();
            Arrays.sort(sorted);
            for (int k = 1; k < sorted.length; k++) {
                if (sorted[k] == sorted[k - 1]) {
                    throw new IllegalArgumentException(option + " lists " + sorted[k] + " twice");
                }
            }
            return values;
        }
    }
}
