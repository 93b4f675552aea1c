package org.backstep.spark;

import org.backstep.option.BoundOptions;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.List;
import java.util.Map;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.backstep.DiffusionModel;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * Scores through Spark against the same rows scored by {@link DiffusionModel} in this JVM. The
 * reference for each row is the core's own job on that one row with the seed {@link RowSeeds}
 * derives for it: the same generator and the same draws (Spark moves the row's doubles without
 * changing them), and the same float32 network, which Spark runs on batches of rows, so the
 * figures agree to {@link #PLACE_ROUNDING}.
 */
class ScoringTest {

    private static final long SEED = 42L;
    /**
     * Relative tolerance (of max(|nats|, 1)) of a row scored in a batch against the row alone: the
     * network's float32 products round differently with a row's place in the matrix (OpenBLAS;
     * measured up to 2e-6 nats in the core's RowSeedBoundTest); different draws would move a score
     * by tenths of a nat (common practice, no source).
     */
    static final double PLACE_ROUNDING = 1e-5;
    /** Relative tolerance of a quantile computed by hand against commons-math3's: the same formula, other rounding. */
    private static final double QUANTILE_TOLERANCE = 1e-12;

    private static Map<Long, Double> scores(Dataset<Row> scored, String col) {
        Map<Long, Double> m = new HashMap<>();
        for (Row r : scored.select(TestModels.KEY, col).collectAsList()) {
            m.put(r.getLong(0), r.getDouble(1));
        }
        return m;
    }

    static double tolerance(double nats) {
        return PLACE_ROUNDING * Math.max(1.0, Math.abs(nats));
    }

    private static double reference(DiffusionModel model, Table t, int i, int draws, long rowSeed) {
        Table one = t.selectRows(new int[] {i});
        return draws == 0 ? model.bound(one, rowSeed).nats()[0] : model.bound(one, BoundOptions.sampled(draws), rowSeed).nats()[0];
    }

    @Test
    void exactBoundEqualsOneJvmForOneTwoAndSevenPartitions() {
        DiffusionModel model = TestModels.model();
        Table t = TestModels.readings(40, 5);
        BackstepModel stage = BackstepModel.of(model).setRowKeyCol(TestModels.KEY).setSeed(SEED);
        for (int partitions : new int[] {1, 2, 7}) {
            Map<Long, Double> got = scores(stage.transform(TestModels.frame(t, partitions)), "backstep_nats");
            assertEquals(t.rows(), got.size());
            for (int i = 0; i < t.rows(); i++) {
                // reference: the core's bound of the same row in one JVM, same row seed (to the network's rounding)
                double want = reference(model, t, i, 0, RowSeeds.ofKey(SEED, 1000L + i));
                assertEquals(want, got.get(1000L + i), tolerance(want), "row " + i + ", " + partitions + " partitions");
            }
        }
    }

    /**
     * Normal-score transforms are a core-only way of fitting (their knots are the training values,
     * README "On Apache Spark"): a model fitted so in one JVM scores a DataFrame through Spark as
     * any other, equal to the core's batch bound of the same rows with the same row seeds.
     */
    @Test
    void aModelWithNormalScoreTransformsFittedInOneJvmScoresThroughSpark() {
        Table train = TestModels.readings(200, 12);
        DiffusionModel model = org.backstep.Backstep.builder().steps(10).hidden(8).epochs(3).seed(4).threads(1)
                .fit(train, org.backstep.table.TableTransform.fitNormalScores(train, 1.0));
        assertEquals(org.backstep.table.ColumnTransform.Kind.NORMAL_SCORES, model.transform().transform(0).kind());
        Table t = TestModels.readings(20, 13);
        double[] want = model.bound(t, BoundOptions.sampled(3), JobsTest.keySeeds(SEED, t.rows())).nats();
        Map<Long, Double> got = scores(BackstepModel.of(model).setRowKeyCol(TestModels.KEY).setSeed(SEED).setScoreDraws(3)
                .transform(TestModels.frame(t, 2)), "backstep_nats");
        for (int i = 0; i < t.rows(); i++) {
            assertEquals(want[i], got.get(1000L + i), tolerance(want[i]), "row " + i);
        }
    }

    @Test
    void monteCarloBoundKeyedByContentEqualsOneJvmAndIgnoresOrder() {
        DiffusionModel model = TestModels.model();
        Table t = TestModels.readings(30, 6);
        BackstepModel stage = BackstepModel.of(model).setSeed(SEED).setScoreDraws(4).setBatchRows(7);
        Map<Long, Double> two = scores(stage.transform(TestModels.frame(t, 2)), "backstep_nats");
        Map<Long, Double> sevenReversed = scores(stage.transform(
                TestModels.frame(t, 7).orderBy(functions.col(TestModels.KEY).desc())), "backstep_nats");
        for (int i = 0; i < t.rows(); i++) {
            // reference: the core's Monte Carlo bound of the same row, seeded from its cells (to the network's rounding)
            double want = reference(model, t, i, 4, RowSeeds.ofContent(SEED, t.row(i)));
            assertEquals(want, two.get(1000L + i), tolerance(want), "row " + i);
            assertEquals(want, sevenReversed.get(1000L + i), tolerance(want), "row " + i + ", reversed");
        }
    }

    @Test
    void flagMarksScoresAboveTheThreshold() {
        Table t = TestModels.readings(30, 7);
        BackstepModel stage = BackstepModel.of(TestModels.model()).setRowKeyCol(TestModels.KEY).setScoreDraws(2);
        List<Row> rows = stage.transform(TestModels.frame(t, 2)).select("backstep_nats").collectAsList();
        double[] s = rows.stream().mapToDouble(r -> r.getDouble(0)).sorted().toArray();
        // between two scores, not at one: a score in another partitioning moves by the network's rounding
        double threshold = 0.5 * (s[s.length / 2] + s[s.length / 2 + 1]);
        List<Row> flagged = stage.setThreshold(threshold).transform(TestModels.frame(t, 3))
                .select("backstep_nats", "backstep_flag").collectAsList();
        int count = 0;
        for (Row r : flagged) {
            // the flag is score > threshold (common practice, no source)
            assertEquals(r.getDouble(0) > threshold, r.getBoolean(1));
            count += r.getBoolean(1) ? 1 : 0;
        }
        assertEquals(s.length - 1 - s.length / 2, count);
    }

    @Test
    void screeningSetsTheThresholdAtTheHeldOutQuantile() {
        DiffusionModel model = TestModels.model();
        Table held = TestModels.readings(30, 12);
        BackstepModel screened = BackstepModel.of(model).setRowKeyCol(TestModels.KEY).setSeed(SEED).setScoreDraws(3)
                .screenAgainst(TestModels.frame(held, 3), 0.9);
        double[] ref = new double[held.rows()];
        for (int i = 0; i < held.rows(); i++) {
            ref[i] = reference(model, held, i, 3, RowSeeds.ofKey(SEED, 1000L + i));
        }
        java.util.Arrays.sort(ref);
        // the Spark scores are the references to the network's rounding, so is their quantile
        // type-7 quantile by hand (Hyndman & Fan 1996): h = (n - 1) q, x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h])
        double h = (ref.length - 1) * 0.9;
        int lo = (int) Math.floor(h);
        double want = ref[lo] + (h - lo) * (ref[lo + 1] - ref[lo]);
        assertEquals(want, (Double) screened.getOrDefault(screened.threshold()),
                Math.max(QUANTILE_TOLERANCE * Math.abs(want), tolerance(want)));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> BackstepModel.of(model).screenAgainst(TestModels.frame(held, 1), 1.5));
        assertTrue(e.getMessage().contains("quantile is 1.5"), e.getMessage());
    }

    @Test
    void aMissingOrMistypedColumnIsRefusedByName() {
        BackstepModel stage = BackstepModel.of(TestModels.model());
        Dataset<Row> df = TestModels.frame(TestModels.readings(5, 8), 1);
        IllegalArgumentException missing = assertThrows(IllegalArgumentException.class,
                () -> stage.transform(df.drop("ambient")));
        assertTrue(missing.getMessage().contains("no column 'ambient'"), missing.getMessage());
        IllegalArgumentException typed = assertThrows(IllegalArgumentException.class,
                () -> stage.transform(df.withColumn("power_kw", functions.lit("high"))));
        assertTrue(typed.getMessage().contains("column 'power_kw' has type string"), typed.getMessage());
        IllegalArgumentException key = assertThrows(IllegalArgumentException.class,
                () -> stage.setRowKeyCol("container").transform(df));
        assertTrue(key.getMessage().contains("no row key column 'container'"), key.getMessage());
    }

    @Test
    void aMissingCellIsRefusedWithItsRowKeyAndColumn() {
        Table t = TestModels.readings(6, 9);
        double[][] x = t.toArray();
        x[4][2] = Double.NaN;
        Dataset<Row> df = TestModels.frame(t.withRows(x), 2);
        Exception e = assertThrows(Exception.class,
                () -> BackstepModel.of(TestModels.model()).setRowKeyCol(TestModels.KEY).transform(df).collectAsList());
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("reading_id = 1004, column 'ambient' is missing"), text);
    }

    @Test
    void aBinaryCellOtherThanZeroOrOneIsRefusedByRowAndColumn() {
        Dataset<Row> df = TestModels.frame(TestModels.readings(4, 13), 1)
                .withColumn("door_open", functions.when(functions.col(TestModels.KEY).equalTo(1002L), 2.0).otherwise(0.0));
        Exception e = assertThrows(Exception.class,
                () -> BackstepModel.of(TestModels.model()).setRowKeyCol(TestModels.KEY).transform(df).collectAsList());
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("reading_id = 1002, column 'door_open' is 2.0; the model's binary column needs 0 or 1"), text);
    }

    @Test
    void theModelLoadsOncePerJvmAcrossTransforms() {
        BackstepModel stage = BackstepModel.of(TestModels.model()).setScoreDraws(1);
        Table t = TestModels.readings(20, 10);
        stage.transform(TestModels.frame(t, 3)).count();
        int loads = ExecutorModels.loads();
        stage.transform(TestModels.frame(t, 7)).collectAsList();
        stage.copy(new org.apache.spark.ml.param.ParamMap()).transform(TestModels.frame(t, 2)).collectAsList();
        assertEquals(loads, ExecutorModels.loads());
    }
}
