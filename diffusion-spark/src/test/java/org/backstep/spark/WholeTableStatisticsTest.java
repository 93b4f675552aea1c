package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.math.BigDecimal;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

/**
 * The column transforms computed over a whole DataFrame by Spark's aggregates: the same to the
 * last bit for any partitioning, and those the core computes on the same rows in one JVM.
 */
class WholeTableStatisticsTest {

    /**
     * The core sums a column's 600 values in row order, with a rounding error of at most about
     * n u = 600 x 1.1e-16 = 7e-14 of the sum of magnitudes; Spark's sums are exact, rounded once.
     * The means and standard deviations may therefore differ by a few 1e-14 relative; 1e-12.
     */
    private static final double CORE_ROUNDING_TOL = 1e-12;

    private static final List<String> NAMES = List.of("supply_air", "power_kw", "door_open", "alarm", "door_count",
            "offset", "code");
    private static final List<ColumnKind> KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
            ColumnKind.BINARY, ColumnKind.BINARY, ColumnKind.INTEGER, ColumnKind.INTEGER, ColumnKind.CATEGORICAL);
    private static final String[] LABELS = {"R2", "E1", "OK", "ok", "Z9"};

    /** Invented readings (not of any real container): 600 rows, some cells missing. */
    private static List<Row> rows() {
        SplittableRandom r = new SplittableRandom(41);
        List<Row> out = new ArrayList<>();
        for (int i = 0; i < 600; i++) {
            Double supply = i % 17 == 3 ? null : i % 29 == 5 ? Double.NaN : -18.0 + 0.4 * r.nextGaussian() + 1e4;
            double power = Math.exp(1.0 + 0.3 * r.nextGaussian());
            Boolean door = i % 23 == 1 ? null : r.nextDouble() < 0.1;
            int alarm = r.nextDouble() < 0.05 ? 1 : 0;
            Integer count = i % 31 == 2 ? null : r.nextInt(6);
            long offset = r.nextInt(9) - 4;
            String code = i % 13 == 0 ? null : LABELS[r.nextInt(LABELS.length)];
            out.add(RowFactory.create(1000L + i, supply, power, door, alarm, count, offset, code));
        }
        return out;
    }

    private static StructType schema() {
        return new StructType(new StructField[] {
            DataTypes.createStructField("reading_id", DataTypes.LongType, false),
            DataTypes.createStructField("supply_air", DataTypes.DoubleType, true),
            DataTypes.createStructField("power_kw", DataTypes.DoubleType, false),
            DataTypes.createStructField("door_open", DataTypes.BooleanType, true),
            DataTypes.createStructField("alarm", DataTypes.IntegerType, false),
            DataTypes.createStructField("door_count", DataTypes.IntegerType, true),
            DataTypes.createStructField("offset", DataTypes.LongType, false),
            DataTypes.createStructField("code", DataTypes.StringType, true),
        });
    }

    /** The same rows as a core Table, the labels in the sorted order Spark's statistics give them. */
    private static Table table(List<Row> rows, List<String> labels) {
        return coreTable(rows, 1, NAMES, KINDS, "code", labels);
    }

    private static WholeTableStatistics.Result statistics(Dataset<Row> frame) {
        return WholeTableStatistics.of(frame, NAMES.toArray(String[]::new), NAMES, KINDS, Set.of("power_kw"), "reading_id");
    }

    @Test
    void theTransformsOverTheDataFrameAreTheCoresForAnyPartitioning() {
        List<Row> rows = rows();
        Dataset<Row> frame = LocalSpark.session().createDataFrame(rows, schema());
        WholeTableStatistics.Result one = statistics(frame.repartition(1));
        List<String> sorted = List.of("E1", "OK", "R2", "Z9", "ok");     // String.compareTo: upper case before lower
        assertEquals(Map.of("code", sorted), one.transform().categories());
        assertEquals(600, one.rows());
        // exact sums rounded once: the same bits for 2 and 7 partitions (and the rows in another order)
        assertEquals(one.transform(), statistics(frame.repartition(2)).transform());
        assertEquals(one.transform(), statistics(frame.repartition(7)).transform());

        TableTransform core = TableTransform.fit(table(rows, sorted), Set.of("power_kw"));
        TableTransform spark = one.transform();
        assertEquals(core.kinds(), spark.kinds());
        assertEquals(core.lowest(), spark.lowest());        // door_count counts from 0; offset has no lowest value
        assertEquals(Map.of("door_count", 0L), spark.lowest());
        // the same notes (the missing cells of supply_air and door_count), but for the log note's digits
        assertEquals(core.notes().stream().filter(n -> !n.contains("log scale")).toList(),
                spark.notes().stream().filter(n -> !n.contains("log scale")).toList());
        assertEquals(core.notes().size(), spark.notes().size());
        assertSameColumnTransforms(core, spark);
        assertEquals(ColumnTransform.Kind.LOG_STANDARDIZE, spark.transform(1).kind());
    }

    @Test
    void theEstimatorsModelHasTheWholeTablesTransformsAndTrainsOnTheSample() {
        Table all = TestModels.readings(400, 23);
        Dataset<Row> frame = TestModels.frame(all, 3);
        BackstepModel fitted = new BackstepEstimator().setSteps(10).setHidden(8).setEpochs(2).setSampleRows(120)
                .setRowKeyCol(TestModels.KEY).setLogCols("ambient").setSeed(5).fit(frame);
        TableTransform model = fitted.model().transform();
        assertEquals(120, fitted.model().provenance().tableRows());
        TableTransform core = TableTransform.fit(all, Set.of("ambient"));
        assertEquals(core.kinds(), model.kinds());
        assertSameColumnTransforms(core, model);
        assertTrue(fitted.model().provenance().notes().stream()
                .anyMatch(n -> n.startsWith("column transforms given by the caller")));
        IllegalArgumentException bad = assertThrows(IllegalArgumentException.class,
                () -> new BackstepEstimator().setLogCols("door_open").fit(frame));
        assertTrue(bad.getMessage().contains("logCols names 'door_open', which is not a continuous input column"),
                bad.getMessage());
    }

    @Test
    void refusesABadCellNamingItsRowAndColumn() {
        List<Row> rows = new ArrayList<>(rows());
        Object[] bad = new Object[8];
        for (int j = 0; j < 8; j++) {
            bad[j] = rows.get(5).get(j);
        }
        bad[0] = 77L;
        bad[4] = 2;                      // a binary 0/1 column holding 2
        rows.set(5, RowFactory.create(bad));
        Dataset<Row> frame = LocalSpark.session().createDataFrame(rows, schema()).repartition(2);
        Exception e = assertThrows(Exception.class, () -> statistics(frame));
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("reading_id = 77, column 'alarm' is 2.0"), text);

        Dataset<Row> negative = LocalSpark.session().createDataFrame(rows(), schema())
                .withColumn("power_kw", org.apache.spark.sql.functions.col("power_kw").minus(3.0));
        IllegalArgumentException log = assertThrows(IllegalArgumentException.class, () -> statistics(negative));
        assertTrue(log.getMessage().contains("column 'power_kw' has the smallest value"), log.getMessage());
    }

    @Test
    void exactSumsAreCorrectlyRoundedWhateverTheOrderAndParts() {
        // reference: java.math.BigDecimal's exact sum; correct rounding checked against both neighbours
        SplittableRandom r = new SplittableRandom(8);
        for (int trial = 0; trial < 200; trial++) {
            int n = 1 + r.nextInt(60);
            double[] v = new double[n];
            BigDecimal exact = BigDecimal.ZERO;
            for (int i = 0; i < n; i++) {
                v[i] = (r.nextBoolean() ? 1 : -1) * Math.scalb(r.nextDouble(), r.nextInt(120) - 60);
                if (i > 0 && r.nextInt(4) == 0) {
                    v[i] = -v[i - 1];                // cancellation
                }
                exact = exact.add(new BigDecimal(v[i]));
            }
            ExactSum whole = new ExactSum();
            for (double x : v) {
                whole.add(x);
            }
            ExactSum a = new ExactSum();
            ExactSum b = new ExactSum();
            for (int i = n - 1; i >= 0; i--) {
                (r.nextBoolean() ? a : b).add(v[i]);
            }
            double s = whole.value();
            assertEquals(s, a.merge(b).value(), 0.0, "order and parts");
            BigDecimal err = exact.subtract(new BigDecimal(s)).abs();
            assertTrue(err.compareTo(exact.subtract(new BigDecimal(Math.nextUp(s))).abs()) <= 0, "trial " + trial);
            assertTrue(err.compareTo(exact.subtract(new BigDecimal(Math.nextDown(s))).abs()) <= 0, "trial " + trial);
        }
    }

    /**
     * Column by column, the same kind, and shift and scale within {@link #CORE_ROUNDING_TOL} (the shift
     * relative to max(1, |shift|): the shift of supply_air is near 1e4 while its sd is 0.4).
     */
    static void assertSameColumnTransforms(TableTransform core, TableTransform actual) {
        for (int c = 0; c < core.names().size(); c++) {
            ColumnTransform e = core.transform(c);
            ColumnTransform a = actual.transform(c);
            String name = core.names().get(c);
            assertEquals(e.kind(), a.kind(), name);
            assertEquals(e.shift(), a.shift(), CORE_ROUNDING_TOL * Math.max(1.0, Math.abs(e.shift())), name);
            assertEquals(e.scale(), a.scale(), CORE_ROUNDING_TOL * Math.abs(e.scale()), name);
        }
    }

    /**
     * Rows of a data frame as a core Table: the cells from field {@code first} on, in the order of
     * {@code names}; a null cell is NaN, a boolean 1 or 0, a label its index in {@code labels} (the labels of
     * the one categorical column {@code categorical}), a number its double value.
     */
    static Table coreTable(List<Row> rows, int first, List<String> names, List<ColumnKind> kinds, String categorical,
                           List<String> labels) {
        double[][] x = new double[rows.size()][names.size()];
        for (int i = 0; i < rows.size(); i++) {
            Row r = rows.get(i);
            for (int j = 0; j < names.size(); j++) {
                Object v = r.get(j + first);
                x[i][j] = v == null ? Double.NaN : v instanceof Boolean b ? (b ? 1 : 0)
                        : v instanceof String s ? labels.indexOf(s) : ((Number) v).doubleValue();
            }
        }
        return Table.of(names, kinds, Map.of(categorical, labels), x);
    }
}
