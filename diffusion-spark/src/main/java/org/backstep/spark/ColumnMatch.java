package org.backstep.spark;

import java.io.Serializable;
import java.math.BigDecimal;
import java.util.Arrays;
import java.util.List;

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

/**
 * Where the model's columns sit in a DataFrame's rows, checked by name and type, and the reading of
 * one row's cells as doubles. A continuous column may be any numeric type (double, float, int, long,
 * short, byte, decimal); a binary column a boolean, or a numeric type holding 0 and 1. A null cell
 * and a NaN are a missing cell. The optional row key column is an integer or a string.
 */
final class ColumnMatch implements Serializable {

    private static final long serialVersionUID = 1L;

    private final String[] inputCols;
    private final ColumnKind[] kinds;
    private final int[] index;
    private final int keyIndex;          // -1: the row's content is its key
    private final boolean stringKey;
    private final String keyCol;

    private ColumnMatch(String[] inputCols, ColumnKind[] kinds, int[] index, int keyIndex, boolean stringKey, String keyCol) {
        this.inputCols = inputCols;
        this.kinds = kinds;
        this.index = index;
        this.keyIndex = keyIndex;
        this.stringKey = stringKey;
        this.keyCol = keyCol;
    }

    /**
     * Matches the model's columns to a schema.
     *
     * @param schema the DataFrame's schema
     * @param inputCols the DataFrame's column for each model column, in the model's order
     * @param modelNames the model's column names (for messages)
     * @param modelKinds the model's column kinds
     * @param keyCol the row key column, or "" for none
     * @return the match
     * @throws IllegalArgumentException naming the missing or mistyped column
     */
    static ColumnMatch of(StructType schema, String[] inputCols, List<String> modelNames, List<ColumnKind> modelKinds,
                          String keyCol) {
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
            boolean ok = kinds[j] == ColumnKind.BINARY ? numeric || t instanceof BooleanType : numeric;
            if (!ok) {
                throw new IllegalArgumentException("column '" + col + "'" + role + " has type " + t.simpleString()
                        + "; the model's " + kinds[j].name().toLowerCase() + " column needs "
                        + (kinds[j] == ColumnKind.BINARY ? "a boolean or a numeric type holding 0 and 1" : "a numeric type"));
            }
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
        return new ColumnMatch(inputCols.clone(), kinds, index, keyIndex, stringKey, keyCol);
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
