package org.backstep.table;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.apache.commons.csv.CSVException;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVParser;
import org.apache.commons.csv.CSVRecord;

/**
 * One pass of a {@link CsvReader} over a source: Commons CSV splits the text of a {@link CsvText}
 * into records, one record at a time; each cell is checked and parsed here, and each good row goes
 * to a {@link RowStore}. Nothing of the text is kept. Every problem is collected with its line and
 * column (at most {@link TableFormatException#MAX_PROBLEMS}, the rest counted); once there is one,
 * rows are still checked but no longer stored.
 *
 * <p>Each column gets a {@link Rule} from the reader's declarations; the rule decides how its cells
 * are read and which kind the column gets.
 */
final class CsvScan {

    /** How the cells of one column are read, from the reader's declarations. */
    enum Rule {
        /** Declared binary: 0, 1 or missing. */
        BINARY,
        /** Declared continuous, or kinds not inferred: any finite number or missing. */
        CONTINUOUS,
        /** Any finite number or missing; BINARY if every value is 0 or 1, else CONTINUOUS. */
        INFERRED,
        /** Declared categorical: any text, a label kept in first-seen order, or missing. */
        CATEGORICAL,
        /** Declared integer: a whole number within +-2^52, or missing. */
        INTEGER
    }

    /** Where the rows of a pass go. */
    interface RowStore {
        /**
         * Takes one row of cells (NaN for missing); the array is reused by the caller.
         *
         * @param row the cells
         * @param line the 1-based line of the source on which the row's record starts
         */
        void add(double[] row, long line);
    }

    /** The outcome of a pass without problems. */
    record Scanned(List<String> names, List<ColumnKind> kinds, int rows, Map<String, List<String>> categories,
            List<String> textColumns) {
    }

    private final CsvReader options;
    private final CsvText text;
    private final Problems problems;
    private final List<String> names = new ArrayList<>();
    private final List<String> labels = new ArrayList<>(); // names, or "(column k)" for a blank one
    private Rule[] rules;
    private boolean[] present;   // a column has a cell that is not the missing token
    private boolean[] nonBinary; // a column has a value other than 0 and 1
    private boolean[] nonWhole;  // a column has a value that is not a whole number within +-2^52
    private boolean[] textual;   // an inferred column has a cell that is not a number (inferCategories)
    private Map<String, Integer>[] labelIndex; // per categorical column, label to index in first-seen order
    private List<String>[] labelList;
    private long headerLine;
    private int rows;
    private boolean complete; // the source was read to its end

    private CsvScan(CsvReader options, CsvText text, String source) {
        this.options = options;
        this.text = text;
        this.problems = new Problems(source);
    }

    /**
     * Reads a source to its end.
     *
     * @param options the reader's options
     * @param text the source's text
     * @param source the source's name for messages
     * @param store where the rows go while no problem has been found
     * @return the names, kinds and row count
     * @throws TableFormatException listing every problem found
     * @throws IOException if the source cannot be read
     */
    static Scanned run(CsvReader options, CsvText text, String source, RowStore store)
            throws IOException, TableFormatException {
        return new CsvScan(options, text, source).run(store);
    }

    private Scanned run(RowStore store) throws IOException, TableFormatException {
        CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(options.delimiter()).setIgnoreEmptyLines(true)
                .get();
        try (CSVParser parser = CSVParser.builder().setReader(text).setFormat(format).get()) {
            Iterator<CSVRecord> records = parser.iterator();
            long finishedLines = 0;
            boolean stopped = false;
            try {
                if (!records.hasNext()) {
                    problems.add(1, "", (text.delivered() > 0 ? "the source has only empty lines"
                            : text.openedWithBom() ? "the source holds only a byte order mark" : "the source is empty")
                            + "; expected a header row of column names, then rows of values");
                    throw problems.exception();
                }
                CSVRecord header = records.next();
                headerLine = text.recordLine(header.getCharacterPosition());
                readHeader(header);
                finishedLines = parser.getCurrentLineNumber();
                text.recordEnded(finishedLines);
                double[] row = new double[names.size()];
                while (records.hasNext()) {
                    CSVRecord record = records.next();
                    long line = text.recordLine(record.getCharacterPosition());
                    if (readRow(record, line, row) && !problems.any()) {
                        store.add(row, line);
                    }
                    finishedLines = parser.getCurrentLineNumber();
                    text.recordEnded(finishedLines);
                    if ((long) rows * names.size() > Table.MAX_CELLS) {
                        problems.add(line, "", "reading stopped: the table would have more than "
                                + String.format(Locale.ROOT, "%,d", Table.MAX_CELLS) + " cells (" + names.size()
                                + " columns); expected a smaller table");
                        stopped = true;
                        break;
                    }
                }
                complete = !stopped;
            } catch (UncheckedIOException e) {
                stoppedBy(e.getCause(), finishedLines);
            }
        }
        if (complete && rows == 0) {
            problems.add(headerLine, "", "the source has a header but no rows; expected at least one row of values"
                    + " below the header");
        }
        for (int c = 0; complete && rows > 0 && !problems.any() && c < names.size(); c++) {
            if (!present[c] && !options.allowEmptyColumns()) {
                problems.add(headerLine, labels.get(c), "every cell of the column is missing (" + count(rows, "row")
                        + "); expected at least one value, or allowEmptyColumns(true) to keep such a column");
            }
        }
        if (problems.any()) {
            throw problems.exception();
        }
        List<ColumnKind> kinds = new ArrayList<>(names.size());
        Map<String, List<String>> categories = new java.util.LinkedHashMap<>();
        List<String> textColumns = new ArrayList<>();
        for (int c = 0; c < names.size(); c++) {
            if (rules[c] == Rule.CATEGORICAL || textual[c]) {
                kinds.add(ColumnKind.CATEGORICAL);
                if (textual[c]) {
                    textColumns.add(names.get(c));
                } else if (labelList[c].isEmpty()) {
                    problems.add(headerLine, labels.get(c), "the column is declared categorical but every cell is"
                            + " missing; expected at least one label");
                } else {
                    categories.put(names.get(c), List.copyOf(labelList[c]));
                }
                continue;
            }
            if (rules[c] == Rule.INTEGER || (rules[c] == Rule.INFERRED && options.inferIntegers() && present[c]
                    && nonBinary[c] && !nonWhole[c])) {
                kinds.add(ColumnKind.INTEGER);
                continue;
            }
            kinds.add(rules[c] == Rule.BINARY || (rules[c] == Rule.INFERRED && present[c] && !nonBinary[c])
                    ? ColumnKind.BINARY : ColumnKind.CONTINUOUS);
        }
        if (problems.any()) {
            throw problems.exception();
        }
        return new Scanned(List.copyOf(names), List.copyOf(kinds), rows, categories, List.copyOf(textColumns));
    }

