package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.backstep.Backstep;
import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.option.BoundOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.report.Denoising;
import org.backstep.report.DriftReport;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Integer and categorical columns through Spark: an integral DataFrame column for the model's
 * integer column, a string column of labels for its categorical one. The data: Iris (Fisher 1936;
 * UCI Machine Learning Repository; BSD-3-Clause via scikit-learn, see
 * {@code src/test/resources/data/ATTRIBUTION.md}) with its species as labels and the sepal length
 * as a whole number of millimetres (the source gives it to 0.1 cm, so 10 x the value is exact).
 * References: the core's batch calls on the same rows with the same row seeds in this JVM, to
 * {@link JobsTest#PLACE_ROUNDING} (a row's place in the network's matrix differs; common practice,
 * no source). A label the model does not know (the invented "nova") scores +infinity, as the
 * core's screen scores it, and imputation refuses it, naming the row key, column and label.
 */
class DiscreteColumnsTest {

    private static final long SEED = 23L;
    private static final String KEY = "plant_id";
    private static final List<String> NAMES = List.of("sepal_length_mm", "sepal_width_cm", "petal_length_cm",
            "petal_width_cm", "species");
    private static final List<ColumnKind> KINDS = List.of(ColumnKind.INTEGER, ColumnKind.CONTINUOUS,
            ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.CATEGORICAL);
    private static final List<String> SPECIES = List.of("setosa", "versicolor", "virginica");

    private static Table iris;
    private static DiffusionModel model;

    @BeforeAll
    static void fit() throws Exception {
        Table x = CsvTables.reader().read(Path.of(DiscreteColumnsTest.class.getResource("/data/iris.csv").toURI()));
        Table s = CsvTables.reader().categorical("species")
                .read(Path.of(DiscreteColumnsTest.class.getResource("/data/iris_species.csv").toURI()));
        assertEquals(SPECIES, s.categories(0));
        double[][] rows = new double[x.rows()][];
        for (int r = 0; r < x.rows(); r++) {
            rows[r] = new double[] {Math.round(10 * x.get(r, 0)), x.get(r, 1), x.get(r, 2), x.get(r, 3), s.get(r, 0)};
        }
        iris = Table.of(NAMES, KINDS, Map.of("species", SPECIES), rows);
        // standardized maps: denoisedRowsKeepTheirLabelsAndEqualTheCores denoises, which needs them
        model = Backstep.builder().steps(20).hidden(16, 16).epochs(30).seed(5).threads(1)
                .marginals(org.backstep.option.Marginals.STANDARDIZED).fit(iris);
    }

    private static StructType schema() {
        return new StructType()
                .add(KEY, DataTypes.LongType, false)
                .add(NAMES.get(0), DataTypes.IntegerType, true)
                .add(NAMES.get(1), DataTypes.DoubleType, true)
                .add(NAMES.get(2), DataTypes.DoubleType, true)
                .add(NAMES.get(3), DataTypes.DoubleType, true)
                .add(NAMES.get(4), DataTypes.StringType, true);
    }

    /** Rows i of t keyed 1000 + i; NaN cells become nulls; {@code label}, if not null, replaces row 5's species. */
    private static Dataset<Row> frame(Table t, int partitions, String label) {
        List<Row> rows = new ArrayList<>();
        for (int i = 0; i < t.rows(); i++) {
            Object[] v = new Object[6];
            v[0] = 1000L + i;
            v[1] = Double.isNaN(t.get(i, 0)) ? null : (int) t.get(i, 0);
            for (int j = 1; j < 4; j++) {
                v[1 + j] = Double.isNaN(t.get(i, j)) ? null : t.get(i, j);
            }
            v[5] = Double.isNaN(t.get(i, 4)) ? null : t.label(i, 4);
            if (i == 5 && label != null) {
                v[5] = label;
            }
            rows.add(RowFactory.create(v));
        }
        return LocalSpark.session().createDataFrame(rows, schema()).repartition(partitions);
    }

    private static BackstepModel stage() {
        return BackstepModel.of(model).setRowKeyCol(KEY).setSeed(SEED);
    }

