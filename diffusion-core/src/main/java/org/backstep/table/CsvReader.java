package org.backstep.table;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import org.backstep.schedule.Require;

/**
 * Immutable options for reading CSV into a {@link Table}, with the methods that read; start from
 * {@link CsvTables#reader()}. Each wither returns new options.
 *
 * <p><b>Cells.</b> A cell, stripped of surrounding white space, is <b>missing</b> when it equals the
 * missing token; otherwise it must be a finite decimal number matching
 * {@code [+-]?(d+(.d*)?|.d+)([eE][+-]?d+)?} (ASCII digits). A column's kind is, in order: BINARY if
 * named in {@link #binary(String...)}; CONTINUOUS if named in {@link #continuous(String...)}; with
 * {@link #inferKinds(boolean) inferKinds} on, BINARY when every non-missing cell is 0 or 1, else
 * CONTINUOUS; with it off, CONTINUOUS.
 *
 * <p><b>Text.</b> Files and streams must be UTF-8; one byte order mark at the very start is skipped.
 * Reading stops at the first byte that is not valid UTF-8, at a NUL character (UTF-16 text or binary
 * data), at a byte order mark anywhere else, and at a record longer than 8,388,608 characters (an
 * unclosed quote), each reported with its line, its column (1-based, in characters) and, for bytes,
 * its byte offset (0-based). Lines end at "\n", "\r\n" or "\r"; empty lines are skipped.
 *
 * <p><b>Problems.</b> Reading is all or nothing: every problem of the source is collected, each with
 * its 1-based line and its column name (an empty source, a header without rows, a blank or repeated
 * header name, a declared column the header lacks, a row with too few or too many cells, text in a
 * numeric column, NaN or Infinity text or an overflowing number, a value other than 0 or 1 in a
 * column declared binary, broken CSV quoting, and the problems of the text above), and then a
 * {@link TableFormatException} is thrown; no partial table is ever returned. Once every row reads
 * well, a column whose every cell is missing is a problem too, unless {@link #allowEmptyColumns}. A
 * header whose every name is a number is refused as a file without a header row.
 *
 * <p><b>Memory.</b> The text is never held whole: it is decoded and parsed a chunk at a time, and
 * the cells go straight into primitive arrays. A regular file is read twice: the first pass checks
 * every cell and counts the rows, the second stores the cells into one array of exactly the table's
 * size, so the heap needed is the table (8 bytes per cell) plus a constant (measured with G1: the
 * smallest -Xmx that read a file was 0.98 times the table plus 9 MB). A stream can be read only once;
 * its cells go into arrays of 256 KiB that grow with the rows and are joined at the end, so the table
 * is held twice for a moment (measured: 2.4 times the table; diffusion-bench CsvReadMemory).
 */
public final class CsvReader {

    static final CsvReader DEFAULT = new CsvReader(new Fields());

    /**
     * Cells per block of the growing store for streams: 256 KiB of doubles, under half of G1's
     * smallest region (1 MiB), so that a block is an ordinary object and not a "humongous" one that
     * occupies whole regions (with 512 KiB blocks the smallest heap that read a stream was 3.1 times
     * the table, with 256 KiB blocks 2.4; diffusion-bench/results/csv-read-memory.txt).
     */
    static final int BLOCK_CELLS = 1 << 15;

    private final String missingToken;
    private final Set<String> binary;
    private final Set<String> continuous;
    private final boolean inferKinds;
    private final char delimiter;
    private final boolean allowEmptyColumns;
    private final Set<String> categorical;
    private final boolean inferCategories;
    private final Set<String> integer;
    private final boolean inferIntegers;


    /**
     * Declares columns integer (counts, ordinal codes): every cell that is not missing must be a whole
     * number within +-2^52. Replaces any earlier declaration of integer columns; default none.
     *
     * @param columns column names (not modified)
     * @return new options
     * @throws IllegalArgumentException if a name is null or also declared binary, continuous or categorical
     */
    public CsvReader integer(String... columns) {
        Set<String> set = CsvTables.nameSet("integer columns", columns);
        CsvTables.checkDisjoint(set, binary, "binary");
        CsvTables.checkDisjoint(set, continuous, "continuous");
        CsvTables.checkDisjoint(set, categorical, "categorical");
        return with(f -> f.integer = set);
    }

