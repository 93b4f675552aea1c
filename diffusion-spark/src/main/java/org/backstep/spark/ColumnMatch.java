package org.backstep.spark;

import java.io.Serializable;
import java.math.BigDecimal;
import java.util.Arrays;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

import org.apache.spark.sql.Row;
import org.apache.spark.sql.types.BooleanType;
import org.apache.spark.sql.types.ByteType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DecimalType;
import org.apache.spark.sql.types.DoubleType;
import org.apache.spark.sql.types.FloatType;
import org.apache.spark.sql.types.IntegerType;
import org.apache.spark.sql.types.LongType;
import org.apache.spark.sql.types.ShortType;
import org.apache.spark.sql.types.StringType;
import org.apache.spark.sql.types.StructType;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Where the model's columns sit in a DataFrame's rows, checked by name and type, and the reading of
 * one row's cells as doubles. A continuous column may be any numeric type (double, float, int, long,
 * short, byte, decimal); a binary column a boolean, or a numeric type holding 0 and 1; an integer
 * column an integral type (long, int, short, byte), or a double, float or decimal column whose
 * every value is a whole number (as counts with gaps arrive from files written by tools without
 * a nullable integer type), within +-2^52, a fractional value refused naming its row and
 * column; a categorical column a string
 * column of labels, read as the index of the label among the model's ({@code Table.categories}).
 * A label the model's training table did not have reads as {@link #UNSEEN}. A null cell and a NaN
 * are a missing cell. The optional row key column is an integer or a string.
 */
final class ColumnMatch implements Serializable {

    private static final long serialVersionUID = 1L;

    private final String[] inputCols;
    private final ColumnKind[] kinds;
    private final int[] index;
    private final int keyIndex;          // -1: the row's content is its key
    private final boolean stringKey;
    private final String keyCol;
    private final String[] modelNames;
    private final List<List<String>> labels;                 // per column: the model's labels, or null
    /** Per column: label -> index, or null; derived from {@link #labels}, rebuilt after deserialization. */
    private transient List<Map<String, Integer>> labelIndex;

    /** The cell of a categorical label the model does not know (its training table did not have it). */
    static final double UNSEEN = -1.0;

    /** The largest magnitude of an integer cell (Table's rule: whole numbers within +-2^52). */
    private static final long MAX_INTEGER = 1L << 52;

    private ColumnMatch(String[] inputCols, ColumnKind[] kinds, int[] index, int keyIndex, boolean stringKey, String keyCol,
                        String[] modelNames, List<List<String>> labels) {
        this.inputCols = inputCols;
        this.kinds = kinds;
        this.index = index;
        this.keyIndex = keyIndex;
        this.stringKey = stringKey;
        this.keyCol = keyCol;
        this.modelNames = modelNames;
        this.labels = labels;
    }

    /** @return per column, label -> index (null for a column without labels), built at first use */
    private List<Map<String, Integer>> labelIndex() {
        if (labelIndex == null) {
            List<Map<String, Integer>> built = new ArrayList<>();
            for (List<String> l : labels) {
                built.add(l == null ? null : labelMap(l));
            }
            labelIndex = built;
        }
        return labelIndex;
    }

    /** @return label -> its index in {@code labels} */
    static Map<String, Integer> labelMap(List<String> labels) {
        Map<String, Integer> m = new HashMap<>();
        for (int k = 0; k < labels.size(); k++) {
            m.put(labels.get(k), k);
        }
        return m;
    }

    /**
     * {@link #of(StructType, String[], List, List, Map, String)} for a model without categorical
     * columns.
     *
     * @throws IllegalArgumentException naming the missing or mistyped column, or a categorical kind
     */
    static ColumnMatch of(StructType schema, String[] inputCols, List<String> modelNames, List<ColumnKind> modelKinds,
                          String keyCol) {
        return of(schema, inputCols, modelNames, modelKinds, Map.of(), keyCol);
    }

