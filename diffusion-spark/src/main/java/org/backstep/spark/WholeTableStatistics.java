package org.backstep.spark;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;

import org.apache.spark.TaskContext;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.types.StringType;
import org.apache.spark.sql.types.StructType;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnStatistics;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

/**
 * The column transforms of a model computed over every row of a DataFrame, on the executors, by
 * the core's rule ({@link TableTransform#fromStatistics}): what {@code TableTransform.fit} would
 * compute if the whole table fitted in one JVM.
 *
 * <p>Continuous and integer columns, over each column's observed cells (null and NaN are missing),
 * with y = x, or log x for a log column: two passes of {@code treeAggregate}. The first counts the
 * rows and each column's observed cells, keeps its smallest and largest x, and sums y; the mean is
 * m0 = S / n. The second sums d = y - m0 and d^2, and gives the corrected two-pass statistics
 * (Chan, Golub &amp; LeVeque 1983, "Algorithms for computing the sample variance", eq. 1.7):
 * m = m0 + (sum d) / n and s^2 = (sum d^2 - (sum d)^2 / n) / n, the formulas of the core's own
 * fit. Every sum is exact and rounded once ({@link ExactSum}), so the statistics do not depend on
 * the partitioning or the order of rows, to the last bit; they differ from the core's sums in one
 * JVM (plain sums in row order, with their rounding error of order n times the unit roundoff)
 * in the last bits only.
 *
 * <p>Binary columns are checked to hold 0 and 1 (or booleans), integer columns whole numbers,
 * every cell a finite number or missing; a bad cell is refused naming its row and column. An
 * integer column whose smallest value is at least 0 counts from 0.
 *
 * <p>Categorical columns (strings): the distinct non-null labels, in ascending order of
 * {@link String#compareTo} (UTF-16 code units). The core's CSV reader orders labels as first seen
 * in the file; over a distributed table "first seen" depends on the partitioning, so the sorted
 * order is the stable rule here. The order only numbers the model's categories: rows are matched
 * to them by label text.
 */
final class WholeTableStatistics {

    private WholeTableStatistics() {
    }

    /**
     * The transforms and the row count of a DataFrame.
     *
     * @param transform the column transforms over every row
     * @param rows the DataFrame's rows
     */
    record Result(TableTransform transform, long rows) {
    }

    /**
     * Computes the transforms over every row of the frame.
     *
     * @param frame the DataFrame (read two times for the numeric columns, once more per categorical column)
     * @param inputCols the DataFrame column of each model column
     * @param names the model's column names
     * @param kinds the model's column kinds
     * @param logColumns model column names modelled on the log scale
     * @param rowKeyCol the row key column for messages, or ""
     * @return the transforms and the row count
     * @throws IllegalArgumentException naming the column (and row) of a bad cell, a column without
     *     an observed cell, or a log column with a value not above 0
     */
    static Result of(Dataset<Row> frame, String[] inputCols, List<String> names, List<ColumnKind> kinds,
                     Set<String> logColumns, String rowKeyCol) {
        List<Integer> numeric = new ArrayList<>();
        Map<String, List<String>> categories = new LinkedHashMap<>();
        StructType schema = frame.schema();
        for (int j = 0; j < names.size(); j++) {
            if (kinds.get(j) == ColumnKind.CATEGORICAL) {
                categories.put(names.get(j), sortedLabels(frame, inputCols[j], schema));
            } else {
                numeric.add(j);
            }
        }
        String[] cols = numeric.stream().map(j -> inputCols[j]).toArray(String[]::new);
        List<String> numericNames = numeric.stream().map(names::get).toList();
        List<ColumnKind> numericKinds = numeric.stream().map(kinds::get).toList();
        ColumnMatch match = ColumnMatch.of(schema, cols, numericNames, numericKinds, rowKeyCol);
        boolean[] log = new boolean[cols.length];
        for (int j = 0; j < cols.length; j++) {
            log[j] = logColumns.contains(numericNames.get(j));
        }

        Sums first = aggregate(frame, new Sums(match, log, null));
        double[] center = new double[cols.length];
        for (int j = 0; j < cols.length; j++) {
            if (first.observed[j] == 0 && numericKinds.get(j) != ColumnKind.BINARY) {
                throw new IllegalArgumentException("column '" + cols[j] + "' has no observed cell in the "
                        + first.rows + " rows of the DataFrame; expected at least one to fit its transform");
            }
            center[j] = first.observed[j] == 0 ? 0.0 : first.sum[j].value() / first.observed[j];
            if (log[j] && first.observed[j] > 0 && !(first.min[j] > 0)) {
                // refused before the second pass, in the words of TableTransform.fromStatistics
                throw new IllegalArgumentException("column '" + cols[j] + "' has the smallest value " + first.min[j]
                        + "; a log column needs every training value above 0");
            }
        }
        Sums second = aggregate(frame, new Sums(match, log, center));
        Map<String, ColumnStatistics> statistics = new LinkedHashMap<>();
        for (int j = 0; j < cols.length; j++) {
            if (numericKinds.get(j) == ColumnKind.BINARY) {
                continue;
            }
            long n = first.observed[j];
            double residual = second.residuals[j].value();
            double squares = second.squares[j].value();
            double mean = center[j] + residual / n;
            double sd = Math.sqrt(Math.max(0.0, (squares - residual * residual / n) / n));
            try {
                statistics.put(numericNames.get(j), new ColumnStatistics(n, first.rows - n, first.min[j], first.max[j],
                        mean, sd));
            } catch (IllegalArgumentException e) {
                throw new IllegalArgumentException("column '" + cols[j] + "': " + e.getMessage(), e);
            }
        }
        return new Result(TableTransform.fromStatistics(names, kinds, categories, logColumns, statistics), first.rows);
    }