    /**
     * @param infer whether an undeclared column of whole numbers that is not binary becomes INTEGER;
     *     default false (it stays CONTINUOUS). Needs {@link #inferKinds} on
     * @return new options
     */
    public CsvReader inferIntegers(boolean infer) {
        return with(f -> f.inferIntegers = infer);
    }

    /** @return the columns declared integer (unmodifiable) */
    public Set<String> integerColumns() {
        return integer;
    }

    /** @return whether columns of whole numbers become INTEGER */
    public boolean inferIntegers() {
        return inferIntegers;
    }

    private CsvReader(Fields f) {
        this.missingToken = f.missingToken;
        this.binary = f.binary;
        this.continuous = f.continuous;
        this.inferKinds = f.inferKinds;
        this.delimiter = f.delimiter;
        this.allowEmptyColumns = f.allowEmptyColumns;
        this.categorical = f.categorical;
        this.inferCategories = f.inferCategories;
        this.integer = f.integer;
        this.inferIntegers = f.inferIntegers;
    }

    /** The options with some of them changed: every wither is one call of this copy. */
    private CsvReader with(java.util.function.Consumer<Fields> change) {
        Fields f = new Fields(this);
        change.accept(f);
        return new CsvReader(f);
    }

    /** The options as plain fields, filled with the defaults, for {@link #with} to change before they are frozen. */
    private static final class Fields {
        String missingToken = "";
        Set<String> binary = Set.of();
        Set<String> continuous = Set.of();
        boolean inferKinds = true;
        char delimiter = ',';
        boolean allowEmptyColumns;
        Set<String> categorical = Set.of();
        boolean inferCategories;
        Set<String> integer = Set.of();
        boolean inferIntegers;

        Fields() {
        }

        Fields(CsvReader r) {
            missingToken = r.missingToken;
            binary = r.binary;
            continuous = r.continuous;
            inferKinds = r.inferKinds;
            delimiter = r.delimiter;
            allowEmptyColumns = r.allowEmptyColumns;
            categorical = r.categorical;
            inferCategories = r.inferCategories;
            integer = r.integer;
            inferIntegers = r.inferIntegers;
        }
    }

    /**
     * @param token the text of a missing cell; default {@code ""}; may be a number such as
     *     {@code "-999"}, which is then read as missing
     * @return new options with this token
     * @throws IllegalArgumentException if null or with leading or trailing white space
     */
    public CsvReader missingToken(String token) {
        String checked = CsvTables.checkToken(token);
        return with(f -> f.missingToken = checked);
    }

    /**
     * Declares columns binary whatever their values; a value other than 0, 1 or missing in them is a
     * problem. Replaces any earlier declaration of binary columns; default none.
     *
     * @param columns column names (not modified)
     * @return new options
     * @throws IllegalArgumentException if a name is null or also declared continuous
     */
    public CsvReader binary(String... columns) {
        Set<String> set = CsvTables.nameSet("binary columns", columns);
        CsvTables.checkDisjoint(set, continuous, "continuous");
        CsvTables.checkDisjoint(set, categorical, "categorical");
        return with(f -> f.binary = set);
    }

    /**
     * Declares columns continuous whatever their values. Replaces any earlier declaration of
     * continuous columns; default none.
     *
     * @param columns column names (not modified)
     * @return new options
     * @throws IllegalArgumentException if a name is null or also declared binary
     */
    public CsvReader continuous(String... columns) {
        Set<String> set = CsvTables.nameSet("continuous columns", columns);
        CsvTables.checkDisjoint(set, binary, "binary");
        CsvTables.checkDisjoint(set, categorical, "categorical");
        return with(f -> f.continuous = set);
    }

    /**
     * @param infer whether undeclared columns holding only 0 and 1 become BINARY; default true
     * @return new options
     */
    public CsvReader inferKinds(boolean infer) {
        return with(f -> f.inferKinds = infer);
    }

    /**
     * @param separator the cell separator; default {@code ','}
     * @return new options
     * @throws IllegalArgumentException if a line break, a double quote, NUL, a byte order mark or a
     *     character that can be part of a number
     */
    public CsvReader delimiter(char separator) {
        char checked = CsvTables.checkDelimiter(separator);
        return with(f -> f.delimiter = checked);
    }

