package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.List;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.backstep.DiffusionModel;
import org.backstep.Defaults;
import org.backstep.option.BoundOptions;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.DriftReport;
import org.backstep.report.Surprisal;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * Attribution (the culprit columns of flagged rows) and drift through Spark against the same rows
 * through {@link DiffusionModel} in this JVM, for 1, 2 and 7 partitions. References: a flagged
 * row's surprisal is the core's {@code surprisal} of that one row with the seed {@link RowSeeds}
 * derives for it (one record per call on both sides, so to the last bit); the drift report is the
 * core's {@code drift} of the two tables with the same bound and seed (its tests depend on the
 * scores through their ranks, which the network's rounding in batches does not reorder here, and
 * on the cells, which Spark moves unchanged). Common practice, no source.
 */
class AttributionDriftTest {

    private static final long SEED = 17L;
    private static final SurprisalOptions SURPRISAL = new SurprisalOptions(16, 10, 1);

    @Test
    void flaggedRowsGetTheOneJvmSurprisalAndItsMostSurprisingColumns() {
        DiffusionModel model = TestModels.model();
        double[][] x = TestModels.readings(24, 31).toArray();
        x[3][3] += 4.0;                    // an invented compressor-power fault
        x[9][0] -= 5.0;                    // an invented supply-air fault
        Table t = Table.of(TestModels.NAMES, TestModels.KINDS, x);
        BackstepModel stage = BackstepModel.of(model).setRowKeyCol(TestModels.KEY).setSeed(SEED).setScoreDraws(4)
                .setJob(BackstepParams.ATTRIBUTE).setSurprisalDraws(SURPRISAL.draws())
                .setSurprisalSteps(SURPRISAL.steps()).setSurprisalRounds(SURPRISAL.rounds()).setCulprits(2);
        double[] alone = new double[t.rows()];
        for (int i = 0; i < t.rows(); i++) {
            alone[i] = model.bound(t.selectRows(new int[] {i}), BoundOptions.sampled(4), RowSeeds.ofKey(SEED, 1000L + i)).nats()[0];
        }
        double threshold = Arrays.stream(alone).sorted().toArray()[t.rows() * 3 / 4];
        stage.setThreshold(threshold);
        int flaggedSeen = 0;
        for (int partitions : new int[] {1, 2, 7}) {
            List<Row> rows = stage.transform(TestModels.frame(t, partitions)).collectAsList();
            assertEquals(t.rows(), rows.size());
            for (Row r : rows) {
                int i = (int) (r.getLong(r.fieldIndex(TestModels.KEY)) - 1000L);
                double nats = r.getDouble(r.fieldIndex("backstep_nats"));
                boolean flag = r.getBoolean(r.fieldIndex("backstep_flag"));
                List<String> culprits = r.getList(r.fieldIndex("backstep_culprits"));
                List<Double> surprisal = r.getList(r.fieldIndex("backstep_surprisal"));
                assertEquals(alone[i], nats, ScoringTest.tolerance(alone[i]), "row " + i);
                assertEquals(nats > threshold, flag, "row " + i);
                if (!flag) {
                    assertTrue(culprits.isEmpty() && surprisal.isEmpty(), "row " + i + " is not flagged");
                    continue;
                }
                flaggedSeen++;
                Surprisal want = model.surprisal(t.selectRows(new int[] {i}), SURPRISAL, RowSeeds.ofKey(SEED, 1000L + i));
                assertArrayEquals(want.nats()[0], surprisal.stream().mapToDouble(Double::doubleValue).toArray(), 0.0,
                        "row " + i);
                assertEquals(want.ranked(0).stream().limit(2).map(c -> c.column()).toList(), culprits, "row " + i);
            }
        }
        assertTrue(flaggedSeen >= 3 * 5, "flagged rows seen: " + flaggedSeen);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> BackstepModel.of(model).setJob(BackstepParams.ATTRIBUTE).transform(TestModels.frame(t, 1)));
        assertTrue(e.getMessage().contains("threshold is NaN"), e.getMessage());
        IllegalArgumentException few = assertThrows(IllegalArgumentException.class,
                () -> stage.copy(org.apache.spark.ml.param.ParamMap.empty()).setSurprisalDraws(8).transformSchema(TestModels.schema()));
        assertEquals("surprisalDraws is 8; expected at least 16", few.getMessage());
    }

    @Test
    void driftOfTwoDataFramesEqualsTheOneJvmReport() {
        DiffusionModel model = TestModels.model();
        Table reference = TestModels.readings(300, 41);
        double[][] x = TestModels.readings(260, 42).toArray();
        for (double[] row : x) {
            row[2] += 3.0;                 // a warmer season: ambient shifted by 3 degrees (invented)
        }
        Table batch = Table.of(TestModels.NAMES, TestModels.KINDS, x);
        DriftReport want = model.drift(reference, batch, Defaults.drift().withBound(BoundOptions.sampled(4)), SEED);
        BackstepModel stage = BackstepModel.of(model).setSeed(SEED).setScoreDraws(4);
        for (int partitions : new int[] {1, 2, 7}) {
            DriftReport got = stage.drift(TestModels.frame(reference, partitions), TestModels.frame(batch, 9 - partitions));
            assertEquals(want.score(), got.score(), partitions + " partitions");
            assertEquals(want.columns(), got.columns(), partitions + " partitions");
            assertEquals(want.referenceRows(), got.referenceRows());
            assertEquals(want.batchRows(), got.batchRows());
            assertEquals(want.notes(), got.notes());
        }
        assertTrue(want.drifted(0.05), want.toString());
        double[][] gap = reference.toArray();
        gap[5][1] = Double.NaN;
        Dataset<Row> withGap = TestModels.frame(Table.of(TestModels.NAMES, TestModels.KINDS, gap), 2);
        Exception e = assertThrows(Exception.class, () -> stage.setRowKeyCol(TestModels.KEY).drift(withGap, withGap));
        String text = e.toString() + " " + (e.getCause() == null ? "" : e.getCause().toString());
        assertTrue(text.contains("reading_id = 1005, column 'return_air' is missing"), text);
    }
}