    @Test
    void scoresEqualTheCoresAndAnUnseenLabelScoresInfinityAndIsTheCulprit() {
        Table t = iris.filterRows(i -> i % 5 == 0);                     // 30 rows of the three species
        double[] want = model.bound(t, BoundOptions.sampled(4), JobsTest.keySeeds(SEED, t.rows())).nats();
        BackstepModel scorer = stage().setScoreDraws(4).setJob(BackstepParams.ATTRIBUTE)
                .setThreshold(java.util.Arrays.stream(want).max().orElseThrow() + 1.0).setSurprisalDraws(16)
                .setSurprisalSteps(5);
        List<Row> rows = scorer.transform(frame(t, 2, "nova")).orderBy(KEY).collectAsList();
        for (int i = 0; i < t.rows(); i++) {
            Row r = rows.get(i);
            double nats = r.getDouble(r.fieldIndex("backstep_nats"));
            List<String> culprits = r.getList(r.fieldIndex("backstep_culprits"));
            if (i == 5) {
                // probability zero under the model: +infinity, flagged, the species its first culprit
                assertEquals(Double.POSITIVE_INFINITY, nats);
                assertTrue(r.getBoolean(r.fieldIndex("backstep_flag")));
                assertEquals("species", culprits.get(0));
                List<Double> surprisal = r.getList(r.fieldIndex("backstep_surprisal"));
                assertEquals(Double.POSITIVE_INFINITY, surprisal.get(4));
                assertTrue(surprisal.subList(0, 4).stream().allMatch(Double::isFinite), surprisal.toString());
                continue;
            }
            assertEquals(want[i], nats, JobsTest.tolerance(want[i]), "row " + i);
            assertTrue(culprits.isEmpty(), "row " + i);
        }
    }