    /**
     * Matches the model's columns to a schema.
     *
     * @param schema the DataFrame's schema
     * @param inputCols the DataFrame's column for each model column, in the model's order
     * @param modelNames the model's column names (for messages)
     * @param modelKinds the model's column kinds
     * @param categories the labels of each of the model's categorical columns, by model column name
     * @param keyCol the row key column, or "" for none
     * @return the match
     * @throws IllegalArgumentException naming the missing or mistyped column
     */
    static ColumnMatch of(StructType schema, String[] inputCols, List<String> modelNames, List<ColumnKind> modelKinds,
                          Map<String, List<String>> categories, String keyCol) {
        if (inputCols.length != modelNames.size()) {
            throw new IllegalArgumentException("inputCols has " + inputCols.length + " columns " + Arrays.toString(inputCols)
                    + "; the model has " + modelNames.size() + " " + modelNames);
        }
        List<String> present = Arrays.asList(schema.fieldNames());
        int[] index = new int[inputCols.length];
        ColumnKind[] kinds = new ColumnKind[inputCols.length];
        for (int j = 0; j < inputCols.length; j++) {
            String col = inputCols[j];
            String role = col.equals(modelNames.get(j)) ? "" : " (for the model's column '" + modelNames.get(j) + "')";
            if (!present.contains(col)) {
                throw new IllegalArgumentException("the DataFrame has no column '" + col + "'" + role
                        + " that the model needs; it has " + present);
            }
            index[j] = schema.fieldIndex(col);
            kinds[j] = modelKinds.get(j);
            DataType t = schema.fields()[index[j]].dataType();
            boolean numeric = isNumeric(t);
            boolean ok = switch (kinds[j]) {
                case BINARY -> numeric || t instanceof BooleanType;
                case INTEGER -> numeric;
                case CATEGORICAL -> t instanceof StringType;
                default -> numeric;
            };
            if (!ok) {
                throw new IllegalArgumentException("column '" + col + "'" + role + " has type " + t.simpleString()
                        + "; the model's " + kinds[j].name().toLowerCase(Locale.ROOT) + " column needs "
                        + switch (kinds[j]) {
                            case BINARY -> "a boolean or a numeric type holding 0 and 1";
                            case INTEGER -> "an integral type (long, int, short or byte), or a numeric type holding whole numbers";
                            case CATEGORICAL -> "a string column of its labels";
                            default -> "a numeric type";
                        });
            }
            if (kinds[j] == ColumnKind.CATEGORICAL && categories.get(modelNames.get(j)) == null) {
                throw new IllegalArgumentException("the model's categorical column '" + modelNames.get(j)
                        + "' has no labels given");
            }
        }
        List<List<String>> labels = new ArrayList<>();
        for (int j = 0; j < inputCols.length; j++) {
            labels.add(kinds[j] == ColumnKind.CATEGORICAL ? List.copyOf(categories.get(modelNames.get(j))) : null);
        }
        int keyIndex = -1;
        boolean stringKey = false;
        if (!keyCol.isEmpty()) {
            if (!present.contains(keyCol)) {
                throw new IllegalArgumentException("the DataFrame has no row key column '" + keyCol + "'; it has " + present);
            }
            keyIndex = schema.fieldIndex(keyCol);
            DataType t = schema.fields()[keyIndex].dataType();
            stringKey = t instanceof StringType;
            if (!stringKey && !(t instanceof LongType || t instanceof IntegerType || t instanceof ShortType
                    || t instanceof ByteType)) {
                throw new IllegalArgumentException("row key column '" + keyCol + "' has type " + t.simpleString()
                        + "; expected an integer type or string");
            }
        }
        return new ColumnMatch(inputCols.clone(), kinds, index, keyIndex, stringKey, keyCol,
                modelNames.toArray(String[]::new), labels);
    }

    private static boolean isNumeric(DataType t) {
        return t instanceof DoubleType || t instanceof FloatType || t instanceof IntegerType || t instanceof LongType
                || t instanceof ShortType || t instanceof ByteType || t instanceof DecimalType;
    }

    /** @return the number of model columns */
    int columns() {
        return index.length;
    }

    /** @return the DataFrame column of model column j */
    String inputCol(int j) {
        return inputCols[j];
    }

