package org.backstep.spark;

import org.backstep.Defaults;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.option.SamplingPlan;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * Imputation, denoising and sampling through Spark against the core's own jobs in this JVM on the
 * same rows and seeds: the core's batch call with a seed per record
 * ({@code DiffusionModel.impute/denoise(.., long[] rowSeeds)}, {@code sample(SamplingPlan, long[])}),
 * for 1, 2 and 7 partitions. Spark sends the rows to the same calls in other batches, so a row sits
 * at another place in the network's matrix: the figures agree to {@link #PLACE_ROUNDING}, not bit for
 * bit (common practice, no source).
 */
class JobsTest {

    private static final long SEED = 77L;

    /**
     * Relative difference (of max(|value|, 1)) allowed between a cell through Spark and through the
     * core's batch call: OpenBLAS's sgemm rounds a row's products differently with its place in the
     * matrix, and the reverse chain carries that rounding through its steps (the core measured up to
     * 3.7e-6 on cells of order 5, {@code RowSeedJobsTest}); a different draw moves a cell by its
     * conditional spread, tenths of a unit here. A binary draw (a uniform against a probability) takes
     * the other value on such rounding only when the uniform lies within about 1e-7 of the probability.
     */
    static final double PLACE_ROUNDING = 1e-5;

    /**
     * As {@link #PLACE_ROUNDING}, for synthetic rows: ancestral sampling runs all T steps from the
     * prior, and where this small test model's chain strays far (cells in the thousands: it was
     * trained for 30 epochs on 400 rows) each step multiplies the rounding; measured up to 6.4e-5
     * relative over 203 rows drawn three ways (common practice, no source).
     */
    static final double SAMPLE_ROUNDING = 5e-4;

    static double tolerance(double v) {
        return PLACE_ROUNDING * Math.max(1.0, Math.abs(v));
    }

    private static Table withHoles(Table t) {
        double[][] x = t.toArray();
        for (int i = 0; i < x.length; i++) {
            if (i % 3 == 0) {
                x[i][1] = Double.NaN;            // return air missing
            }
            if (i % 4 == 1) {
                x[i][4] = Double.NaN;            // door state missing
            }
        }
        return t.withRows(x);
    }

    /** The seed of each row of a frame keyed 1000, 1001, ...: RowSeeds.ofKey(seed, key), as the Spark jobs use. */
    static long[] keySeeds(long seed, int rows) {
        long[] s = new long[rows];
        for (int i = 0; i < rows; i++) {
            s[i] = RowSeeds.ofKey(seed, 1000L + i);
        }
        return s;
    }

    @Test
    void imputationEqualsTheCoresBatchCallForAnyPartitioning() {
        DiffusionModel model = TestModels.model();
        Table t = withHoles(TestModels.readings(40, 31));
        BackstepModel stage = BackstepModel.of(model).setJob(BackstepParams.IMPUTE).setDraws(5).setLevel(0.8)
                .setRowKeyCol(TestModels.KEY).setSeed(SEED).setBatchRows(16);
        // reference: the core's batch imputation of the same rows, each with its row's seed
        Imputation want = model.impute(t, Defaults.imputation().withDraws(5).withLevel(0.8), keySeeds(SEED, t.rows()));
        for (int partitions : new int[] {1, 2, 7}) {
            List<Row> rows = stage.transform(TestModels.frame(t, partitions)).orderBy(TestModels.KEY).collectAsList();
            assertEquals(t.rows(), rows.size());
            for (int i = 0; i < t.rows(); i++) {
                Row r = rows.get(i);
                for (int j = 0; j < TestModels.NAMES.size(); j++) {
                    String c = TestModels.NAMES.get(j);
                    double mean = r.getDouble(r.fieldIndex(c + "_mean"));
                    double lo = r.getDouble(r.fieldIndex(c + "_lower"));
                    double hi = r.getDouble(r.fieldIndex(c + "_upper"));
                    String at = partitions + " partitions, row " + i + " " + c;
                    if (!Double.isNaN(t.get(i, j))) {
                        assertEquals(t.get(i, j), mean, 0.0, at);     // observed cells come back as they are
                        assertEquals(t.get(i, j), lo, 0.0, at);
                        assertEquals(t.get(i, j), hi, 0.0, at);
                    }
                    assertEquals(want.mean().get(i, j), mean, tolerance(mean), at);
                    assertEquals(want.lower().get(i, j), lo, tolerance(lo), at);
                    assertEquals(want.upper().get(i, j), hi, tolerance(hi), at);
                    // an interval holds its mean (common practice, no source)
                    assertTrue(lo <= mean && mean <= hi, at);
                }
            }
        }
        // keepDraws: the draws themselves, each equal to the core's draw of that cell (to the rounding)
        List<Row> kept = stage.copy(org.apache.spark.ml.param.ParamMap.empty()).setKeepDraws(true)
                .transform(TestModels.frame(t, 2)).orderBy(TestModels.KEY).collectAsList();
        for (int i = 0; i < t.rows(); i++) {
            for (int j = 0; j < TestModels.NAMES.size(); j++) {
                List<Double> draws = kept.get(i).getList(kept.get(i).fieldIndex(TestModels.NAMES.get(j) + "_draws"));
                assertEquals(5, draws.size());
                for (int k = 0; k < 5; k++) {
                    double w = want.draws().get(k).get(i, j);
                    assertEquals(w, draws.get(k), tolerance(w), "row " + i + " draw " + k);
                }
            }
        }
        // one row alone through the core, with its seed, gives the same draws (to the rounding)
        Imputation one = model.impute(t.selectRows(new int[] {3}), Defaults.imputation().withDraws(5).withLevel(0.8),
                RowSeeds.ofKey(SEED, 1003L));
        assertEquals(one.mean().get(0, 1), want.mean().get(3, 1), tolerance(one.mean().get(0, 1)));
    }