    /**
     * Whether a column with every cell missing is kept (CONTINUOUS unless declared binary) rather than
     * refused; default false (refused, since such a column cannot be learned). Allow it to read
     * records whose column is to be imputed.
     *
     * @param allow true to keep such columns
     * @return new options
     */
    public CsvReader allowEmptyColumns(boolean allow) {
        return with(f -> f.allowEmptyColumns = allow);
    }

    /**
     * Declares columns categorical: every cell that is not the missing token is a label (text or a
     * number, taken as text after stripping white space), its index the order in which the label is
     * first seen. Replaces any earlier declaration of categorical columns; default none. A column
     * with two labels is categorical, not binary, unless declared binary.
     *
     * @param columns column names (not modified)
     * @return new options
     * @throws IllegalArgumentException if a name is null or also declared binary or continuous
     */
    public CsvReader categorical(String... columns) {
        Set<String> set = CsvTables.nameSet("categorical columns", columns);
        CsvTables.checkDisjoint(set, binary, "binary");
        CsvTables.checkDisjoint(set, continuous, "continuous");
        return with(f -> f.categorical = set);
    }

    /**
     * @param infer whether an undeclared column with a cell that is not a number becomes CATEGORICAL
     *     (its every cell a label) rather than a problem; default false. Needs {@link #inferKinds}
     *     on, and a regular file: the first pass finds the columns, the second reads them as declared
     *     categorical (a stream, read once, reports such a column as a problem naming it)
     * @return new options
     */
    public CsvReader inferCategories(boolean infer) {
        return with(f -> f.inferCategories = infer);
    }

    /** @return the columns declared categorical (unmodifiable) */
    public Set<String> categoricalColumns() {
        return categorical;
    }

