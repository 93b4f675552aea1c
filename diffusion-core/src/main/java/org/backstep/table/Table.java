package org.backstep.table;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.function.IntPredicate;
import org.backstep.schedule.Require;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * An immutable table of numbers: named columns, each {@link ColumnKind#CONTINUOUS continuous} or
 * {@link ColumnKind#BINARY binary}, with missing cells stored as NaN. Every value is a double.
 *
 * <p>Invariants, checked by every factory: at least one column; column names unique, not blank and
 * without leading or trailing white space; one kind per column; every row as long as the list of
 * names; no infinite cell; binary cells in {0, 1, NaN} (a binary -0.0 is stored as 0.0). Rows may
 * be zero.
 *
 * <p>Arrays passed in are copied and arrays returned are copies, so a table never changes.
 * {@link #equals(Object)} is exact: same names, kinds and cells bit for bit (every NaN equal to every
 * NaN, as in {@link Arrays#equals(double[], double[])}). Row and column indices are 0-based.
 * {@link #toString()} is a one-line summary; {@link #toText(int)} prints the cells.
 *
 * <p>(This file stays one class of about 600 lines: every method reads the one private row-major
 * cell array, and splitting the selections or the digest out would hand that array to other
 * classes; the text layout lives in {@code TableText}, which needs only the public accessors.)
 *
 * <p>One file of more than 400 lines: the table value and its row and column operations are one immutable type whose invariants (kinds, 0/1 binary cells, copies in and out) are checked in one place.
 */
public final class Table {

    /** The most cells a table holds (one Java array). */
    static final int MAX_CELLS = Integer.MAX_VALUE - 8;

    /**
     * The most categories of one categorical column, 65,536: far beyond the 1,000 of issue 12, and
     * small enough that a column's labels and the network's one logit per category stay a few
     * megabytes (common practice, no source).
     */
    public static final int MAX_CATEGORIES = 1 << 16;

    private final List<String> names;
    private final List<ColumnKind> kinds;
    private final Map<String, Integer> index;
    private final Layout layout;
    private final int rows;
    private final int columns;
    private final double[] cells; // row-major, cells[r * columns + c]
    private final int missing;
    private final int[] continuous;
    private final int[] binary;
    private final int[] categorical;
    private final int[] integer;

    private Table(Layout layout, int rows, double[] cells) {
        this.layout = layout;
        this.names = layout.names;
        this.kinds = layout.kinds;
        this.index = layout.index;
        this.rows = rows;
        this.columns = names.size();
        this.cells = cells;
        int m = 0;
        for (double v : cells) {
            if (Double.isNaN(v)) {
                m++;
            }
        }
        this.missing = m;
        this.continuous = indicesOf(kinds, ColumnKind.CONTINUOUS);
        this.binary = indicesOf(kinds, ColumnKind.BINARY);
        this.categorical = indicesOf(kinds, ColumnKind.CATEGORICAL);
        this.integer = indicesOf(kinds, ColumnKind.INTEGER);
    }

    // ------------------------------------------------------------------ factories

    /**
     * A table with the given column names, kinds and rows. The rows are copied.
     *
     * @param names the column names: unique, not blank, no leading or trailing white space (not modified)
     * @param kinds one kind per column (not modified)
     * @param rows the cells, {@code rows[r][c]}; NaN marks a missing cell (not modified)
     * @return the table
     * @throws IllegalArgumentException naming the offending name, row index, column or cell if an
     *     invariant of this class is broken
     */
    public static Table of(List<String> names, List<ColumnKind> kinds, double[][] rows) {
        Require.notNull("rows", rows);
        Layout layout = Layout.of(names, kinds);
        return layout.build(rows);
    }

    /**
     * A table with categorical columns: each {@link ColumnKind#CATEGORICAL} column's cells hold the
     * index 0..K-1 of a label in {@code categories.get(name)} (or NaN). The rows are copied.
     *
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @param categories for each categorical column, its labels in order: 1 to {@link #MAX_CATEGORIES}
     *     distinct, non-null, non-blank labels without leading or trailing white space; no entry for
     *     other columns (not modified)
     * @param rows the cells, {@code rows[r][c]}; NaN marks a missing cell (not modified)
     * @return the table
     * @throws IllegalArgumentException naming the column, label, row or cell that breaks an invariant
     */
    public static Table of(List<String> names, List<ColumnKind> kinds, Map<String, List<String>> categories,
            double[][] rows) {
        Require.notNull("rows", rows);
        Require.notNull("categories", categories);
        return Layout.of(names, kinds, categories).build(rows);
    }

    /**
     * A table whose columns are named {@code "c0", "c1", ...}.
     *
     * @param rows the cells, {@code rows[r][c]}; NaN marks a missing cell (not modified)
     * @param kinds one kind per column; their count sets the column count (not modified)
     * @return the table
     * @throws IllegalArgumentException as {@link #of(List, List, double[][])}
     */
    public static Table of(double[][] rows, ColumnKind... kinds) {
        Require.notNull("kinds", kinds);
        List<String> generated = new ArrayList<>(kinds.length);
        for (int c = 0; c < kinds.length; c++) {
            generated.add("c" + c);
        }
        return of(generated, Arrays.asList(kinds), rows);
    }

    /**
     * A table from a rank-2 ND4J matrix of shape [rows, columns], in any floating-point type; each
     * value is widened to double exactly.
     *
     * @param matrix the cells, shape [rows, names.size()] (not modified)
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @return the table
     * @throws IllegalArgumentException if the matrix is not rank 2, its column count differs from
     *     the names, or an invariant of this class is broken
     */
    public static Table fromArray(INDArray matrix, List<String> names, List<ColumnKind> kinds) {
        Require.notNull("matrix", matrix);
        Layout layout = Layout.of(names, kinds);
        long[] shape = matrix.shape();
        if (matrix.rank() != 2 || shape[1] != layout.names.size()) {
            throw new IllegalArgumentException("matrix has shape " + Arrays.toString(shape)
                    + "; expected [rows, " + layout.names.size() + "] (one column per name)");
        }
        if (!matrix.dataType().isFPType()) {
            throw new IllegalArgumentException("matrix has data type " + matrix.dataType()
                    + "; expected a floating-point type");
        }
        if (shape[0] == 0) {
            return layout.build(new double[0][]);
        }
        double[][] values = matrix.castTo(DataType.DOUBLE).toDoubleMatrix();
        return layout.build(values);
    }

    /**
     * A table with this table's names and kinds and other rows.
     *
     * @param newRows the cells, {@code newRows[r][c]} (not modified)
     * @return the new table
     * @throws IllegalArgumentException as {@link #of(List, List, double[][])}
     */
    public Table withRows(double[][] newRows) {
        Require.notNull("rows", newRows);
        return layout.build(newRows);
    }

    // ------------------------------------------------------------------ shape and layout

    /** @return the number of rows (possibly 0) */
    public int rows() {
        return rows;
    }

    /** @return the number of columns (at least 1) */
    public int columns() {
        return columns;
    }

    /** @return the column names, in order (unmodifiable) */
    public List<String> names() {
        return names;
    }

    /** @return the column kinds, in order (unmodifiable) */
    public List<ColumnKind> kinds() {
        return kinds;
    }

    /**
     * @param column the column index, 0-based
     * @return the name of that column
     * @throws IllegalArgumentException if the index is out of range
     */
    public String name(int column) {
        checkColumn(column);
        return names.get(column);
    }

    /**
     * @param column the column index, 0-based
     * @return the kind of that column
     * @throws IllegalArgumentException if the index is out of range
     */
    public ColumnKind kind(int column) {
        checkColumn(column);
        return kinds.get(column);
    }

    /**
     * @param name a column name
     * @return the index of that column
     * @throws IllegalArgumentException naming {@code name} if the table has no such column
     */
    public int indexOf(String name) {
        Integer i = index.get(name);
        if (i == null) {
            throw new IllegalArgumentException("column '" + name + "' is not in the table; its columns are " + names);
        }
        return i;
    }

    /** @return the indices of the continuous columns, in increasing order (a copy) */
    public int[] continuousColumns() {
        return continuous.clone();
    }

    /** @return the indices of the binary columns, in increasing order (a copy) */
    public int[] binaryColumns() {
        return binary.clone();
    }

    /** @return the indices of the integer columns, in increasing order (a copy) */
    public int[] integerColumns() {
        return integer.clone();
    }

    /** @return the indices of the categorical columns, in increasing order (a copy) */
    public int[] categoricalColumns() {
        return categorical.clone();
    }

    /**
     * @param column the column index, 0-based
     * @return the labels of a categorical column in index order (unmodifiable); empty for other kinds
     * @throws IllegalArgumentException if the index is out of range
     */
    public List<String> categories(int column) {
        checkColumn(column);
        return layout.categories.get(column);
    }

    /** @return the labels of every categorical column by name, in table order (unmodifiable) */
    public Map<String, List<String>> categories() {
        return layout.categoryMap();
    }

    /**
     * @param row the row index, 0-based
     * @param column the index of a categorical column
     * @return the cell's label, or null if the cell is missing
     * @throws IllegalArgumentException if an index is out of range or the column is not categorical
     */
    public String label(int row, int column) {
        double v = get(row, column);
        if (kinds.get(column) != ColumnKind.CATEGORICAL) {
            throw new IllegalArgumentException("column '" + names.get(column) + "' is " + kinds.get(column)
                    + "; expected a CATEGORICAL column");
        }
        return Double.isNaN(v) ? null : layout.categories.get(column).get((int) v);
    }

    /**
     * This table with a categorical column's cells re-indexed to other labels, e.g. a model's
     * categories, matched by label text. A label of this table that {@code labels} lacks is refused
     * by name (never mapped to a wrong index).
     *
     * @param column the name of a categorical column
     * @param labels the new labels in index order, as for {@link #of(List, List, Map, double[][])} (not modified)
     * @return a table whose column has {@code labels} and the same label in every cell
     * @throws IllegalArgumentException naming the column, and the row and label not in {@code labels}
     */
    public Table recode(String column, List<String> labels) {
        Require.notNull("column", column);
        Require.notNull("labels", labels);
        int c = indexOf(column);
        if (kinds.get(c) != ColumnKind.CATEGORICAL) {
            throw new IllegalArgumentException("column '" + column + "' is " + kinds.get(c)
                    + "; expected a CATEGORICAL column");
        }
        List<String> old = layout.categories.get(c);
        if (old.equals(labels)) {
            return this;
        }
        Map<String, List<String>> cats = new java.util.LinkedHashMap<>(layout.categoryMap());
        cats.put(column, labels);
        Layout target = Layout.of(names, kinds, cats);
        Map<String, Integer> at = new HashMap<>();
        for (int i = 0; i < labels.size(); i++) {
            at.put(labels.get(i), i);
        }
        double[] out = cells.clone();
        for (int r = 0; r < rows; r++) {
            double v = out[r * columns + c];
            if (Double.isNaN(v)) {
                continue;
            }
            String label = old.get((int) v);
            Integer i = at.get(label);
            if (i == null) {
                throw new IllegalArgumentException("row " + r + ", column '" + column + "' has the category '" + label
                        + "', which is not among the column's " + labels.size() + " known categories "
                        + CsvTables.preview(labels));
            }
            out[r * columns + c] = i;
        }
        return new Table(target, rows, out);
    }

    // ------------------------------------------------------------------ cells

    /**
     * @param row the row index, 0-based
     * @param column the column index, 0-based
     * @return the cell, NaN if missing
     * @throws IllegalArgumentException if an index is out of range
     */
    public double get(int row, int column) {
        checkRow(row);
        checkColumn(column);
        return cells[row * columns + column];
    }

    /**
     * @param r the row index, 0-based
     * @return a copy of that row
     * @throws IllegalArgumentException if the index is out of range
     */
    public double[] row(int r) {
        checkRow(r);
        return Arrays.copyOfRange(cells, r * columns, (r + 1) * columns);
    }

    /**
     * @param c the column index, 0-based
     * @return a copy of that column, one value per row
     * @throws IllegalArgumentException if the index is out of range
     */
    public double[] column(int c) {
        checkColumn(c);
        double[] out = new double[rows];
        for (int r = 0; r < rows; r++) {
            out[r] = cells[r * columns + c];
        }
        return out;
    }

    /** @return a copy of every cell, {@code [row][column]} */
    public double[][] toArray() {
        double[][] out = new double[rows][];
        for (int r = 0; r < rows; r++) {
            out[r] = Arrays.copyOfRange(cells, r * columns, (r + 1) * columns);
        }
        return out;
    }

    /**
     * The cells as a new ND4J matrix of shape [rows, columns] in C order; missing cells stay NaN.
     *
     * @param type a floating-point data type (FLOAT rounds each value to the nearest float)
     * @return a new matrix
     * @throws IllegalArgumentException if {@code type} is not a floating-point type
     */
    public INDArray toMatrix(DataType type) {
        Require.notNull("type", type);
        if (!type.isFPType()) {
            throw new IllegalArgumentException("type is " + type + "; expected a floating-point data type");
        }
        if (rows == 0) {
            return Nd4j.create(type, 0, columns);
        }
        long[] shape = {rows, columns};
        if (type == DataType.FLOAT) {
            float[] f = new float[cells.length];
            for (int i = 0; i < f.length; i++) {
                f[i] = (float) cells[i];
            }
            return Nd4j.create(f, shape, DataType.FLOAT);
        }
        INDArray d = Nd4j.create(cells.clone(), shape, DataType.DOUBLE);
        return type == DataType.DOUBLE ? d : d.castTo(type);
    }

    /** @return true if any cell is missing (NaN) */
    public boolean hasMissing() {
        return missing > 0;
    }

    /** @return the number of missing (NaN) cells */
    public int missingCount() {
        return missing;
    }

    /** @return the indices of the rows without a missing cell, in order */
    public int[] completeRowIndices() {
        return java.util.stream.IntStream.range(0, rows()).filter(this::rowComplete).toArray();
    }

    /** @return the indices of the rows with at least one missing cell, in order */
    public int[] incompleteRowIndices() {
        return java.util.stream.IntStream.range(0, rows()).filter(r -> !rowComplete(r)).toArray();
    }

    private boolean rowComplete(int r) {
        for (int c = 0; c < columns(); c++) {
            if (Double.isNaN(get(r, c))) {
                return false;
            }
        }
        return true;
    }

    /** @return the rows without a missing cell (this table itself when none is missing) */
    public Table completeRows() {
        return hasMissing() ? selectRows(completeRowIndices()) : this;
    }

    // ------------------------------------------------------------------ selections

    /**
     * The given rows, in the given order; an index may repeat (as in a bootstrap sample).
     *
     * @param rowIndices row indices, 0-based (not modified)
     * @return a new table with {@code rowIndices.length} rows and the same columns
     * @throws IllegalArgumentException if an index is out of range
     */
    public Table selectRows(int[] rowIndices) {
        Require.notNull("rowIndices", rowIndices);
        Layout.checkSize(rowIndices.length, columns);
        double[] out = new double[rowIndices.length * columns];
        for (int i = 0; i < rowIndices.length; i++) {
            int r = rowIndices[i];
            if (r < 0 || r >= rows) {
                throw new IllegalArgumentException("rowIndices[" + i + "] is " + r
                        + "; expected a row index from 0 to " + (rows - 1));
            }
            System.arraycopy(cells, r * columns, out, i * columns, columns);
        }
        return new Table(layout, rowIndices.length, out);
    }

    /**
     * The rows whose 0-based index passes the test, in order; for example the test rows of a fixed
     * split are {@code filterRows(i -> i % 5 == 0)}.
     *
     * @param keepRow true for each row index to keep
     * @return a new table with the same columns
     */
    public Table filterRows(IntPredicate keepRow) {
        Require.notNull("keepRow", keepRow);
        int[] kept = new int[rows];
        int n = 0;
        for (int r = 0; r < rows; r++) {
            if (keepRow.test(r)) {
                kept[n++] = r;
            }
        }
        return selectRows(Arrays.copyOf(kept, n));
    }

    /**
     * The named columns, in the given order, with their kinds.
     *
     * @param selected column names, at least one, no repeats
     * @return a new table with the same rows
     * @throws IllegalArgumentException naming an unknown or repeated column
     */
    public Table selectColumns(String... selected) {
        Require.notNull("names", selected);
        if (selected.length == 0) {
            throw new IllegalArgumentException("names is empty; expected at least one column name");
        }
        int[] idx = new int[selected.length];
        List<ColumnKind> newKinds = new ArrayList<>(selected.length);
        Map<String, List<String>> cats = new HashMap<>();
        for (int i = 0; i < selected.length; i++) {
            idx[i] = indexOf(selected[i]);
            newKinds.add(kinds.get(idx[i]));
            if (kinds.get(idx[i]) == ColumnKind.CATEGORICAL) {
                cats.put(selected[i], layout.categories.get(idx[i]));
            }
        }
        Layout layout = Layout.of(Arrays.asList(selected), newKinds, cats);
        double[] out = new double[rows * selected.length];
        for (int r = 0; r < rows; r++) {
            for (int i = 0; i < idx.length; i++) {
                out[r * idx.length + i] = cells[r * columns + idx[i]];
            }
        }
        return new Table(layout, rows, out);
    }

    // ------------------------------------------------------------------ provenance

    /**
     * The SHA-256 of this table's canonical encoding, as 64 lower-case hex digits, for provenance
     * (a fitted model records it for its training rows). The encoding, all integers little-endian:
     * <pre>
     *   int32 column count, int32 row count,
     *   per column: int32 byte length of the UTF-8 name, the UTF-8 bytes, one byte 'C' (continuous) or 'B' (binary)
     *       or 'I' (integer) or 'K' (categorical, then int32 K and per label its int32 UTF-8 byte length and bytes),
     *   per cell, row by row: the int64 Double.doubleToLongBits of the value (every NaN as 0x7ff8000000000000)
     * </pre>
     * Equal tables have equal hashes; the hash depends on names, kinds, order and every bit of
     * every cell. (SHA-256: NIST FIPS 180-4.)
     *
     * @return the hex digest
     */
    public String sha256() {
        MessageDigest md;
        try {
            md = MessageDigest.getInstance("SHA-256");
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("every Java platform provides SHA-256", e);
        }
        ByteBuffer head = ByteBuffer.allocate(8).order(ByteOrder.LITTLE_ENDIAN);
        head.putInt(columns).putInt(rows);
        md.update(head.array());
        for (int c = 0; c < columns; c++) {
            byte[] utf8 = names.get(c).getBytes(StandardCharsets.UTF_8);
            ByteBuffer col = ByteBuffer.allocate(4 + utf8.length + 1).order(ByteOrder.LITTLE_ENDIAN);
            ColumnKind kind = kinds.get(c);
            col.putInt(utf8.length).put(utf8).put((byte) (kind == ColumnKind.CONTINUOUS ? 'C'
                    : kind == ColumnKind.BINARY ? 'B' : kind == ColumnKind.INTEGER ? 'I' : 'K'));
            md.update(col.array());
            if (kind == ColumnKind.CATEGORICAL) {
                List<String> labels = layout.categories.get(c);
                md.update(ByteBuffer.allocate(4).order(ByteOrder.LITTLE_ENDIAN).putInt(labels.size()).array());
                for (String label : labels) {
                    byte[] b = label.getBytes(StandardCharsets.UTF_8);
                    md.update(ByteBuffer.allocate(4).order(ByteOrder.LITTLE_ENDIAN).putInt(b.length).array());
                    md.update(b);
                }
            }
        }
        ByteBuffer buf = ByteBuffer.allocate(8 * 1024).order(ByteOrder.LITTLE_ENDIAN);
        for (double v : cells) {
            if (!buf.hasRemaining()) {
                md.update(buf.array(), 0, buf.position());
                buf.clear();
            }
            buf.putLong(Double.doubleToLongBits(v));
        }
        md.update(buf.array(), 0, buf.position());
        StringBuilder hex = new StringBuilder(64);
        for (byte b : md.digest()) {
            hex.append(Character.forDigit((b >> 4) & 0xf, 16)).append(Character.forDigit(b & 0xf, 16));
        }
        return hex.toString();
    }

    // ------------------------------------------------------------------ object

    /**
     * The printout of the first rows, for JShell and logs: a summary line, a header line with each
     * column's kind in brackets ({@code temp_c [cont]}, {@code door_open [bin]}), then one line per
     * row labelled by its 0-based index, cells right-aligned; missing cells show as {@code ?}, binary
     * cells as 0 or 1, continuous cells by {@link Double#toString(double)}; a last line names the rows
     * left out. Every column is shown.
     *
     * @param maxRows how many rows to show at most, 0 or more
     * @return the printout, lines ending with '\n'
     * @throws IllegalArgumentException if {@code maxRows} is negative
     */
    public String toText(int maxRows) {
        return toText(maxRows, columns);
    }

    /**
     * The printout of {@link #toText(int)}, of at most {@code maxColumns} columns (the first ones);
     * the last line names the rows and columns left out.
     *
     * @param maxRows how many rows to show at most, 0 or more
     * @param maxColumns how many columns to show at most, 1 or more
     * @return the printout, lines ending with '\n'
     * @throws IllegalArgumentException if {@code maxRows} is negative or {@code maxColumns} below 1
     */
    public String toText(int maxRows, int maxColumns) {
        Require.atLeast("maxRows", maxRows, 0);
        Require.atLeast("maxColumns", maxColumns, 1);
        return TableText.text(this, maxRows, maxColumns);
    }

    /**
     * A one-line summary: shape, kinds and missing cells, e.g.
     * {@code Table: 150 rows x 4 columns (4 continuous, 0 binary), no missing cells}. The cells are
     * shown by {@link #toText(int)}.
     *
     * @return the summary, without a line break
     */
    @Override
    public String toString() {
        return TableText.summary(this);
    }

    /**
     * Exact equality: same names, kinds, row count and cells bit for bit (NaN equals NaN).
     *
     * @param o another object
     * @return true if {@code o} is an equal table
     */
    @Override
    public boolean equals(Object o) {
        if (this == o) {
            return true;
        }
        if (!(o instanceof Table)) {
            return false;
        }
        Table t = (Table) o;
        return rows == t.rows && names.equals(t.names) && kinds.equals(t.kinds)
                && layout.categories.equals(t.layout.categories) && Arrays.equals(cells, t.cells);
    }

    /** @return a hash consistent with {@link #equals(Object)} */
    @Override
    public int hashCode() {
        return 31 * (31 * names.hashCode() + kinds.hashCode()) + Arrays.hashCode(cells);
    }

    // ------------------------------------------------------------------ internals

    private void checkRow(int r) {
        if (r < 0 || r >= rows) {
            throw new IllegalArgumentException("row is " + r + "; expected a row index from 0 to " + (rows - 1)
                    + " (the table has " + rows + " rows)");
        }
    }

    private void checkColumn(int c) {
        if (c < 0 || c >= columns) {
            throw new IllegalArgumentException("column is " + c + "; expected a column index from 0 to "
                    + (columns - 1));
        }
    }

    private static int[] indicesOf(List<ColumnKind> kinds, ColumnKind wanted) {
        return java.util.stream.IntStream.range(0, kinds.size()).filter(i -> kinds.get(i) == wanted).toArray();
    }

    /** Validated names and kinds, shared by tables with the same columns. */
    static final class Layout {
        final List<String> names;
        final List<ColumnKind> kinds;
        final Map<String, Integer> index;
        /** Per column its labels (unmodifiable), empty for columns that are not categorical. */
        final List<List<String>> categories;

        private Layout(List<String> names, List<ColumnKind> kinds, Map<String, Integer> index,
                List<List<String>> categories) {
            this.names = names;
            this.kinds = kinds;
            this.index = index;
            this.categories = categories;
        }

        static Layout of(List<String> names, List<ColumnKind> kinds) {
            return of(names, kinds, Map.of());
        }

        /** The labels of the categorical columns by name, in table order (unmodifiable). */
        Map<String, List<String>> categoryMap() {
            Map<String, List<String>> out = new java.util.LinkedHashMap<>();
            for (int c = 0; c < names.size(); c++) {
                if (kinds.get(c) == ColumnKind.CATEGORICAL) {
                    out.put(names.get(c), categories.get(c));
                }
            }
            return Collections.unmodifiableMap(out);
        }

        static Layout of(List<String> names, List<ColumnKind> kinds, Map<String, List<String>> categories) {
            Require.notNull("names", names);
            Require.notNull("kinds", kinds);
            checkNames(names);
            if (kinds.size() != names.size()) {
                throw new IllegalArgumentException("kinds has " + kinds.size() + " entries; expected "
                        + names.size() + " (one per column name)");
            }
            for (int c = 0; c < kinds.size(); c++) {
                if (kinds.get(c) == null) {
                    throw new IllegalArgumentException("kinds[" + c + "] (column '" + names.get(c)
                            + "') is null; expected CONTINUOUS, BINARY, CATEGORICAL or INTEGER");
                }
            }
            Map<String, Integer> index = new HashMap<>();
            for (int c = 0; c < names.size(); c++) {
                index.put(names.get(c), c);
            }
            for (String name : categories.keySet()) {
                Integer c = index.get(name);
                if (c == null || kinds.get(c) != ColumnKind.CATEGORICAL) {
                    throw new IllegalArgumentException("categories names '" + name + "', which is "
                            + (c == null ? "not a column " + names : kinds.get(c) + "; expected labels only for CATEGORICAL columns"));
                }
            }
            List<List<String>> labels = new ArrayList<>(names.size());
            for (int c = 0; c < names.size(); c++) {
                if (kinds.get(c) != ColumnKind.CATEGORICAL) {
                    labels.add(List.of());
                    continue;
                }
                List<String> given = categories.get(names.get(c));
                if (given == null) {
                    throw new IllegalArgumentException("column '" + names.get(c) + "' is CATEGORICAL but categories has"
                            + " no labels for it; expected its labels in index order (Table.of with categories)");
                }
                labels.add(checkLabels(names.get(c), given));
            }
            return new Layout(Collections.unmodifiableList(new ArrayList<>(names)),
                    Collections.unmodifiableList(new ArrayList<>(kinds)), Collections.unmodifiableMap(index),
                    Collections.unmodifiableList(labels));
        }

        /** Checks one column's labels: 1 to MAX_CATEGORIES, distinct, non-blank, not padded. */
        static List<String> checkLabels(String column, List<String> given) {
            if (given.isEmpty() || given.size() > MAX_CATEGORIES) {
                throw new IllegalArgumentException("column '" + column + "' has " + given.size()
                        + " categories; expected 1 to " + MAX_CATEGORIES);
            }
            Set<String> seen = new HashSet<>();
            for (int i = 0; i < given.size(); i++) {
                String l = given.get(i);
                if (l == null || l.isBlank() || !l.equals(l.strip())) {
                    throw new IllegalArgumentException("category " + i + " of column '" + column + "' is "
                            + (l == null ? "null" : "'" + l + "'")
                            + "; expected a non-blank label without leading or trailing white space");
                }
                if (!seen.add(l)) {
                    throw new IllegalArgumentException("category " + i + " of column '" + column + "' is '" + l
                            + "', which repeats an earlier label; expected distinct labels");
                }
            }
            return List.copyOf(given);
        }

        /** Checks the rules for column names: at least one, none null, blank, padded or repeated. */
        static void checkNames(List<String> names) {
            if (names.isEmpty()) {
                throw new IllegalArgumentException("names is empty; expected at least one column");
            }
            Set<String> seen = new HashSet<>();
            for (int c = 0; c < names.size(); c++) {
                String n = names.get(c);
                if (n == null || n.isBlank()) {
                    throw new IllegalArgumentException("names[" + c + "] is " + (n == null ? "null" : "'" + n + "'")
                            + "; expected a non-blank column name");
                }
                if (!n.equals(n.strip())) {
                    throw new IllegalArgumentException("names[" + c + "] is '" + n
                            + "'; expected no leading or trailing white space");
                }
                if (!seen.add(n)) {
                    throw new IllegalArgumentException("names[" + c + "] is '" + n
                            + "', which repeats an earlier column name; expected unique names");
                }
            }
        }

        static void checkSize(long rows, int cols) {
            if (rows * cols > MAX_CELLS) {
                throw new IllegalArgumentException("the table would have " + rows + " x " + cols + " = "
                        + rows * cols + " cells; expected at most " + MAX_CELLS);
            }
        }

        Table build(double[][] rowArrays) {
            int cols = names.size();
            checkSize(rowArrays.length, cols);
            double[] cells = new double[rowArrays.length * cols];
            for (int r = 0; r < rowArrays.length; r++) {
                double[] row = rowArrays[r];
                if (row == null || row.length != cols) {
                    throw new IllegalArgumentException("rows[" + r + "] has "
                            + (row == null ? "no array (null)" : row.length + " values")
                            + "; expected " + cols + " (one per column)");
                }
                System.arraycopy(row, 0, cells, r * cols, cols);
            }
            return adopt(rowArrays.length, cells);
        }

        /**
         * A table that takes {@code cells} as its own storage, without a copy: the caller must not
         * keep or change the array. Checks every cell and stores a binary -0.0 as 0.0 in place.
         *
         * @param rows the row count
         * @param cells row-major, {@code cells[r * columns + c]}, exactly rows x columns long
         */
        Table adopt(int rows, double[] cells) {
            int cols = names.size();
            if ((long) rows * cols != cells.length) {
                throw new IllegalArgumentException("cells has " + cells.length + " values; expected " + rows + " x "
                        + cols);
            }
            boolean[] binary = new boolean[cols];
            int[] k = new int[cols];
            boolean[] whole = new boolean[cols];
            for (int c = 0; c < cols; c++) {
                whole[c] = kinds.get(c) == ColumnKind.INTEGER;
                binary[c] = kinds.get(c) == ColumnKind.BINARY;
                k[c] = categories.get(c).size();
            }
            for (int r = 0, i = 0; r < rows; r++) {
                for (int c = 0; c < cols; c++, i++) {
                    double v = cells[i];
                    if (Double.isInfinite(v)) {
                        throw new IllegalArgumentException("cell at row " + r + ", column '" + names.get(c)
                                + "' is " + v + "; expected a finite number or NaN for a missing cell");
                    }
                    if (binary[c]) {
                        if (v == 0.0) {
                            cells[i] = 0.0; // stores -0.0 as 0.0
                        } else if (v != 1.0 && !Double.isNaN(v)) {
                            throw new IllegalArgumentException("cell at row " + r + ", column '" + names.get(c)
                                    + "' is " + v + "; the column is BINARY, expected 0, 1 or NaN for a missing cell");
                        }
                    } else if (whole[c] && !Double.isNaN(v)) {
                        if (v != Math.rint(v) || Math.abs(v) > 0x1p52) {
                            throw new IllegalArgumentException("cell at row " + r + ", column '" + names.get(c)
                                    + "' is " + v + "; the column is INTEGER, expected a whole number within +-2^52"
                                    + " or NaN for a missing cell");
                        }
                        if (v == 0.0) {
                            cells[i] = 0.0;
                        }
                    } else if (k[c] > 0 && !Double.isNaN(v)) {
                        if (v == 0.0) {
                            cells[i] = 0.0;
                        } else if (v != Math.rint(v) || v < 0 || v >= k[c]) {
                            throw new IllegalArgumentException("cell at row " + r + ", column '" + names.get(c)
                                    + "' is " + v + "; the column is CATEGORICAL with " + k[c]
                                    + " categories, expected an index 0.." + (k[c] - 1) + " or NaN for a missing cell");
                        }
                    }
                }
            }
            return new Table(this, rows, cells);
        }
    }
}
