package org.backstep.examples;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;

import org.backstep.Defaults;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.ColumnKind;
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

    /**
     * A CSV file with the given missing-cell token and declared binary, categorical and integer
     * columns, with a line on {@code out} saying its size and a note per column of labels or of whole
     * numbers. Inference: a column holding any text that is not a number (and not the missing token)
     * is read as categorical even when undeclared, since it could not be read otherwise, with a note
     * naming it; a column of whole numbers stays continuous unless declared integer (a measurement
     * rounded to whole units is not a count), with a note suggesting {@code --integer}. The file is
     * read once, keeping the line each row starts on (its header is read again only when the reader
     * refuses the file, to name the option of a declared column the header lacks).
     *
     * @return the table, and per row the line of the file it starts on
     * @throws Command.UsageError naming the option when a declared column is not in the file's header
     */
    static CsvReader.TableWithLines csv(Path file, String missing, List<String> binary, List<String> categorical,
                                        List<String> integer, PrintStream out) throws IOException, TableFormatException {
        CsvReader reader = CsvTables.reader().missingToken(missing).inferCategories(true);
        if (!binary.isEmpty()) {
            reader = reader.binary(binary.toArray(String[]::new));
        }
        if (!categorical.isEmpty()) {
            reader = reader.categorical(categorical.toArray(String[]::new));
        }
        if (!integer.isEmpty()) {
            reader = reader.integer(integer.toArray(String[]::new));
        }
        CsvReader.TableWithLines read;
        try {
            read = reader.readWithLines(file);
        } catch (TableFormatException e) {
            List<String> header = header(file);
            check("--binary", binary, header);
            check("--categorical", categorical, header);
            check("--integer", integer, header);
            throw e;
        }
        Table table = read.table();
        out.printf(Locale.ROOT, "Table %s: %d rows x %d columns%n", file, table.rows(), table.columns());
        for (int j = 0; j < table.columns(); j++) {
            String name = table.name(j);
            if (table.kind(j) == ColumnKind.CATEGORICAL) {
                out.printf(Locale.ROOT, "   column '%s': categorical, %d labels %s%s%n", name, table.categories(j).size(),
                        preview(table.categories(j)), categorical.contains(name) ? ""
                                : " (it holds text, so it is read as categorical; say so with --categorical " + name + ")");
            } else if (table.kind(j) == ColumnKind.INTEGER) {
                out.printf(Locale.ROOT, "   column '%s': integer (whole numbers; samples and imputations are whole numbers)%n", name);
            } else if (table.kind(j) == ColumnKind.CONTINUOUS && wholeNumbers(table, j)) {
                out.printf(Locale.ROOT, "   column '%s' holds only whole numbers but is read as continuous; for counts or codes"
                        + " declare it with --integer %s%n", name, name);
            }
        }
        return read;
    }

    /** The names in the header line of a CSV file (comma-separated, quoting as RFC 4180). */
    static List<String> header(Path file) throws IOException {
        try (java.io.Reader r = java.nio.file.Files.newBufferedReader(file, java.nio.charset.StandardCharsets.UTF_8);
             org.apache.commons.csv.CSVParser p = org.apache.commons.csv.CSVFormat.RFC4180.parse(r)) {
            java.util.Iterator<org.apache.commons.csv.CSVRecord> it = p.iterator();
            if (!it.hasNext()) {
                return List.of();
            }
            List<String> names = new java.util.ArrayList<>();
            for (String cell : it.next()) {
                names.add(cell.replace("\uFEFF", "").strip());
            }
            return names;
        } catch (java.io.UncheckedIOException e) {
            throw e.getCause();
        }
    }

    private static void check(String option, List<String> columns, List<String> header) {
        for (String column : columns) {
            if (!header.contains(column)) {
                throw new Command.UsageError(option + " names column '" + column + "', which the file does not have (its columns: "
                        + String.join(", ", header) + ")");
            }
        }
    }

    /** Whether every cell of a column present is a whole number, and some cell is neither 0 nor 1. */
    private static boolean wholeNumbers(Table table, int j) {
        boolean beyondBinary = false;
        int present = 0;
        for (int r = 0; r < table.rows(); r++) {
            double v = table.get(r, j);
            if (Double.isNaN(v)) {
                continue;
            }
            present++;
            if (v != Math.rint(v)) {
                return false;
            }
            beyondBinary |= v != 0 && v != 1;
        }
        return present > 0 && beyondBinary;
    }

    /** The first labels, with a count of the rest. */
    static String preview(List<String> labels) {
        int shown = Math.min(labels.size(), 6);
        return "(" + String.join(", ", labels.subList(0, shown)) + (labels.size() > shown ? ", ... " + (labels.size() - shown)
                + " more" : "") + ")";
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
