package org.backstep.table;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.Iterator;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVParser;
import org.apache.commons.csv.CSVPrinter;
import org.apache.commons.csv.CSVRecord;
import org.apache.commons.csv.QuoteMode;
import org.backstep.schedule.Require;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Reads and writes {@link Table}s as CSV text (RFC 4180 quoting, through Apache Commons CSV): one
 * header row of column names, then one record per row, UTF-8.
 *
 * <pre>
 *   Table t = CsvTables.reader().missingToken("NA").binary("door_open").read(path);
 *   CsvTables.writer().write(t, path);
 * </pre>
 *
 * <p>Both option objects are immutable; each wither returns a new object. Written numbers read back
 * bit for bit: continuous cells are written by {@link Double#toString(double)}, whose text parses
 * back to the same double (Java SE API specification of {@code Double.toString} and
 * {@code Double.parseDouble}), binary cells as {@code 0} or {@code 1}, missing cells as the missing
 * token.
 */
public final class CsvTables {

    private static final Logger LOG = LoggerFactory.getLogger(CsvTables.class);

    /** A decimal number as the reader accepts it: optional sign, digits with an optional point, optional exponent. */
    static final Pattern NUMBER = Pattern.compile("[+-]?(\\d+(\\.\\d*)?|\\.\\d+)([eE][+-]?\\d+)?");

    /** Text for a non-finite number, refused by the reader. */
    static final Pattern NON_FINITE = Pattern.compile("[+-]?(nan|inf|infinity)", Pattern.CASE_INSENSITIVE);

    /** The longest cell text quoted in a problem message. */
    static final int QUOTED_CELL_LENGTH = 40;

    private CsvTables() {
    }

    /**
     * The reader with its defaults: missing token {@code ""} (an empty cell), kinds inferred, no forced
     * kinds, delimiter {@code ','}.
     *
     * @return the default reader options
     */
    public static Reader reader() {
        return Reader.DEFAULT;
    }

    /**
     * The writer with its defaults: missing token {@code ""} (an empty cell), delimiter {@code ','}.
     *
     * @return the default writer options
     */
    public static Writer writer() {
        return Writer.DEFAULT;
    }

    /**
     * Immutable options for reading CSV into a {@link Table}, with the method that reads.
     *
     * <p>A cell, stripped of surrounding white space, is <b>missing</b> when it equals the missing
     * token; otherwise it must be a finite decimal number matching
     * {@code [+-]?(d+(.d*)?|.d+)([eE][+-]?d+)?}. A column's kind is, in order: BINARY if named in
     * {@link #binary(String...)}; CONTINUOUS if named in {@link #continuous(String...)}; with
     * {@link #inferKinds(boolean) inferKinds} on, BINARY when every non-missing cell is 0 or 1 and
     * there is at least one, else CONTINUOUS (so a column with every cell missing is CONTINUOUS); with
     * it off, CONTINUOUS.
     *
     * <p>Reading is all or nothing: every problem of the source is collected, each with its 1-based
     * line and column name (text in a numeric column, NaN or Infinity text or an overflowing number, a
     * value other than 0 or 1 in a column declared binary, a row with too few or too many cells, a
     * blank or repeated header name, a declared column the header lacks, broken CSV quoting), and then
     * a {@link TableFormatException} is thrown; no partial table is ever returned. Empty lines are
     * skipped. A UTF-8 byte order mark before the header is ignored.
     */
    public static final class Reader {

        static final Reader DEFAULT = new Reader("", Set.of(), Set.of(), true, ',');

        private final String missingToken;
        private final Set<String> binary;
        private final Set<String> continuous;
        private final boolean inferKinds;
        private final char delimiter;

        private Reader(String missingToken, Set<String> binary, Set<String> continuous, boolean inferKinds,
                char delimiter) {
            this.missingToken = missingToken;
            this.binary = binary;
            this.continuous = continuous;
            this.inferKinds = inferKinds;
            this.delimiter = delimiter;
        }

        /**
         * @param token the text of a missing cell; default {@code ""}; may be a number such as
         *     {@code "-999"}, which is then read as missing
         * @return new options with this token
         * @throws IllegalArgumentException if null or with leading or trailing white space
         */
        public Reader missingToken(String token) {
            return new Reader(checkToken(token), binary, continuous, inferKinds, delimiter);
        }

        /**
         * Declares columns binary whatever their values; a value other than 0, 1 or missing in them is
         * a problem. Replaces any earlier declaration of binary columns; default none.
         *
         * @param columns column names (not modified)
         * @return new options
         * @throws IllegalArgumentException if a name is null or also declared continuous
         */
        public Reader binary(String... columns) {
            Set<String> set = nameSet("binary columns", columns);
            checkDisjoint(set, continuous, "continuous");
            return new Reader(missingToken, set, continuous, inferKinds, delimiter);
        }

        /**
         * Declares columns continuous whatever their values. Replaces any earlier declaration of
         * continuous columns; default none.
         *
         * @param columns column names (not modified)
         * @return new options
         * @throws IllegalArgumentException if a name is null or also declared binary
         */
        public Reader continuous(String... columns) {
            Set<String> set = nameSet("continuous columns", columns);
            checkDisjoint(set, binary, "binary");
            return new Reader(missingToken, binary, set, inferKinds, delimiter);
        }

        /**
         * @param infer whether undeclared columns holding only 0 and 1 become BINARY; default true
         * @return new options
         */
        public Reader inferKinds(boolean infer) {
            return new Reader(missingToken, binary, continuous, infer, delimiter);
        }

        /**
         * @param separator the cell separator; default {@code ','}
         * @return new options
         * @throws IllegalArgumentException if a line break, a double quote or a digit-like character
         */
        public Reader delimiter(char separator) {
            return new Reader(missingToken, binary, continuous, inferKinds, checkDelimiter(separator));
        }

        /** @return the missing-value token */
        public String missingToken() {
            return missingToken;
        }

        /** @return the columns declared binary (unmodifiable) */
        public Set<String> binaryColumns() {
            return binary;
        }

        /** @return the columns declared continuous (unmodifiable) */
        public Set<String> continuousColumns() {
            return continuous;
        }

        /** @return whether kinds are inferred */
        public boolean inferKinds() {
            return inferKinds;
        }

        /** @return the cell separator */
        public char delimiter() {
            return delimiter;
        }

        /**
         * Reads a UTF-8 CSV file.
         *
         * @param file the file
         * @return the table
         * @throws IOException if the file cannot be read (including text that is not UTF-8)
         * @throws TableFormatException listing every problem of the content
         */
        public Table read(Path file) throws IOException, TableFormatException {
            Require.notNull("file", file);
            try (java.io.Reader in = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
                return read(in, file.toString());
            }
        }

        /**
         * Reads CSV text to its end. The source is read into memory first; it is not closed.
         *
         * @param in the text
         * @param sourceName a name for messages, e.g. a file name or URL
         * @return the table
         * @throws IOException if reading fails
         * @throws TableFormatException listing every problem of the content
         */
        public Table read(java.io.Reader in, String sourceName) throws IOException, TableFormatException {
            Require.notNull("in", in);
            Require.notNull("sourceName", sourceName);
            StringBuilder sb = new StringBuilder();
            char[] buf = new char[8192];
            for (int n; (n = in.read(buf)) != -1; ) {
                sb.append(buf, 0, n);
            }
            if (sb.length() > 0 && sb.charAt(0) == '\uFEFF') {
                sb.deleteCharAt(0);
            }
            return parse(sb.toString(), sourceName);
        }

        private Table parse(String text, String sourceName) throws TableFormatException {
            Problems problems = new Problems(sourceName);
            LineIndex lines = new LineIndex(text);
            CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(delimiter).setIgnoreEmptyLines(true).get();
            List<String> names = new ArrayList<>();
            List<String> labels = new ArrayList<>();
            List<double[]> rows = new ArrayList<>();
            boolean[] declaredBinary = new boolean[0];
            try (CSVParser parser = CSVParser.parse(text, format)) {
                Iterator<CSVRecord> records = parser.iterator();
                try {
                    if (!records.hasNext()) {
                        problems.add(1, "", "no header row: the source has no records");
                        throw problems.exception();
                    }
                    CSVRecord header = records.next();
                    long headerLine = lines.startLine(header.getCharacterPosition());
                    readHeader(header, headerLine, names, labels, problems);
                    declaredBinary = new boolean[names.size()];
                    for (int c = 0; c < names.size(); c++) {
                        declaredBinary[c] = binary.contains(names.get(c));
                    }
                    checkDeclared(binary, "binary", names, headerLine, problems);
                    checkDeclared(continuous, "continuous", names, headerLine, problems);
                    while (records.hasNext()) {
                        CSVRecord record = records.next();
                        long line = lines.startLine(record.getCharacterPosition());
                        double[] row = readRow(record, line, labels, declaredBinary, problems);
                        if (row != null) {
                            rows.add(row);
                        }
                    }
                } catch (UncheckedIOException e) {
                    // Broken quoting: Commons CSV cannot go on, so report it and stop here.
                    problems.add(Math.max(1, parser.getCurrentLineNumber()), "",
                            "CSV syntax error, reading stopped here: " + e.getCause().getMessage());
                }
            } catch (IOException e) {
                throw new UncheckedIOException("reading CSV text from memory failed", e);
            }
            if (problems.any()) {
                throw problems.exception();
            }
            List<ColumnKind> kinds = new ArrayList<>(names.size());
            for (int c = 0; c < names.size(); c++) {
                kinds.add(kindOf(names.get(c), c, rows));
            }
            return Table.of(names, kinds, rows.toArray(new double[0][]));
        }

        private static void readHeader(CSVRecord header, long line, List<String> names, List<String> labels,
                Problems problems) {
            Map<String, Integer> seen = new HashMap<>();
            for (int c = 0; c < header.size(); c++) {
                String name = header.get(c).strip();
                names.add(name);
                if (name.isEmpty()) {
                    labels.add("(column " + (c + 1) + ")");
                    problems.add(line, labels.get(c), "blank column name in the header; expected a name");
                    continue;
                }
                labels.add(name);
                Integer earlier = seen.putIfAbsent(name, c);
                if (earlier != null) {
                    problems.add(line, name, "column name repeated in the header (columns " + (earlier + 1)
                            + " and " + (c + 1) + "); expected unique names");
                }
            }
        }

        private static void checkDeclared(Set<String> declared, String kind, List<String> names, long line,
                Problems problems) {
            for (String name : declared) {
                if (!names.contains(name)) {
                    problems.add(line, name, "declared " + kind + ", but the header has no such column; its columns are "
                            + names);
                }
            }
        }

        private double[] readRow(CSVRecord record, long line, List<String> labels, boolean[] declaredBinary,
                Problems problems) {
            int columns = labels.size();
            if (record.size() != columns) {
                String where = record.size() < columns ? labels.get(record.size())
                        : "(column " + (columns + 1) + ")";
                problems.add(line, where, "the row has " + record.size() + (record.size() == 1 ? " cell" : " cells")
                        + "; expected " + columns + ", one per header column");
                return null;
            }
            double[] row = new double[columns];
            for (int c = 0; c < columns; c++) {
                String text = record.get(c).strip();
                if (text.equals(missingToken)) {
                    row[c] = Double.NaN;
                    continue;
                }
                double v = parseCell(text, line, labels.get(c), problems);
                if (declaredBinary[c] && !Double.isNaN(v) && v != 0.0 && v != 1.0) {
                    problems.add(line, labels.get(c), "cell " + quote(text)
                            + " in a column declared binary; expected 0, 1 or the missing-value token " + quote(missingToken));
                }
                row[c] = v;
            }
            return row;
        }

        private double parseCell(String text, long line, String label, Problems problems) {
            if (NUMBER.matcher(text).matches()) {
                double v = Double.parseDouble(text);
                if (Double.isInfinite(v)) {
                    problems.add(line, label, "cell " + quote(text)
                            + " is too large for a double (it would be infinite); expected a finite number");
                    return Double.NaN;
                }
                return v;
            }
            if (NON_FINITE.matcher(text).matches()) {
                problems.add(line, label, "cell " + quote(text) + " is not a finite number; expected a finite number"
                        + " or the missing-value token " + quote(missingToken));
            } else {
                problems.add(line, label, "cell " + quote(text) + " is not a number; expected a decimal number"
                        + " such as 1.5 or -2e-3, or the missing-value token " + quote(missingToken));
            }
            return Double.NaN;
        }

        private ColumnKind kindOf(String name, int c, List<double[]> rows) {
            if (binary.contains(name)) {
                return ColumnKind.BINARY;
            }
            if (continuous.contains(name) || !inferKinds) {
                return ColumnKind.CONTINUOUS;
            }
            boolean seen = false;
            for (double[] row : rows) {
                double v = row[c];
                if (Double.isNaN(v)) {
                    continue;
                }
                if (v != 0.0 && v != 1.0) {
                    return ColumnKind.CONTINUOUS;
                }
                seen = true;
            }
            return seen ? ColumnKind.BINARY : ColumnKind.CONTINUOUS;
        }

        @Override
        public String toString() {
            return "CsvTables.Reader[missingToken=" + quote(missingToken) + ", binary=" + binary + ", continuous="
                    + continuous + ", inferKinds=" + inferKinds + ", delimiter=" + quote(String.valueOf(delimiter))
                    + "]";
        }
    }

    /**
     * Immutable options for writing a {@link Table} as CSV, with the methods that write. The header
     * holds the column names; cells are written as described in {@link CsvTables}; fields are quoted
     * only where CSV needs it; records end with {@code '\n'}. The kinds are not written: read the
     * file back with the same declarations, or let the reader infer them.
     */
    public static final class Writer {

        static final Writer DEFAULT = new Writer("", ',');

        private final String missingToken;
        private final char delimiter;

        private Writer(String missingToken, char delimiter) {
            this.missingToken = missingToken;
            this.delimiter = delimiter;
        }

        /**
         * @param token the text written for a missing cell; default {@code ""}
         * @return new options with this token
         * @throws IllegalArgumentException if null, padded with white space, or a number (it would read
         *     back as a value)
         */
        public Writer missingToken(String token) {
            checkToken(token);
            if (NUMBER.matcher(token).matches()) {
                throw new IllegalArgumentException("missingToken is '" + token
                        + "'; expected text that is not a number, so that it reads back as missing");
            }
            return new Writer(token, delimiter);
        }

        /**
         * @param separator the cell separator; default {@code ','}
         * @return new options
         * @throws IllegalArgumentException as {@link Reader#delimiter(char)}
         */
        public Writer delimiter(char separator) {
            return new Writer(missingToken, checkDelimiter(separator));
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
         * the old file or the new one, never a mixture. If anything fails, the old file is untouched
         * and the temporary file is removed.
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
                    cells[c] = Double.isNaN(v) ? missingToken : isBinary[c] ? (v == 1.0 ? "1" : "0") : Double.toString(v);
                }
                printer.printRecord((Object[]) cells);
            }
            printer.flush();
        }

        @Override
        public String toString() {
            return "CsvTables.Writer[missingToken=" + quote(missingToken) + ", delimiter="
                    + quote(String.valueOf(delimiter)) + "]";
        }
    }

    // ------------------------------------------------------------------ atomic file replacement

    /** Text written into a file by {@link #writeAtomically(Path, TextBody)}. */
    @FunctionalInterface
    interface TextBody {
        void writeTo(java.io.Writer out) throws IOException;
    }

    /**
     * Replaces {@code target} by the text of {@code body} atomically through
     * {@link org.backstep.io.AtomicFiles}: on failure the old file is untouched and the temporary
     * file is gone.
     */
    static void writeAtomically(Path target, TextBody body) throws IOException {
        Require.notNull("file", target);
        org.backstep.io.AtomicFiles.write(target, out -> {
            java.io.Writer w = new BufferedWriter(new java.io.OutputStreamWriter(out, StandardCharsets.UTF_8));
            body.writeTo(w);
            w.flush();
        });
    }

    // ------------------------------------------------------------------ helpers

    private static String checkToken(String token) {
        Require.notNull("missingToken", token);
        if (!token.equals(token.strip())) {
            throw new IllegalArgumentException("missingToken is '" + token
                    + "'; expected no leading or trailing white space (cells are compared after stripping)");
        }
        return token;
    }

    private static char checkDelimiter(char d) {
        if (d == '\n' || d == '\r' || d == '"' || d == '.' || d == '+' || d == '-' || Character.isLetterOrDigit(d)) {
            throw new IllegalArgumentException("delimiter is '" + d
                    + "'; expected a separator that cannot be part of a number or a line break or a quote");
        }
        return d;
    }

    private static Set<String> nameSet(String what, String... columns) {
        Require.notNull(what, columns);
        Set<String> set = new LinkedHashSet<>();
        for (int i = 0; i < columns.length; i++) {
            if (columns[i] == null) {
                throw new IllegalArgumentException(what + "[" + i + "] is null; expected a column name");
            }
            set.add(columns[i]);
        }
        return Collections.unmodifiableSet(set);
    }

    private static void checkDisjoint(Set<String> set, Set<String> other, String otherKind) {
        for (String name : set) {
            if (other.contains(name)) {
                throw new IllegalArgumentException("column '" + name + "' is already declared " + otherKind
                        + "; expected each column declared at most one kind");
            }
        }
    }

    static String quote(String text) {
        String t = text.length() > QUOTED_CELL_LENGTH ? text.substring(0, QUOTED_CELL_LENGTH) + "..." : text;
        return "'" + t + "'";
    }

    /** Collects problems up to the cap and counts the rest. */
    private static final class Problems {
        private final String source;
        private final List<TableFormatException.Problem> kept = new ArrayList<>();
        private long omitted;

        Problems(String source) {
            this.source = source;
        }

        void add(long line, String column, String message) {
            if (kept.size() < TableFormatException.MAX_PROBLEMS) {
                kept.add(new TableFormatException.Problem(line, column, message));
            } else {
                omitted++;
            }
        }

        boolean any() {
            return !kept.isEmpty();
        }

        TableFormatException exception() {
            return new TableFormatException(source, kept, omitted);
        }
    }

    /**
     * The 1-based line where each record starts. A line ends at "\n", "\r\n" or a lone "\r", as in
     * Commons CSV. The parser reports a record's position just after the previous record, before any
     * empty lines it skipped, so empty lines are skipped here too.
     */
    static final class LineIndex {
        private final String text;
        private final int[] starts; // starts[k] = offset of line k + 1

        LineIndex(String text) {
            this.text = text;
            int[] s = new int[16];
            int n = 0;
            s[n++] = 0;
            for (int i = 0; i < text.length(); i++) {
                char ch = text.charAt(i);
                boolean end = ch == '\n' || (ch == '\r' && (i + 1 == text.length() || text.charAt(i + 1) != '\n'));
                if (end) {
                    if (n == s.length) {
                        s = Arrays.copyOf(s, 2 * n);
                    }
                    s[n++] = i + 1;
                }
            }
            this.starts = Arrays.copyOf(s, n);
        }

        long startLine(long position) {
            int k = Arrays.binarySearch(starts, (int) position);
            if (k < 0) {
                k = -k - 2; // the line containing the position
            }
            while (k + 1 < starts.length && isEmptyLine(k)) {
                k++;
            }
            return k + 1L;
        }

        private boolean isEmptyLine(int k) {
            int s = starts[k];
            return s < text.length() && (text.charAt(s) == '\n' || text.charAt(s) == '\r');
        }
    }
}