    @Test
    void denoisingEqualsTheCoresBatchCallForAnyPartitioning() {
        DiffusionModel model = TestModels.model();
        Table t = TestModels.readings(30, 32);
        double[] sd = {0.3, 0.3, 1.0, 0.2, 0.0};
        BackstepModel stage = BackstepModel.of(model).setJob(BackstepParams.DENOISE).setNoiseSd(sd).setDraws(4)
                .setRowKeyCol(TestModels.KEY).setSeed(SEED).setBatchRows(5);
        // reference: the core's batch denoising of the same rows, each with its row's seed
        Denoising want = model.denoise(t, Defaults.denoising(sd).withDraws(4), keySeeds(SEED, t.rows()));
        for (int partitions : new int[] {1, 2, 7}) {
            List<Row> rows = stage.transform(TestModels.frame(t, partitions)).orderBy(TestModels.KEY).collectAsList();
            for (int i = 0; i < t.rows(); i++) {
                Row r = rows.get(i);
                for (int j = 0; j < TestModels.NAMES.size(); j++) {
                    String c = TestModels.NAMES.get(j);
                    double mean = r.getDouble(r.fieldIndex(c + "_denoised"));
                    double spread = r.getDouble(r.fieldIndex(c + "_sd"));
                    String at = partitions + " partitions, row " + i + " " + c;
                    assertEquals(want.mean().get(i, j), mean, tolerance(mean), at);
                    assertEquals(want.standardDeviation().get(i, j), spread, tolerance(spread), at);
                }
            }
        }
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> stage.setNoiseSd(0.3, 0.3).transform(TestModels.frame(t, 1)));
        assertTrue(e.getMessage().contains("noiseSd has 2 entries"), e.getMessage());
    }

    @Test
    void samplesDoNotDependOnThePartitionsOrSlicesAndEqualTheCoresBatchCall() {
        DiffusionModel model = TestModels.model();
        BackstepModel stage = BackstepModel.of(model).setBatchRows(40);
        Dataset<Row> drawn = stage.sample(LocalSpark.session(), 203, 4, SEED);
        assertEquals(4, drawn.javaRDD().getNumPartitions());
        List<Row> first = drawn.collectAsList();
        assertEquals(203, first.size());
        assertEquals(first, stage.sample(LocalSpark.session(), 203, 4, SEED).collectAsList());
        assertEquals(TestModels.NAMES, List.of(drawn.columns()));

        // reference: row i drawn from RowSeeds.ofKey(seed, i) by the core's per-record-seed sampler
        long[] seeds = new long[203];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = RowSeeds.ofKey(SEED, i);
        }
        Table want = model.sample(SamplingPlan.ancestral(), seeds);
        for (List<Row> got : List.of(first, stage.setBatchRows(7).sample(LocalSpark.session(), 203, 1, SEED).collectAsList(),
                stage.setBatchRows(256).sample(LocalSpark.session(), 203, 7, SEED).collectAsList())) {
            assertEquals(203, got.size());
            for (int i = 0; i < got.size(); i++) {
                for (int j = 0; j < TestModels.NAMES.size(); j++) {
                    double v = got.get(i).getDouble(j);
                    assertEquals(want.get(i, j), v, SAMPLE_ROUNDING * Math.max(1.0, Math.abs(v)), "row " + i + " column " + j);
                }
            }
        }
        assertNotEquals(first, stage.sample(LocalSpark.session(), 203, 4, SEED + 1).collectAsList());
    }
}