    /**
     * The row's cells in the model's order, NaN for a missing cell.
     *
     * @param row a row of the matched schema
     * @param where how to name the row in a message
     * @return a new array
     * @throws IllegalArgumentException naming the row and column of an infinite cell or a binary
     *     cell other than 0 and 1
     */
    double[] cells(Row row, RowName where) {
        double[] x = new double[index.length];
        for (int j = 0; j < index.length; j++) {
            Object v = row.get(index[j]);
            double d;
            if (v == null) {
                d = Double.NaN;
            } else if (kinds[j] == ColumnKind.CATEGORICAL) {
                Integer k = labelIndex().get(j).get((String) v);
                x[j] = k == null ? UNSEEN : k;
                continue;
            } else if (kinds[j] == ColumnKind.INTEGER) {
                d = wholeNumber(v, row, where, j);
            } else if (v instanceof Boolean b) {
                d = b ? 1.0 : 0.0;
            } else if (v instanceof BigDecimal bd) {
                d = bd.doubleValue();
            } else {
                d = ((Number) v).doubleValue();
            }
            if (Double.isInfinite(d)) {
                throw new IllegalArgumentException(where.describe(this, row) + ", column '" + inputCols[j] + "' is " + d
                        + "; expected a finite number or a missing cell");
            }
            if (kinds[j] == ColumnKind.BINARY && !Double.isNaN(d) && d != 0.0 && d != 1.0) {
                throw new IllegalArgumentException(where.describe(this, row) + ", column '" + inputCols[j] + "' is " + d
                        + "; the model's binary column needs 0 or 1");
            }
            x[j] = d == 0.0 ? 0.0 : d;     // -0.0 as 0.0, as Table stores it
        }
        return x;
    }

    /**
     * The value of an integer column's cell: an integral value as it is, a double, float or decimal
     * value when it is a whole number (NaN stays a missing cell).
     *
     * @throws IllegalArgumentException naming the row and column of a fractional or infinite value,
     *     or one beyond +-2^52
     */
    private double wholeNumber(Object v, Row row, RowName where, int j) {
        if (v instanceof Long || v instanceof Integer || v instanceof Short || v instanceof Byte) {
            long n = ((Number) v).longValue();
            if (n > MAX_INTEGER || n < -MAX_INTEGER) {
                throw new IllegalArgumentException(where.describe(this, row) + ", column '" + inputCols[j] + "' is " + n
                        + "; the model's integer column holds whole numbers within +-2^52");
            }
            return n;
        }
        double d = v instanceof BigDecimal bd ? bd.doubleValue() : ((Number) v).doubleValue();
        if (Double.isNaN(d)) {
            return d;
        }
        boolean exact = !(v instanceof BigDecimal bd) || bd.stripTrailingZeros().scale() <= 0;
        if (!exact || d != Math.rint(d) || Math.abs(d) > MAX_INTEGER) {
            throw new IllegalArgumentException(where.describe(this, row) + ", column '" + inputCols[j] + "' is " + v
                    + "; the model's integer column holds whole numbers within +-2^52");
        }
        return d == 0.0 ? 0.0 : d;
    }

    /** @return the row's cell of model column j as the DataFrame holds it */
    Object raw(Row row, int j) {
        return row.get(index[j]);
    }

    /** @return the model's kind of model column j */
    ColumnKind kind(int j) {
        return kinds[j];
    }

    /** @return the label of category index k of model column j (a categorical column) */
    String label(int j, int k) {
        return labels.get(j).get(k);
    }

    /**
     * @param cells a row's cells from {@link #cells(Row, RowName)}
     * @return the first model column holding a label the model does not know, or -1
     */
    int unseenColumn(double[] cells) {
        for (int j = 0; j < cells.length; j++) {
            if (kinds[j] == ColumnKind.CATEGORICAL && cells[j] == UNSEEN) {
                return j;
            }
        }
        return -1;
    }

    /**
     * The refusal of a row whose categorical cell holds a label the model does not know.
     *
     * @param row the row
     * @param where how to name it
     * @param j the column ({@link #unseenColumn})
     * @param job what refuses it, e.g. "imputation"
     * @return the exception, naming the row's key (or place), the column and the label
     */
    IllegalArgumentException unseen(Row row, RowName where, int j, String job) {
        List<String> known = labels.get(j);
        return new IllegalArgumentException(where.describe(this, row) + ", column '" + inputCols[j] + "' holds the label '"
                + row.get(index[j]) + "', which is not among the " + known.size() + " labels of the model's column '"
                + modelNames[j] + "' " + (known.size() <= 20 ? known : known.subList(0, 20) + "...")
                + "; the model gives it probability zero and " + job + " cannot condition on it (scoring gives such a"
                + " row +infinity)");
    }

