package org.backstep.examples;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;

import org.backstep.Defaults;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.CsvReader;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;

/** Where the example commands get their table: invented reefer telemetry, or a user's CSV file. */
final class CommandTables {

    private CommandTables() {
    }

    /**
     * The share of faulty containers in the commands' invented fleet: one in six, so that the
     * default 24 containers carry 4 faults, one of each kind ({@link ReeferFleet} gives them in
     * turn); the generator's own default, 0.125, would give 3 and leave a kind out.
     */
    static final double FAULTY_SHARE = 1.0 / 6.0;

    /**
     * Invented telemetry of a fleet (seed {@link ReeferFleet#DEFAULT_SEED} + {@code seed}, faulty
     * share {@link #FAULTY_SHARE}), with a line on {@code out} saying that it is invented.
     */
    static Telemetry inventedFleet(int containers, int days, long seed, PrintStream out) {
        Telemetry t = ReeferFleet.generate(ReeferFleet.options().withContainers(containers).withDays(days)
                .withSeed(ReeferFleet.DEFAULT_SEED + seed).withFaultyShare(FAULTY_SHARE));
        out.printf(Locale.ROOT, "Invented reefer telemetry (for demonstration, not measurements): %d containers, %d days, %d rows%n",
                containers, days, t.rows());
        return t;
    }

    /** A CSV file with the given missing-cell token and binary columns, with a line on {@code out} saying its size. */
    static Table csv(Path file, String missing, List<String> binary, PrintStream out) throws IOException, TableFormatException {
        CsvReader reader = CsvTables.reader().missingToken(missing);
        if (!binary.isEmpty()) {
            reader = reader.binary(binary.toArray(String[]::new));
        }
        Table table = reader.read(file);
        out.printf(Locale.ROOT, "Table %s: %d rows x %d columns%n", file, table.rows(), table.columns());
        return table;
    }

    /**
     * One line on the user's split: the rows of the training part (the trainer keeps a share of them
     * back as its checkpoint rows) and the held-out rows, which no model trains on.
     */
    static String split(Table train, Table held, int holdout) {
        return String.format(Locale.ROOT, "%d rows in the training part (the trainer keeps %.0f%% of them back as checkpoint rows"
                        + " to choose its weights), %d held-out rows (row %% %d == 0, never trained on)",
                train.rows(), 100 * Defaults.CHECKPOINT_FRACTION, held.rows(), holdout);
    }
}
