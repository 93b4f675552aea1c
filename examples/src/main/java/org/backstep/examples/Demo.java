package org.backstep.examples;

import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.TableFormatException;

import java.io.IOException;
import java.io.PrintStream;
import java.util.List;

/**
 * The README's main-job command: {@code examples/demo [options] [FILE.csv]}. Without a file it
 * generates invented refrigerated-container telemetry with injected faults and missing cells; with
 * a file it runs the same steps on that table. {@code examples/demo --help} lists the options.
 */
public final class Demo {

    static final Command COMMAND = new Command("demo", List.of("FILE.csv"), 0,
            "Runs the main job of Backstep: fit a diffusion model with a held-out split, report the held-out bound"
                    + " beside two baselines, screen records, impute, denoise, sample, plan the sampling step count,"
                    + " and write a report folder. Without FILE.csv it uses invented telemetry of refrigerated"
                    + " shipping containers (with injected faults and 5% missing cells; not measurements).",
            List.of(Option.BINARY, Option.MISSING, Option.OUT, Option.TRAIN_STEPS, Option.EPOCHS, Option.HIDDEN,
                    Option.SEED, Option.HOLDOUT, Option.SAMPLE_STEPS, Option.TOLERANCE, Option.CONTAINERS, Option.DAYS,
                    Option.NO_PROGRESS),
            Demo::execute);

    private Demo() {
    }

    /**
     * @param args see {@code examples/demo --help}
     */
    public static void main(String[] args) {
        COMMAND.main(args);
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
        return COMMAND.run(args, out, err);
    }

    private static void execute(Settings s, PrintStream out) throws IOException, TableFormatException {
        MainJob.Config config;
        if (s.file() == null) {
            Telemetry t = CommandTables.inventedFleet(s.containers, s.days, s.seed, out);
            config = MainJob.Config.of(FleetTables.cells(t), s).withTruth(FleetTables.truth(t), t.faultRows())
                    .withFaultKinds(FleetTables.faultKinds(t), FleetTables.faultColumns(t));
        } else {
            config = MainJob.Config.of(CommandTables.csv(s.file(), s.missing, s.binary, out), s);
        }
        MainJob.run(config, out, s.progress);
    }
}