    /**
     * The table of some rows' cells for the core, with each categorical column's labels: the
     * model's, then, in order of first appearance, the labels of these rows that the model does not
     * know (so that the core names them; it scores such a row +infinity in a screen).
     *
     * @param names the model's column names
     * @param rows the rows (for the labels of unseen cells)
     * @param cells their cells from {@link #cells(Row, RowName)}, in the same order (not modified)
     * @param where how to name row i, for a label the core cannot hold (blank, or with white space at an end)
     * @return the table
     */
    Table table(List<String> names, List<Row> rows, double[][] cells, java.util.function.IntFunction<RowName> where) {
        Map<String, List<String>> cats = new HashMap<>();
        double[][] x = cells;
        for (int j = 0; j < kinds.length; j++) {
            if (kinds[j] != ColumnKind.CATEGORICAL) {
                continue;
            }
            LabelsSeen seen = new LabelsSeen(labels.get(j));
            for (int i = 0; i < cells.length; i++) {
                if (cells[i][j] != UNSEEN) {
                    continue;
                }
                String label = (String) rows.get(i).get(index[j]);
                int row = i;
                int col = j;
                int k = seen.indexOf(label, () -> where.apply(row).describe(this, rows.get(row)) + ", column '"
                        + inputCols[col] + "'");
                if (x == cells) {
                    x = new double[cells.length][];
                    for (int r = 0; r < cells.length; r++) {
                        x[r] = cells[r].clone();
                    }
                }
                x[i][j] = k;
            }
            cats.put(names.get(j), seen.labels());
        }
        return Table.of(names, List.of(kinds), cats, x);
    }

    /**
     * A categorical column's labels for the core: the model's, then, in order of first appearance,
     * the labels it does not know; a label the core cannot hold (blank, or with white space at an
     * end) is refused. Not thread-safe.
     */
    static final class LabelsSeen {
        private final List<String> all;
        private final Map<String, Integer> at;

        LabelsSeen(List<String> modelLabels) {
            all = new ArrayList<>(modelLabels);
            at = labelMap(modelLabels);
        }

        /**
         * @param label a cell's label
         * @param where names the cell ("the row ..., column '...'") for a refusal
         * @return its index: the model's, else its place after the model's labels
         * @throws IllegalArgumentException if a label the model does not know is blank or padded
         */
        int indexOf(String label, java.util.function.Supplier<String> where) {
            Integer k = at.get(label);
            if (k != null) {
                return k;
            }
            if (label.isBlank() || !label.strip().equals(label)) {
                throw new IllegalArgumentException(where.get() + " holds the label '" + label
                        + "', which is blank or has white space at an end; labels are matched as they are written");
            }
            at.put(label, all.size());
            all.add(label);
            return all.size() - 1;
        }

        /** @return the model's labels then the unseen ones (the live list) */
        List<String> labels() {
            return all;
        }
    }

    /**
     * The seed of the row's random stream ({@link RowSeeds}).
     *
     * @param seed the job's seed
     * @param row the row
     * @param cells its cells, from {@link #cells(Row, RowName)}
     * @param where how to name the row in a message
     * @return the row's seed
     * @throws IllegalArgumentException if the row's key is null
     */
    long rowSeed(long seed, Row row, double[] cells, RowName where) {
        if (keyIndex < 0) {
            return RowSeeds.ofContent(seed, cells);
        }
        Object k = row.get(keyIndex);
        if (k == null) {
            throw new IllegalArgumentException(where.describe(this, row) + " has a null row key in column '" + keyCol
                    + "'; each row needs a key, or leave rowKeyCol empty to key rows by their content");
        }
        return stringKey ? RowSeeds.ofKey(seed, (String) k) : RowSeeds.ofKey(seed, ((Number) k).longValue());
    }

    /** The row's key as text for messages, or null when rows are keyed by content. */
    String keyText(Row row) {
        return keyIndex < 0 ? null : keyCol + " = " + row.get(keyIndex);
    }

    /** How a row is named in an error message: by its key, else by partition and position (-1: unknown). */
    record RowName(int partition, long position) {
        String describe(ColumnMatch m, Row row) {
            String key = m.keyText(row);
            if (key != null) {
                return "the row with " + key;
            }
            if (position < 0) {
                return "a row of partition " + partition;
            }
            return partition < 0 ? "sampled row " + position : "row " + position + " of partition " + partition;
        }
    }
}