    @Test
    void imputedLabelsAndWholeNumbersEqualTheCoresAndAnUnseenLabelIsRefused() {
        double[][] x = iris.filterRows(i -> i % 5 == 1).toArray();      // 30 rows
        for (int i = 0; i < x.length; i++) {
            if (i % 3 == 0) {
                x[i][4] = Double.NaN;                                    // species missing
            }
            if (i % 3 == 1) {
                x[i][0] = Double.NaN;                                    // sepal length missing
            }
        }
        Table t = Table.of(NAMES, KINDS, Map.of("species", SPECIES), x);
        Imputation want = model.impute(t, Defaults.imputation().withDraws(6).withLevel(0.8), JobsTest.keySeeds(SEED, t.rows()));
        BackstepModel imputer = stage().setJob(BackstepParams.IMPUTE).setDraws(6).setLevel(0.8);
        for (int partitions : new int[] {2, 7}) {
            List<Row> rows = imputer.transform(frame(t, partitions, null)).orderBy(KEY).collectAsList();
            for (int i = 0; i < t.rows(); i++) {
                Row r = rows.get(i);
                String label = r.getString(r.fieldIndex("species_mean"));
                assertEquals(SPECIES.get((int) want.mean().get(i, 4)), label, "row " + i);
                assertEquals(label, r.getString(r.fieldIndex("species_lower")));
                double mm = r.getDouble(r.fieldIndex("sepal_length_mm_mean"));
                assertEquals(want.mean().get(i, 0), mm, JobsTest.tolerance(mm), "row " + i);
                // the draws of an integer column are whole numbers, so the ends of its interval are whole or
                // halves (type-7 quantiles at 0.1 and 0.9 of 6 draws fall on h = 0.5 and 4.5, to rounding)
                double lo = r.getDouble(r.fieldIndex("sepal_length_mm_lower"));
                assertEquals(Math.rint(2 * lo), 2 * lo, 1e-6, "row " + i);
            }
        }
        Exception e = assertThrows(Exception.class, () -> imputer.transform(frame(t, 2, "nova")).collectAsList());
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("the row with plant_id = 1005, column 'species' holds the label 'nova'"), text);
    }

    @Test
    void denoisedRowsKeepTheirLabelsAndEqualTheCores() {
        Table t = iris.filterRows(i -> i % 5 == 2);
        double[] sd = {0.5, 0.1, 0.1, 0.05, 0.0};
        Denoising want = model.denoise(t, Defaults.denoising(sd).withDraws(4), JobsTest.keySeeds(SEED, t.rows()));
        List<Row> rows = stage().setJob(BackstepParams.DENOISE).setNoiseSd(sd).setDraws(4).transform(frame(t, 2, null))
                .orderBy(KEY).collectAsList();
        for (int i = 0; i < t.rows(); i++) {
            Row r = rows.get(i);
            assertEquals(t.label(i, 4), r.getString(r.fieldIndex("species_denoised")), "row " + i);
            assertEquals(0.0, r.getDouble(r.fieldIndex("species_sd")));
            for (int j = 0; j < 4; j++) {
                double v = r.getDouble(r.fieldIndex(NAMES.get(j) + "_denoised"));
                assertEquals(want.mean().get(i, j), v, JobsTest.tolerance(v), "row " + i + " " + NAMES.get(j));
            }
        }
    }

    @Test
    void samplesHoldLabelsAndWholeNumbersAndEqualTheCores() {
        List<Row> got = stage().sample(LocalSpark.session(), 25, 3, SEED).collectAsList();
        long[] seeds = new long[25];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = RowSeeds.ofKey(SEED, i);
        }
        Table want = model.sample(SamplingPlan.ancestral(), seeds);
        for (int i = 0; i < 25; i++) {
            Row r = got.get(i);
            assertEquals((long) want.get(i, 0), r.getLong(0), "row " + i);
            assertEquals(want.label(i, 4), r.getString(4), "row " + i);
            assertTrue(SPECIES.contains(r.getString(4)));
        }
    }

    @Test
    void driftWithAnUnseenLabelEqualsTheCoresReport() {
        Table reference = iris.filterRows(i -> i % 2 == 0);
        Table batchKnown = iris.filterRows(i -> i % 2 == 1);
        double[][] x = batchKnown.toArray();
        x[5][4] = 3;                                                     // "nova", a fourth label
        Table batch = Table.of(NAMES, KINDS, Map.of("species", List.of("setosa", "versicolor", "virginica", "nova")), x);
        DriftReport want = model.drift(reference, batch, Defaults.drift().withBound(BoundOptions.sampled(4)), SEED);
        DriftReport got = stage().setRowKeyCol("").setScoreDraws(4).drift(frame(reference, 2, null), frame(batchKnown, 3, "nova"));
        assertEquals(want.score(), got.score());
        assertEquals(want.columns(), got.columns());
        assertEquals(1, got.notes().size(), got.notes().toString());
        assertEquals(want.notes().size(), got.notes().size());
    }

    @Test
    void aColumnOfTheWrongTypeIsRefusedByName() {
        Table t = iris.filterRows(i -> i < 10);
        IllegalArgumentException label = assertThrows(IllegalArgumentException.class,
                () -> stage().transform(frame(t, 1, null).withColumn("species", functions.lit(1.0))));
        assertEquals("column 'species' has type double; the model's categorical column needs a string column of its labels",
                label.getMessage());
        IllegalArgumentException whole = assertThrows(IllegalArgumentException.class, () -> stage()
                .transform(frame(t, 1, null).withColumn("sepal_length_mm", functions.col("sepal_length_mm").cast("string"))));
        assertEquals("column 'sepal_length_mm' has type string; the model's integer column needs an integral type"
                + " (long, int, short or byte), or a numeric type holding whole numbers", whole.getMessage());
        // a double column of whole numbers is read as the integral one (the same cells, so the same scores);
        // a fractional value is refused naming the row and column
        BackstepModel scorer = stage().setScoreDraws(2);
        Dataset<Row> doubles = frame(t, 1, null).withColumn("sepal_length_mm", functions.col("sepal_length_mm").cast("double"));
        assertEquals(scorer.transform(frame(t, 1, null)).orderBy(KEY).select("backstep_nats").collectAsList(),
                scorer.transform(doubles).orderBy(KEY).select("backstep_nats").collectAsList());
        Dataset<Row> fractional = doubles.withColumn("sepal_length_mm", functions.col("sepal_length_mm").plus(0.5));
        Exception e = assertThrows(Exception.class, () -> scorer.transform(fractional).collectAsList());
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("the row with plant_id = 1000, column 'sepal_length_mm' is 51.5; the model's integer"
                + " column holds whole numbers"), text);
    }
}
