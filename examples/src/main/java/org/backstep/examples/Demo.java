package org.backstep.examples;

import org.backstep.Defaults;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * The README's main-job command: {@code examples/demo [options] [FILE.csv]}. Without a file it
 * generates invented refrigerated-container telemetry with injected faults and missing cells; with
 * a file it runs the same steps on that table. See {@link #USAGE}.
 */
public final class Demo {

    static final String USAGE = String.join("\n",
            "Usage: examples/demo [options] [FILE.csv]",
            "",
            "Runs the main job of Backstep: fit a diffusion model with a held-out split, report the",
            "held-out bound beside two baselines, screen records, impute, denoise, sample, plan the",
            "step count, and write a report folder. Without FILE.csv it uses invented telemetry of",
            "refrigerated shipping containers (with injected faults and 5% missing cells).",
            "",
            "Options:",
            "  --binary COL[,COL...]   columns of FILE.csv that are binary (0/1); others are inferred",
            "  --missing TOKEN         the token of a missing cell in FILE.csv (default: empty cell)",
            "  --out DIR               the report folder (default: backstep-report)",
            "  --steps T               diffusion steps (default: " + Defaults.STEPS + ")",
            "  --epochs N              training epochs (default: about " + Defaults.TRAINING_STEPS + " minibatch steps)",
            "  --hidden W,W,...        hidden widths (default: 256,256,256)",
            "  --seed S                the seed (default: 1)",
            "  --holdout K             hold out rows whose 0-based index i has i % K == 0 (default: 5)",
            "  --containers N          demo only: containers in the invented fleet (default: 24)",
            "  --days N                demo only: days of readings (default: 3)",
            "  --no-progress           no progress bar",
            "  --help                  this text");

    private Demo() {
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
     * @param out where figures go
     * @param err where errors go
     * @return 0 on success, 2 for bad arguments, 1 for a failure
     */
    public static int run(String[] args, PrintStream out, PrintStream err) {
        Options o;
        try {
            o = Options.parse(args);
        } catch (IllegalArgumentException e) {
            err.println("backstep demo: " + e.getMessage());
            err.println("Run examples/demo --help for the options.");
            return 2;
        }
        if (o.help) {
            out.println(USAGE);
            return 0;
        }
        try {
            MainJob.Config config;
            if (o.file == null) {
                Telemetry t = CommandTables.inventedFleet(o.containers, o.days, o.seed, out);
                config = new MainJob.Config(FleetTables.cells(t), FleetTables.truth(t), t.faultRows(), o.out, o.steps,
                        o.epochs, o.hidden, o.seed, o.holdout, null);
            } else {
                Table table = CommandTables.csv(o.file, o.missing, o.binary, out);
                config = new MainJob.Config(table, null, null, o.out, o.steps, o.epochs, o.hidden, o.seed, o.holdout, null);
            }
            MainJob.run(config, out, o.progress);
            return 0;
        } catch (TableFormatException e) {
            err.println("backstep demo: " + e.getMessage());
            return 1;
        } catch (NoSuchFileException e) {
            err.println("backstep demo: no such file: " + e.getFile());
            return 1;
        } catch (IOException | IllegalArgumentException | IllegalStateException e) {
            err.println("backstep demo: " + e.getMessage());
            return 1;
        }
    }

    /** Parsed command-line options. */
    static final class Options {
        Path file;
        List<String> binary = new ArrayList<>();
        String missing = "";
        Path out = Path.of("backstep-report");
        int steps = Defaults.STEPS;
        int epochs = 0;
        int[] hidden = Defaults.HIDDEN.stream().mapToInt(Integer::intValue).toArray();
        long seed = Defaults.SEED;
        int holdout = 5;
        int containers = 24;
        int days = 3;
        boolean progress = true;
        boolean help;

        static Options parse(String[] args) {
            Options o = new Options();
            for (int i = 0; i < args.length; i++) {
                String a = args[i];
                switch (a) {
                    case "--help", "-h" -> o.help = true;
                    case "--no-progress" -> o.progress = false;
                    case "--binary" -> o.binary = Arrays.asList(Arguments.value(args, ++i, a).split(","));
                    case "--missing" -> o.missing = Arguments.value(args, ++i, a);
                    case "--out" -> o.out = Path.of(Arguments.value(args, ++i, a));
                    case "--steps" -> o.steps = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--epochs" -> o.epochs = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--seed" -> o.seed = Arguments.seed(Arguments.value(args, ++i, a), a);
                    case "--holdout" -> o.holdout = Arguments.whole(Arguments.value(args, ++i, a), a, 2);
                    case "--containers" -> o.containers = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--days" -> o.days = Arguments.whole(Arguments.value(args, ++i, a), a, 1);
                    case "--hidden" -> {
                        String[] parts = Arguments.value(args, ++i, a).split(",");
                        o.hidden = new int[parts.length];
                        for (int k = 0; k < parts.length; k++) {
                            o.hidden[k] = Arguments.whole(parts[k], a, 1);
                        }
                    }
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
            return o;
        }
    }
}
