package org.backstep.examples;

import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.TableFormatException;

import org.backstep.table.ColumnKind;
import org.backstep.table.CsvReader;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * The README's main-job command: {@code examples/demo [options] [FILE.csv]}. Without a file it
 * generates invented refrigerated-container telemetry with injected faults and missing cells; with
 * a file it runs the same steps on that table. Either way every result is written row by row into the
 * report folder ({@link ResultFiles}); {@code --noise} adds the denoised readings of named columns,
 * {@code --compare} a drift test against a second file. {@code examples/demo --help} lists the options.
 */
public final class Demo {

    static final Command COMMAND = new Command("demo", List.of("FILE.csv"), 0,
            "Runs the main job of Backstep: fit a diffusion model with a held-out split, report the held-out bound"
                    + " beside two baselines, screen records, impute, denoise, sample, plan the sampling step count,"
                    + " and write a report folder with every result row by row (completed.csv, synthetic.csv,"
                    + " scores.csv; denoised.csv with --noise, drift.csv with --compare). Without FILE.csv it uses invented telemetry of refrigerated"
                    + " shipping containers (with injected faults and 5% missing cells; not measurements).",
            List.of(Option.BINARY, Option.CATEGORICAL, Option.INTEGER, Option.MISSING, Option.OUT, Option.TRAIN_STEPS, Option.EPOCHS, Option.HIDDEN,
                    Option.SEED, Option.HOLDOUT, Option.SAMPLE_STEPS, Option.TOLERANCE, Option.NOISE, Option.COMPARE,
                    Option.CONTAINERS, Option.DAYS, Option.NO_PROGRESS),
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
        // what is printed before the options are checked against the table waits, so that a bad option prints nothing else
        ByteArrayOutputStream early = new ByteArrayOutputStream();
        PrintStream pre = new PrintStream(early, true, StandardCharsets.UTF_8);
        MainJob.Config config;
        if (s.file() == null) {
            Telemetry t = CommandTables.inventedFleet(s.containers, s.days, s.seed, pre);
            config = MainJob.Config.of(FleetTables.cells(t), s).withTruth(FleetTables.truth(t), t.faultRows())
                    .withFaultKinds(FleetTables.faultKinds(t), FleetTables.faultColumns(t));
        } else {
            CsvReader.TableWithLines read = CommandTables.csv(s.file(), s.missing, s.binary, s.categorical, s.integer, pre);
            config = MainJob.Config.of(read.table(), s).withLines(read.lines());
        }
        checkNoise(config.table(), s.noise);
        if (s.compare != null) {
            config = config.withCompare(batch(config.table(), s.compare, s.missing), s.compare.getFileName().toString());
        }
        out.write(early.toByteArray());
        MainJob.run(config, out, s.progress);
    }

    /**
     * --noise against the table: each named column must be one of its continuous columns.
     *
     * @throws Command.UsageError naming the option and the column
     */
    static void checkNoise(Table table, Map<String, Double> noise) {
        for (String column : noise.keySet()) {
            int j = table.names().indexOf(column);
            if (j < 0) {
                throw new Command.UsageError("--noise names column '" + column + "', which the table does not have (its columns: "
                        + String.join(", ", table.names()) + ")");
            }
            if (table.kind(j) == ColumnKind.BINARY) {
                throw new Command.UsageError("--noise names column '" + column + "', which is binary (0/1); noise is removed from"
                        + " continuous columns only");
            }
            if (table.kind(j) != ColumnKind.CONTINUOUS) {
                throw new Command.UsageError("--noise names column '" + column + "', which is " + table.kind(j).name()
                        .toLowerCase(java.util.Locale.ROOT) + "; noise is removed from continuous columns only");
            }
        }
    }

    /**
     * The batch of --compare, read with the table's missing-cell token and its columns' kinds, its
     * columns put in the table's order (others are ignored).
     *
     * @throws Command.UsageError naming the option and what is wrong with the file
     */
    static Table batch(Table table, Path file, String missing) throws IOException {
        Table batch;
        try {
            batch = CsvTables.reader().missingToken(missing)
                    .binary(MainJob.namesOf(table, ColumnKind.BINARY).toArray(String[]::new))
                    .categorical(MainJob.namesOf(table, ColumnKind.CATEGORICAL).toArray(String[]::new))
                    .integer(MainJob.namesOf(table, ColumnKind.INTEGER).toArray(String[]::new))
                    .continuous(MainJob.namesOf(table, ColumnKind.CONTINUOUS).toArray(String[]::new)).allowEmptyColumns(true)
                    .read(file);
        } catch (TableFormatException e) {
            throw new Command.UsageError("--compare " + file + " cannot be read with the table's columns ("
                    + String.join(", ", table.names()) + "): " + e.getMessage());
        }
        if (batch.rows() < 2) {
            throw new Command.UsageError("--compare " + file + " has " + batch.rows() + " row; expected at least 2");
        }
        return batch.selectColumns(table.names().toArray(String[]::new));
    }
}