    /** Records why reading stopped early: a problem of the text, broken CSV syntax, or a failed read. */
    private void stoppedBy(Throwable cause, long finishedLines) throws IOException {
        if (cause instanceof CsvText.Refusal) {
            problems.add(((CsvText.Refusal) cause).line, "", cause.getMessage());
        } else if (cause instanceof CSVException) {
            long line = text.lineAfter(finishedLines);
            String m = String.valueOf(cause.getMessage());
            if (m.contains("EOF reached before encapsulated token finished")) {
                problems.add(line, "", "a quoted cell opens in this record and is never closed; expected a closing"
                        + " double quote (a quote inside a quoted cell is written twice)");
            } else if (m.contains("Invalid character between encapsulated token and delimiter")) {
                problems.add(line, "", "text follows the closing quote of a cell in this record; expected the"
                        + " delimiter or the end of the line (a quote inside a quoted cell is written twice)");
            } else {
                problems.add(line, "", "CSV syntax error, reading stopped here: " + m);
            }
        } else if (cause instanceof IOException) {
            throw (IOException) cause;
        } else {
            throw new IllegalStateException("reading CSV failed", cause);
        }
    }

    private void readHeader(CSVRecord header) {
        Map<String, Integer> seen = new HashMap<>();
        int columns = header.size();
        rules = new Rule[columns];
        present = new boolean[columns];
        nonBinary = new boolean[columns];
        textual = new boolean[columns];
        nonWhole = new boolean[columns];
        @SuppressWarnings("unchecked")
        Map<String, Integer>[] maps = new Map[columns];
        @SuppressWarnings("unchecked")
        List<String>[] lists = new List[columns];
        labelIndex = maps;
        labelList = lists;
        Set<String> binary = options.binaryColumns();
        Set<String> continuous = options.continuousColumns();
        Set<String> categorical = options.categoricalColumns();
        for (int c = 0; c < columns; c++) {
            String name = header.get(c).strip();
            names.add(name);
            rules[c] = binary.contains(name) ? Rule.BINARY : categorical.contains(name) ? Rule.CATEGORICAL
                    : options.integerColumns().contains(name) ? Rule.INTEGER : continuous.contains(name) || !options.inferKinds() ? Rule.CONTINUOUS : Rule.INFERRED;
            if (rules[c] == Rule.CATEGORICAL) {
                labelIndex[c] = new HashMap<>();
                labelList[c] = new ArrayList<>();
            }
            if (name.isEmpty()) {
                labels.add("(column " + (c + 1) + ")");
                problems.add(headerLine, labels.get(c), "blank column name in the header; expected a name"
                        + (c == columns - 1 && columns > 1 ? " (a delimiter at the end of the header line?)" : ""));
                continue;
            }
            labels.add(name);
            Integer earlier = seen.putIfAbsent(name, c);
            if (earlier != null) {
                problems.add(headerLine, name, "column name repeated in the header (columns " + (earlier + 1) + " and "
                        + (c + 1) + "); expected unique names");
            }
        }
        if (names.stream().allMatch(CsvTables::isDecimal)) {
            problems.add(headerLine, "", "every column name in the header is a number (" + CsvTables.quote(
                    String.join(String.valueOf(options.delimiter()), names)) + "); the file seems to have no header"
                    + " row; expected a first line of column names");
        }
        checkDeclared(binary, "binary");
        checkDeclared(continuous, "continuous");
        checkDeclared(categorical, "categorical");
        checkDeclared(options.integerColumns(), "integer");
    }