    /** @return whether columns holding text become categorical */
    public boolean inferCategories() {
        return inferCategories;
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

    /** @return whether columns with every cell missing are kept */
    public boolean allowEmptyColumns() {
        return allowEmptyColumns;
    }

    // ------------------------------------------------------------------ reading

    /**
     * Reads a UTF-8 CSV file. A regular file is read twice (see the class comment, Memory); anything
     * else, such as a named pipe, once.
     *
     * @param file the file
     * @return the table
     * @throws IOException if the file cannot be read, or changed between the two passes
     * @throws TableFormatException listing every problem of the content, the file's path as its source
     * @throws OutOfMemoryError naming the table's size if the heap cannot hold it
     */
    public Table read(Path file) throws IOException, TableFormatException {
        return readFile(file, false).table();
    }

    /**
     * Reads a UTF-8 CSV file as {@link #read(Path)} does, and keeps the line of the file on which
     * each row's record starts, so that a result can name a row by the line a text editor shows
     * (1-based, the header's line counted; lines end at "\n", "\r\n" or "\r"; the empty lines that
     * reading skips are counted; a line break inside a quoted cell belongs to its record). It costs 8
     * bytes per row beside the table.
     *
     * @param file the file
     * @return the table and the line of each row
     * @throws IOException if the file cannot be read, or changed between the two passes
     * @throws TableFormatException listing every problem of the content, the file's path as its source
     * @throws OutOfMemoryError naming the table's size if the heap cannot hold it
     */
    public TableWithLines readWithLines(Path file) throws IOException, TableFormatException {
        Read read = readFile(file, true);
        return new TableWithLines(read.table(), read.lines());
    }

    /**
     * A table read from a CSV file, with the line of the file on which each row starts
     * ({@link CsvReader#readWithLines(Path)}).
     *
     * @param table the table
     * @param lines per row, the 1-based line of the file on which the row's record starts, ascending
     */
    public record TableWithLines(Table table, long[] lines) {

        /**
         * Validates and copies the lines.
         *
         * @throws IllegalArgumentException if there is not one line per row, or the lines are not
         *     at least 2 (the header is on line 1 or later) and strictly ascending
         */
        public TableWithLines {
            Require.notNull("table", table);
            lines = Require.notNull("lines", lines).clone();
            if (lines.length != table.rows()) {
                throw new IllegalArgumentException("lines has length " + lines.length + "; expected " + table.rows()
                        + ", one per row of the table");
            }
            for (int i = 0; i < lines.length; i++) {
                long earlier = i == 0 ? 1 : lines[i - 1];
                if (lines[i] <= earlier) {
                    throw new IllegalArgumentException("the line of row " + i + " is " + lines[i] + "; expected more than "
                            + earlier + (i == 0 ? ", the header's line at the earliest" : ", the line of row " + (i - 1)));
                }
            }
        }

        /** @return a copy of the lines, one per row */
        @Override
        public long[] lines() {
            return lines.clone();
        }

        /**
         * @param row a row of the table, 0-based
         * @return the 1-based line of the file on which it starts
         * @throws IllegalArgumentException if the row is out of range
         */
        public long line(int row) {
            Require.inRange("row", row, 0, lines.length - 1);
            return lines[row];
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof TableWithLines t && table.equals(t.table) && java.util.Arrays.equals(lines, t.lines);
        }

        @Override
        public int hashCode() {
            return 31 * table.hashCode() + java.util.Arrays.hashCode(lines);
        }

        @Override
        public String toString() {
            return "TableWithLines[" + table.rows() + " rows x " + table.columns() + " columns, lines "
                    + (lines.length == 0 ? "none" : lines[0] + ".." + lines[lines.length - 1]) + "]";
        }
    }

    /** What a read gives: the table and, when asked for, each row's line (else null); the lines are not copied. */
    private record Read(Table table, long[] lines) {
    }

    /** Reads a file, keeping each row's line when asked. */
    private Read readFile(Path file, boolean withLines) throws IOException, TableFormatException {
        Require.notNull("file", file);
        String source = file.toString();
        if (!Files.isRegularFile(file)) {
            try (InputStream in = Files.newInputStream(file)) {
                return readOnce(CsvText.ofBytes(in), source, withLines);
            }
        }
        CsvScan.Scanned first;
        try (InputStream in = Files.newInputStream(file)) {
            first = CsvScan.run(this, CsvText.ofBytes(in), source, (row, line) -> { });
        }
        if (!first.textColumns().isEmpty()) {
            // the columns found to hold text are read again as declared categorical ones
            Set<String> all = new java.util.LinkedHashSet<>(categorical);
            all.addAll(first.textColumns());
            CsvReader declared = with(f -> {
                f.categorical = java.util.Collections.unmodifiableSet(all);
                f.inferCategories = false;
            });
            return declared.readFile(file, withLines);
        }
        int columns = first.names().size();
        double[] cells = allocate((long) first.rows() * columns, source);
        long[] lines = withLines ? new long[first.rows()] : null;
        int[] stored = new int[1];
        CsvScan.Scanned second;
        try (InputStream in = Files.newInputStream(file)) {
            second = CsvScan.run(this, CsvText.ofBytes(in), source, (row, line) -> {
                if (stored[0] < first.rows()) {
                    System.arraycopy(row, 0, cells, stored[0] * columns, columns);
                    if (lines != null) {
                        lines[stored[0]] = line;
                    }
                }
                stored[0]++;
            });
        } catch (TableFormatException e) {
            throw changed(source, e);
        }
        if (!second.names().equals(first.names()) || !second.kinds().equals(first.kinds())
                || second.rows() != first.rows() || !second.categories().equals(first.categories())) {
            throw changed(source, null);
        }
        return new Read(Table.Layout.of(first.names(), first.kinds(), first.categories()).adopt(first.rows(), cells), lines);
    }

    /**
     * Reads UTF-8 CSV bytes to their end, once (see the class comment, Memory); the stream is not
     * closed.
     *
     * @param in the bytes
     * @param sourceName a name for messages, e.g. a file name or URL
     * @return the table
     * @throws IOException if reading fails
     * @throws TableFormatException listing every problem of the content
     */
    public Table read(InputStream in, String sourceName) throws IOException, TableFormatException {
        Require.notNull("in", in);
        Require.notNull("sourceName", sourceName);
        return readOnce(CsvText.ofBytes(in), sourceName, false).table();
    }

    /**
     * Reads CSV text to its end, once (see the class comment, Memory); the reader is not closed. The
     * caller's reader decodes the bytes, so problems of the text name no byte offsets.
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
        return readOnce(CsvText.ofChars(in), sourceName, false).table();
    }

    private Read readOnce(CsvText text, String source, boolean withLines) throws IOException, TableFormatException {
        Blocks blocks = new Blocks(source, withLines);
        CsvScan.Scanned s = CsvScan.run(this, text, source, blocks);
        if (!s.textColumns().isEmpty()) {
            List<TableFormatException.Problem> found = new ArrayList<>();
            for (String name : s.textColumns()) {
                found.add(new TableFormatException.Problem(1, name, "the column holds text, and inferring categories"
                        + " needs two passes over a regular file; expected a file, or the column declared with"
                        + " categorical(\"" + name + "\")"));
            }
            throw new TableFormatException(source, found, 0);
        }
        return new Read(Table.Layout.of(s.names(), s.kinds(), s.categories()).adopt(s.rows(), blocks.join()),
                blocks.lines());
    }

    private static double[] allocate(long cells, String source) {
        try {
            return new double[(int) cells];
        } catch (OutOfMemoryError e) {
            OutOfMemoryError named = new OutOfMemoryError(String.format(Locale.ROOT, "reading %s: the table has"
                    + " %,d cells and needs %,d MB of heap; the Java heap cannot hold it (maximum %,d MB, see -Xmx)",
                    source, cells, cells * Double.BYTES >> 20, Runtime.getRuntime().maxMemory() >> 20));
            named.initCause(e);
            throw named;
        }
    }

    private static IOException changed(String source, Throwable cause) {
        return new IOException(source + " changed while it was being read (its second pass differs from the first);"
                + " read it again once no one writes to it", cause);
    }

    /** The growing store of a one-pass read: blocks of whole rows, joined into one array at the end. */
    private static final class Blocks implements CsvScan.RowStore {
        private final String source;
        private final List<double[]> blocks = new ArrayList<>();
        private double[] current;
        private int used;  // cells used in the current block
        private long cells;
        private long[] lines;  // per stored row, its line; null when not asked for
        private int rows;

        Blocks(String source, boolean withLines) {
            this.source = source;
            this.lines = withLines ? new long[16] : null;
        }

        @Override
        public void add(double[] row, long line) {
            if (lines != null) {
                if (rows == lines.length) {
                    lines = java.util.Arrays.copyOf(lines, lines.length * 2);
                }
                lines[rows] = line;
            }
            rows++;
            if (current == null || used + row.length > current.length) {
                try {
                    current = new double[Math.max(BLOCK_CELLS / row.length, 1) * row.length];
                } catch (OutOfMemoryError e) {
                    OutOfMemoryError named = new OutOfMemoryError(String.format(Locale.ROOT, "reading %s: the Java"
                            + " heap is full after %,d cells (%,d MB) of the table; read a regular file (two passes,"
                            + " half the memory) or raise the maximum heap (-Xmx, now %,d MB)", source, cells,
                            cells * Double.BYTES >> 20, Runtime.getRuntime().maxMemory() >> 20));
                    named.initCause(e);
                    throw named;
                }
                blocks.add(current);
                used = 0;
            }
            System.arraycopy(row, 0, current, used, row.length);
            used += row.length;
            cells += row.length;
        }

        /** Joins the blocks into one array, letting each go once copied. */
        double[] join() {
            double[] out = allocate(cells, source);
            int at = 0;
            for (int i = 0; i < blocks.size(); i++) {
                double[] b = blocks.get(i);
                int n = (int) Math.min(b.length, cells - at);
                System.arraycopy(b, 0, out, at, n);
                at += n;
                blocks.set(i, null);
            }
            current = null;
            return out;
        }

        /** The line of each stored row, or null when not asked for. */
        long[] lines() {
            return lines == null ? null : java.util.Arrays.copyOf(lines, rows);
        }
    }

    @Override
    public String toString() {
        return "CsvReader[missingToken=" + CsvTables.quote(missingToken) + ", binary=" + binary + ", continuous="
                + continuous + ", inferKinds=" + inferKinds + ", delimiter="
                + CsvTables.quote(String.valueOf(delimiter)) + ", allowEmptyColumns=" + allowEmptyColumns + ", categorical="
                + categorical + ", inferCategories="
                + inferCategories + ", integer=" + integer + ", inferIntegers=" + inferIntegers + "]";
    }
}
