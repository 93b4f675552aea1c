package org.backstep.spark;

import org.backstep.Defaults;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * Imputation, denoising and sampling through Spark against the core's own jobs in this JVM on the
 * same rows and seeds (bit-identical: the same calls on the same doubles).
 */
class JobsTest {

    private static final long SEED = 77L;

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

    @Test
    void imputationEqualsOneJvmForAnyPartitioning() {
        DiffusionModel model = TestModels.model();
        Table t = withHoles(TestModels.readings(16, 31));
        BackstepModel stage = BackstepModel.of(model).setJob(BackstepParams.IMPUTE).setDraws(5).setLevel(0.8)
                .setRowKeyCol(TestModels.KEY).setSeed(SEED);
        for (int partitions : new int[] {1, 3}) {
            List<Row> rows = stage.transform(TestModels.frame(t, partitions)).orderBy(TestModels.KEY).collectAsList();
            assertEquals(t.rows(), rows.size());
            for (int i = 0; i < t.rows(); i++) {
                Row r = rows.get(i);
                Table one = t.selectRows(new int[] {i});
                // reference: the core's imputation of the same row with the row's seed
                Imputation want = one.hasMissing() ? model.impute(one, Defaults.imputation().withDraws(5).withLevel(0.8), RowSeeds.ofKey(SEED, 1000L + i)) : null;
                for (int j = 0; j < TestModels.NAMES.size(); j++) {
                    String c = TestModels.NAMES.get(j);
                    double mean = r.getDouble(r.fieldIndex(c + "_mean"));
                    double lo = r.getDouble(r.fieldIndex(c + "_lower"));
                    double hi = r.getDouble(r.fieldIndex(c + "_upper"));
                    if (want == null) {
                        assertEquals(t.get(i, j), mean, 0.0);
                        assertEquals(t.get(i, j), lo, 0.0);
                        assertEquals(t.get(i, j), hi, 0.0);
                    } else {
                        assertEquals(want.mean().get(0, j), mean, 0.0, "row " + i + " " + c);
                        assertEquals(want.lower().get(0, j), lo, 0.0, "row " + i + " " + c);
                        assertEquals(want.upper().get(0, j), hi, 0.0, "row " + i + " " + c);
                    }
                    // an interval holds its mean (common practice, no source)
                    assertTrue(lo <= mean && mean <= hi, "row " + i + " " + c);
                }
            }
        }
    }

    @Test
    void denoisingEqualsOneJvm() {
        DiffusionModel model = TestModels.model();
        Table t = TestModels.readings(12, 32);
        double[] sd = {0.3, 0.3, 1.0, 0.2, 0.0};
        BackstepModel stage = BackstepModel.of(model).setJob(BackstepParams.DENOISE).setNoiseSd(sd).setDraws(4)
                .setRowKeyCol(TestModels.KEY).setSeed(SEED).setBatchRows(5);
        List<Row> rows = stage.transform(TestModels.frame(t, 2)).orderBy(TestModels.KEY).collectAsList();
        for (int i = 0; i < t.rows(); i++) {
            // reference: the core's denoising of the same row with the row's seed
            Denoising want = model.denoise(t.selectRows(new int[] {i}), Defaults.denoising(sd).withDraws(4), RowSeeds.ofKey(SEED, 1000L + i));
            Row r = rows.get(i);
            for (int j = 0; j < TestModels.NAMES.size(); j++) {
                String c = TestModels.NAMES.get(j);
                assertEquals(want.mean().get(0, j), r.getDouble(r.fieldIndex(c + "_denoised")), 0.0, "row " + i + " " + c);
                assertEquals(want.standardDeviation().get(0, j), r.getDouble(r.fieldIndex(c + "_sd")), 0.0, "row " + i + " " + c);
            }
        }
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> stage.setNoiseSd(0.3, 0.3).transform(TestModels.frame(t, 1)));
        assertTrue(e.getMessage().contains("noiseSd has 2 entries"), e.getMessage());
    }

    @Test
    void samplesSpreadOverPartitionsAreReproducibleAndEqualTheCoresSlices() {
        DiffusionModel model = TestModels.model();
        BackstepModel stage = BackstepModel.of(model).setBatchRows(40);
        Dataset<Row> drawn = stage.sample(LocalSpark.session(), 203, 4, SEED);
        assertEquals(4, drawn.javaRDD().getNumPartitions());
        List<Row> first = drawn.collectAsList();
        List<Row> again = stage.sample(LocalSpark.session(), 203, 4, SEED).collectAsList();
        assertEquals(203, first.size());
        assertEquals(first, again);
        assertEquals(TestModels.NAMES, List.of(drawn.columns()));

        // reference: partition p draws 51, 51, 51, 50 rows in slices of 40, slice s of partition p
        // seeded by RowSeeds.ofSlice(seed, p, s), each through the core's sampler in one JVM
        List<Row> want = new ArrayList<>();
        for (int p = 0; p < 4; p++) {
            long n = SampleJob.rowsOf(203, 4, p);
            for (int s = 0; s * 40 < n; s++) {
                Table slice = model.sample((int) Math.min(40, n - s * 40L), RowSeeds.ofSlice(SEED, p, s));
                for (int r = 0; r < slice.rows(); r++) {
                    double[] v = slice.row(r);
                    want.add(org.apache.spark.sql.RowFactory.create(v[0], v[1], v[2], v[3], v[4]));
                }
            }
        }
        assertEquals(want, first);
        assertNotEquals(first, stage.sample(LocalSpark.session(), 203, 4, SEED + 1).collectAsList());
    }
}
