package org.backstep.table;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.OutputStreamWriter;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVPrinter;
import org.apache.commons.csv.QuoteMode;
import org.backstep.io.AtomicFiles;
import org.backstep.schedule.Require;

/**
 * Immutable options for writing a {@link Table} as UTF-8 CSV, with the methods that write; start
 * from {@link CsvTables#writer()}. The header holds the column names; continuous cells are written
 * by {@link Double#toString(double)} (they read back bit for bit), binary cells as {@code 0} or
 * {@code 1}, categorical cells as their labels, missing cells as the missing token; fields are quoted only where CSV needs it (RFC 4180,
 * section 2); records end with {@code '\n'}. The kinds are not written: read the file back with the
 * same declarations, or let the reader infer them.
 */
public final class CsvWriter {

    static final CsvWriter DEFAULT = new CsvWriter("", ',');

    private final String missingToken;
    private final char delimiter;

    private CsvWriter(String missingToken, char delimiter) {
        this.missingToken = missingToken;
        this.delimiter = delimiter;
    }

    /**
     * @param token the text written for a missing cell; default {@code ""}
     * @return new options with this token
     * @throws IllegalArgumentException if null, padded with white space, or a number (it would read
     *     back as a value)
     */
    public CsvWriter missingToken(String token) {
        CsvTables.checkToken(token);
        if (CsvTables.isDecimal(token)) {
            throw new IllegalArgumentException("missingToken is '" + token
                    + "'; expected text that is not a number, so that it reads back as missing");
        }
        return new CsvWriter(token, delimiter);
    }

    /**
     * @param separator the cell separator; default {@code ','}
     * @return new options
     * @throws IllegalArgumentException as {@link CsvReader#delimiter(char)}
     */
    public CsvWriter delimiter(char separator) {
        return new CsvWriter(missingToken, CsvTables.checkDelimiter(separator));
    }

    /** @return the missing-value token */
    public String missingToken() {
        return missingToken;
    }

    /** @return the cell separator */
    public char delimiter() {
        return delimiter;
    }

    /**
     * Writes the table to a file atomically: the text goes to a new temporary file in the same
     * folder, is flushed and forced to the storage device ({@link FileChannel#force(boolean)}), and
     * then moved over {@code file} in one step ({@link StandardCopyOption#ATOMIC_MOVE}). Readers see
     * the old file or the new one, never a mixture. If anything fails, the old file is untouched and
     * the temporary file is removed.
     *
     * @param table the table (not modified)
     * @param file the target file; created or replaced
     * @throws IOException if writing or the move fails, or {@code file} is a folder
     */
    public void write(Table table, Path file) throws IOException {
        Require.notNull("table", table);
        writeAtomically(file, out -> write(table, out));
    }

    /**
     * Writes the table as CSV text and flushes; the writer is not closed.
     *
     * @param table the table (not modified)
     * @param out the destination
     * @throws IOException if writing fails
     */
    public void write(Table table, java.io.Writer out) throws IOException {
        Require.notNull("table", table);
        Require.notNull("out", out);
        CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(delimiter).setRecordSeparator('\n')
                .setQuoteMode(QuoteMode.MINIMAL).get();
        @SuppressWarnings("resource") // closing would close the caller's writer
        CSVPrinter printer = new CSVPrinter(out, format);
        for (int c : table.categoricalColumns()) {
            if (table.categories(c).contains(missingToken)) {
                throw new IllegalArgumentException("column '" + table.name(c) + "' has the category '" + missingToken
                        + "', the writer's missing token; expected another missing token, so that it reads back as a label");
            }
        }
        printer.printRecord(table.names());
        int columns = table.columns();
        boolean[] isBinary = new boolean[columns];
        for (int c : table.binaryColumns()) {
            isBinary[c] = true;
        }
        String[] cells = new String[columns];
        for (int r = 0; r < table.rows(); r++) {
            for (int c = 0; c < columns; c++) {
                double v = table.get(r, c);
                cells[c] = Double.isNaN(v) ? missingToken : isBinary[c] ? (v == 1.0 ? "1" : "0")
                        : table.kind(c) == ColumnKind.CATEGORICAL ? table.label(r, c)
                        : table.kind(c) == ColumnKind.INTEGER ? Long.toString((long) v) : Double.toString(v);
            }
            printer.printRecord((Object[]) cells);
        }
        printer.flush();
    }

    /** Text written into a file by {@link #writeAtomically(Path, TextBody)}. */
    @FunctionalInterface
    interface TextBody {
        void writeTo(java.io.Writer out) throws IOException;
    }

    /**
     * Replaces {@code target} by the UTF-8 text of {@code body} atomically through
     * {@link AtomicFiles}: on failure the old file is untouched and the temporary file is gone.
     */
    static void writeAtomically(Path target, TextBody body) throws IOException {
        Require.notNull("file", target);
        AtomicFiles.write(target, out -> {
            java.io.Writer w = new BufferedWriter(new OutputStreamWriter(out, StandardCharsets.UTF_8));
            body.writeTo(w);
            w.flush();
        });
    }

    @Override
    public String toString() {
        return "CsvWriter[missingToken=" + CsvTables.quote(missingToken) + ", delimiter="
                + CsvTables.quote(String.valueOf(delimiter)) + "]";
    }
}