    private static Sums aggregate(Dataset<Row> frame, Sums zero) {
        return frame.javaRDD().treeAggregate(zero, Sums::add, Sums::merge);
    }

    /** The distinct non-null labels of a string column, in ascending {@link String#compareTo} order. */
    static List<String> sortedLabels(Dataset<Row> frame, String col, StructType schema) {
        if (!List.of(schema.fieldNames()).contains(col)) {
            throw new IllegalArgumentException("the DataFrame has no column '" + col + "'; it has "
                    + List.of(schema.fieldNames()));
        }
        if (!(schema.apply(col).dataType() instanceof StringType)) {
            throw new IllegalArgumentException("column '" + col + "' has type " + schema.apply(col).dataType().simpleString()
                    + "; a categorical column needs strings");
        }
        Column c = frame.col(col);
        List<String> labels = new ArrayList<>();
        for (Row r : frame.select(c).where(c.isNotNull()).distinct().limit(Table.MAX_CATEGORIES + 1).collectAsList()) {
            labels.add(r.getString(0));
        }
        if (labels.size() > Table.MAX_CATEGORIES) {
            throw new IllegalArgumentException("categorical column '" + col + "' has more than " + Table.MAX_CATEGORIES
                    + " distinct labels; a categorical column holds at most that many");
        }
        if (labels.isEmpty()) {
            throw new IllegalArgumentException("categorical column '" + col + "' has no label in the DataFrame;"
                    + " expected at least one");
        }
        labels.sort(String::compareTo);
        return labels;
    }

    /** One pass's counts and exact sums; {@code center} null for the first pass. */
    static final class Sums implements Serializable {
        private static final long serialVersionUID = 1L;

        private final ColumnMatch match;
        private final boolean[] log;
        private final double[] center;
        /** This partition's name for messages, built at its first row (each task folds a copy of the zero). */
        private transient ColumnMatch.RowName where;
        long rows;
        final long[] observed;
        final double[] min;
        final double[] max;
        final ExactSum[] sum;
        final ExactSum[] residuals;
        final ExactSum[] squares;

        Sums(ColumnMatch match, boolean[] log, double[] center) {
            this.match = match;
            this.log = log;
            this.center = center;
            int d = match.columns();
            observed = new long[d];
            min = new double[d];
            max = new double[d];
            java.util.Arrays.fill(min, Double.POSITIVE_INFINITY);
            java.util.Arrays.fill(max, Double.NEGATIVE_INFINITY);
            sum = new ExactSum[d];
            residuals = new ExactSum[d];
            squares = new ExactSum[d];
            for (int j = 0; j < d; j++) {
                sum[j] = new ExactSum();
                residuals[j] = new ExactSum();
                squares[j] = new ExactSum();
            }
        }

        Sums add(Row row) {
            if (where == null) {
                TaskContext task = TaskContext.get();
                where = new ColumnMatch.RowName(task == null ? -1 : task.partitionId(), -1);
            }
            double[] x = match.cells(row, where);
            rows++;
            for (int j = 0; j < x.length; j++) {
                double v = x[j];
                if (Double.isNaN(v)) {
                    continue;
                }
                observed[j]++;
                min[j] = Math.min(min[j], v);
                max[j] = Math.max(max[j], v);
                if (log[j] && !(v > 0)) {
                    continue;      // refused after the passes, naming the column and its smallest value
                }
                double y = log[j] ? Math.log(v) : v;
                if (center == null) {
                    sum[j].add(y);
                } else {
                    double dev = y - center[j];
                    residuals[j].add(dev);
                    squares[j].add(dev * dev);
                }
            }
            return this;
        }

        Sums merge(Sums other) {
            rows += other.rows;
            for (int j = 0; j < observed.length; j++) {
                observed[j] += other.observed[j];
                min[j] = Math.min(min[j], other.min[j]);
                max[j] = Math.max(max[j], other.max[j]);
                sum[j].merge(other.sum[j]);
                residuals[j].merge(other.residuals[j]);
                squares[j].merge(other.squares[j]);
            }
            return this;
        }
    }
}
