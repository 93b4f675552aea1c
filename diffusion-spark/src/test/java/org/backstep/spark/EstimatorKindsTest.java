package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;

import org.apache.spark.ml.Pipeline;
import org.apache.spark.ml.PipelineModel;
import org.apache.spark.ml.PipelineStage;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The estimator fits a DataFrame with integer and categorical columns: the fitted model's column
 * kinds, labels and transforms are those the core's {@code TableTransform.fit} gives the same rows
 * in one JVM (the reference; the labels in sorted order, as the estimator documents), whatever the
 * partitioning; a Pipeline with the stage fitted, saved, loaded and applied gives the same
 * columns; bad columns are refused by name.
 */
class EstimatorKindsTest {

    private static final String KEY = "reading_id";
    /** The model's columns: the DataFrame's, less the key and the container id (a string column not named). */
    private static final List<String> NAMES = List.of("supply_air", "power_kw", "door_open", "door_openings",
            "defrost_cycles", "ambient_tenths", "alarm_code");
    private static final List<ColumnKind> KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
            ColumnKind.BINARY, ColumnKind.INTEGER, ColumnKind.INTEGER, ColumnKind.CONTINUOUS, ColumnKind.CATEGORICAL);
    private static final String[] CODES = {"R2", "E1", "OK", "ok", "Z9"};
    /** The codes in {@code String.compareTo} order: upper case before lower. */
    private static final List<String> SORTED = List.of("E1", "OK", "R2", "Z9", "ok");

    /**
     * Invented reefer readings (not of any real container): door openings a count (int), defrost
     * cycles a count held as doubles with gaps (as a file without a nullable integer type holds
     * it), the ambient temperature in tenths of a degree as an int (a measurement: continuous), an
     * alarm code and the container's id as strings.
     */
    private static List<Row> rows(int n, long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        List<Row> out = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            boolean door = r.nextDouble() < 0.1;
            Double supply = i % 17 == 3 ? null : -18.0 + 0.4 * r.nextGaussian() + (door ? 3.0 : 0.0);
            double power = Math.exp(1.0 + 0.3 * r.nextGaussian());
            Integer openings = i % 31 == 2 ? null : r.nextInt(6) + (door ? 2 : 0);
            Double defrost = i % 19 == 4 ? null : (double) r.nextInt(4);
            int ambient = (int) Math.round(250 + 60 * r.nextGaussian());
            String code = i % 13 == 0 ? null : CODES[r.nextInt(door ? 2 : CODES.length)];
            out.add(RowFactory.create(1000L + i, "MSCU" + (4000 + i % 37), supply, power, door, openings, defrost,
                    ambient, code));
        }
        return out;
    }

    /** @return the rows without a null cell (scoring needs complete rows) */
    private static List<Row> complete(List<Row> rows) {
        return rows.stream().filter(r -> !r.anyNull()).toList();
    }

    private static StructType schema() {
        return new StructType()
                .add(KEY, DataTypes.LongType, false)
                .add("container_id", DataTypes.StringType, false)
                .add("supply_air", DataTypes.DoubleType, true)
                .add("power_kw", DataTypes.DoubleType, false)
                .add("door_open", DataTypes.BooleanType, false)
                .add("door_openings", DataTypes.IntegerType, true)
                .add("defrost_cycles", DataTypes.DoubleType, true)
                .add("ambient_tenths", DataTypes.IntegerType, false)
                .add("alarm_code", DataTypes.StringType, true);
    }

    private static Dataset<Row> frame(List<Row> rows, int partitions) {
        return LocalSpark.session().createDataFrame(rows, schema()).repartition(partitions);
    }

    /** The same rows as a core Table, the labels in sorted order. */
    private static Table table(List<Row> rows) {
        return WholeTableStatisticsTest.coreTable(rows, 2, NAMES, KINDS, "alarm_code", SORTED);
    }

    private static BackstepEstimator estimator() {
        return new BackstepEstimator().setIntegerCols("door_openings", "defrost_cycles").setCategoricalCols("alarm_code")
                .setLogCols("power_kw").setRowKeyCol(KEY).setSteps(10).setHidden(8).setEpochs(2).setSampleRows(120)
                .setSeed(5).setScoreDraws(2);
    }

    private static double[] scores(Dataset<Row> scored) {
        return scored.orderBy(KEY).select("backstep_nats").collectAsList().stream().mapToDouble(r -> r.getDouble(0)).toArray();
    }

    @Test
    void fitsIntegerAndCategoricalColumnsWithTheCoresTransformsForAnyPartitioning() {
        List<Row> rows = rows(300, 31);
        Dataset<Row> fresh = frame(complete(rows(40, 32)), 1);
        BackstepModel one = estimator().fit(frame(rows, 1));
        TableTransform fitted = one.model().transform();
        assertEquals(NAMES, fitted.names());                       // container_id is not an input: not named
        assertEquals(KINDS, fitted.kinds());
        assertEquals(Map.of("alarm_code", SORTED), fitted.categories());
        assertEquals(120, one.model().provenance().tableRows());
        // reference: the core's transforms of the same 300 rows in one JVM (within its summation rounding)
        TableTransform core = TableTransform.fit(table(rows), Set.of("power_kw"));
        assertEquals(core.kinds(), fitted.kinds());
        assertEquals(core.lowest(), fitted.lowest());
        assertEquals(Map.of("door_openings", 0L, "defrost_cycles", 0L), fitted.lowest());      // counts from 0
        WholeTableStatisticsTest.assertSameColumnTransforms(core, fitted);
        double[] want = scores(one.transform(fresh));
        assertTrue(java.util.Arrays.stream(want).allMatch(Double::isFinite), java.util.Arrays.toString(want));
        for (int partitions : new int[] {2, 7}) {
            BackstepModel other = estimator().fit(frame(rows, partitions));
            assertEquals(fitted, other.model().transform(), partitions + " partitions");
            assertEquals(one.model().provenance().tableSha256(), other.model().provenance().tableSha256());
            assertArrayEquals(want, scores(other.transform(fresh)), 0.0, partitions + " partitions");
        }
    }

    @Test
    void aFittedPipelineWithDiscreteColumnsSavedAndLoadedGivesTheSameColumns(@TempDir Path dir) throws Exception {
        Dataset<Row> fresh = frame(rows(25, 34), 2);
        PipelineModel fitted = new Pipeline().setStages(new PipelineStage[] {estimator().setJob(BackstepParams.IMPUTE)
                .setDraws(3).setKeepDraws(true)}).fit(frame(rows(200, 33), 3));
        Dataset<Row> before = fitted.transform(fresh);
        String saved = dir.resolve("pipeline").toString();
        fitted.write().overwrite().save(saved);
        Dataset<Row> after = PipelineModel.load(saved).transform(fresh);
        assertEquals(List.of(before.columns()), List.of(after.columns()));
        assertEquals("string", after.schema().apply("alarm_code_mean").dataType().simpleString());
        // same model file, same rows, same row seeds: the same cells (common practice, no source)
        List<Row> a = before.orderBy(KEY).collectAsList();
        List<Row> b = after.orderBy(KEY).collectAsList();
        assertEquals(a, b);
        for (Row r : b) {
            assertTrue(SORTED.contains(r.getString(r.fieldIndex("alarm_code_mean"))), r.toString());
            List<Double> openings = r.getList(r.fieldIndex("door_openings_draws"));
            assertEquals(3, openings.size());
            double sum = 0;
            for (double v : openings) {
                assertEquals(Math.rint(v), v, 0.0, r.toString());                         // whole draws
                sum += v;
            }
            // the mean of the draws (common practice, no source)
            assertEquals(sum / 3, r.getDouble(r.fieldIndex("door_openings_mean")), 1e-12 * Math.max(1, Math.abs(sum)));
            List<String> codes = r.getList(r.fieldIndex("alarm_code_draws"));
            assertTrue(SORTED.containsAll(codes) && codes.size() == 3, codes.toString());
            assertTrue(codes.contains(r.getString(r.fieldIndex("alarm_code_mean"))), r.toString());
        }
    }

    @Test
    void badColumnsAreRefusedByName() {
        Dataset<Row> frame = frame(rows(60, 35), 2);
        IllegalArgumentException log = assertThrows(IllegalArgumentException.class,
                () -> estimator().setLogCols("alarm_code").fit(frame));
        assertTrue(log.getMessage().contains("logCols names 'alarm_code', which is not a continuous input column")
                && log.getMessage().endsWith("it is categorical (type string)"), log.getMessage());
        IllegalArgumentException codes = assertThrows(IllegalArgumentException.class,
                () -> estimator().setCategoricalCols("door_openings").setIntegerCols().fit(frame));
        assertEquals("column 'door_openings' has type int; the model's categorical column needs a string column of its labels",
                codes.getMessage());
        IllegalArgumentException twice = assertThrows(IllegalArgumentException.class,
                () -> estimator().setBinaryCols("door_openings").fit(frame));
        assertEquals("column 'door_openings' is named in both binaryCols and integerCols; expected one kind per column",
                twice.getMessage());
        IllegalArgumentException absent = assertThrows(IllegalArgumentException.class,
                () -> estimator().setIntegerCols("door_opening").fit(frame));
        assertTrue(absent.getMessage().startsWith("integerCols names 'door_opening', which is not an input column"),
                absent.getMessage());
        Exception fractional = assertThrows(Exception.class, () -> estimator().setIntegerCols("supply_air").fit(frame));
        String text = fractional.toString() + " " + (fractional.getCause() == null ? "" : fractional.getCause().toString());
        assertTrue(text.contains("the row with reading_id = ") && text.contains(", column 'supply_air' is -1")
                && text.contains("; the model's integer column holds whole numbers"), text);

        Dataset<Row> tags = LocalSpark.session().range(Table.MAX_CATEGORIES + 1)
                .selectExpr("cast(id as string) as tag", "cast(id % 7 as double) as x");
        IllegalArgumentException many = assertThrows(IllegalArgumentException.class,
                () -> new BackstepEstimator().setCategoricalCols("tag").fit(tags));
        assertEquals("categorical column 'tag' has more than " + Table.MAX_CATEGORIES + " distinct labels; a categorical"
                + " column holds at most that many", many.getMessage());
    }
}