    private void checkDeclared(Set<String> declared, String kind) {
        for (String name : declared) {
            if (!names.contains(name)) {
                problems.add(headerLine, name, "declared " + kind + ", but the header has no such column; its columns"
                        + " are " + names);
            }
        }
    }

    /** Reads one record into {@code row}; false if it could not be read (a problem is recorded). */
    private boolean readRow(CSVRecord record, long line, double[] row) {
        int columns = names.size();
        rows++;
        if (record.size() != columns) {
            String where = record.size() < columns ? labels.get(record.size()) : "(column " + (columns + 1) + ")";
            problems.add(line, where, "the row has " + count(record.size(), "cell") + "; expected " + columns
                    + ", one per header column");
            return false;
        }
        boolean good = true;
        String missing = options.missingToken();
        for (int c = 0; c < columns; c++) {
            String cell = record.get(c).strip();
            if (cell.equals(missing)) {
                row[c] = Double.NaN;
                continue;
            }
            present[c] = true;
            if (rules[c] == Rule.CATEGORICAL) {
                Integer i = labelIndex[c].get(cell);
                if (i == null) {
                    if (labelList[c].size() >= Table.MAX_CATEGORIES) {
                        problems.add(line, labels.get(c), "cell " + CsvTables.quote(cell) + " would be category "
                                + (Table.MAX_CATEGORIES + 1) + " of the column; expected at most "
                                + Table.MAX_CATEGORIES + " categories");
                        good = false;
                        continue;
                    }
                    i = labelList[c].size();
                    labelIndex[c].put(cell, i);
                    labelList[c].add(cell);
                }
                row[c] = i;
                continue;
            }
            if (rules[c] == Rule.INFERRED && options.inferCategories() && !CsvTables.isDecimal(cell)) {
                textual[c] = true;   // read again as a declared categorical column
                row[c] = Double.NaN;
                continue;
            }
            double v = parse(cell, line, labels.get(c));
            if (!Double.isNaN(v) && (v != Math.rint(v) || Math.abs(v) > 0x1p52)) {
                nonWhole[c] = true;
                if (rules[c] == Rule.INTEGER) {
                    problems.add(line, labels.get(c), "cell " + CsvTables.quote(cell) + " in a column declared integer;"
                            + " expected a whole number within +-2^52 or the missing-value token "
                            + CsvTables.quote(missing));
                    good = false;
                }
            }
            if (Double.isNaN(v)) {
                good = false;
            } else if (v != 0.0 && v != 1.0) {
                nonBinary[c] = true;
                if (rules[c] == Rule.BINARY) {
                    problems.add(line, labels.get(c), "cell " + CsvTables.quote(cell) + " in a column declared binary;"
                            + " expected 0, 1 or the missing-value token " + CsvTables.quote(missing));
                    good = false;
                }
            }
            row[c] = v;
        }
        return good;
    }

    /** The value of a cell that is not the missing token, or NaN after recording why it has none. */
    private double parse(String cell, long line, String label) {
        if (CsvTables.isDecimal(cell)) {
            double v = Double.parseDouble(cell);
            if (Double.isInfinite(v)) {
                problems.add(line, label, "cell " + CsvTables.quote(cell)
                        + " is too large for a double (it would be infinite); expected a finite number");
                return Double.NaN;
            }
            return v;
        }
        String missing = CsvTables.quote(options.missingToken());
        String lower = cell.toLowerCase(Locale.ROOT);
        if (CsvTables.NON_FINITE.matcher(cell).matches()) {
            problems.add(line, label, "cell " + CsvTables.quote(cell) + " is not a finite number; expected a finite"
                    + " number or the missing-value token " + missing);
        } else {
            problems.add(line, label, "cell " + CsvTables.quote(cell) + " is not a number; expected a decimal number"
                    + " such as 1.5 or -2e-3, or the missing-value token " + missing + hint(cell, lower));
        }
        return Double.NaN;
    }

    /** A likely cause of a cell that is not a number, or "". */
    private String hint(String cell, String lower) {
        if (cell.matches("[+-]?\\d+,\\d+")) {
            return " (a decimal comma? write the point: " + cell.replace(',', '.') + ")";
        }
        char d = options.delimiter();
        for (char other : new char[] {',', ';', '\t', '|'}) {
            if (other != d && cell.indexOf(other) >= 0) {
                return " (is " + (other == '\t' ? "the tab" : "'" + other + "'") + " the file's delimiter? see"
                        + " CsvReader.delimiter)";
            }
        }
        if (Arrays.asList("na", "n/a", "null", "none", "nil", "-", "?", ".", "missing").contains(lower)) {
            return " (if it marks a missing cell, read with missingToken(\"" + cell + "\"))";
        }
        return "";
    }

    static String count(long n, String noun) {
        return n + " " + noun + (n == 1 ? "" : "s");
    }

    /** Collects problems up to the cap and counts the rest. */
    static final class Problems {
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
}
