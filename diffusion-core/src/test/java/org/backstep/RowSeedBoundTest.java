package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.file.Path;
import java.util.SplittableRandom;
import java.util.stream.IntStream;

import org.backstep.option.BoundOptions;
import org.backstep.report.BoundReport;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * {@link DiffusionModel#bound(Table, BoundOptions, long[])}: a batch of records, each with its own
 * seed, gives each record the draws of a one-record call {@link DiffusionModel#bound(Table,
 * BoundOptions, long)} with that seed, whatever the batch's other records and their order; the
 * figures agree to the float32 network's rounding, which OpenBLAS makes depend on a row's place in
 * the matrix (see {@link #PLACE_ROUNDING}). The reference is the one-record call of the same
 * library (a batch must not change what a record draws; common practice, no source). The model is
 * the golden format-3 file (a trained float32 network, T = 20, two continuous columns and a binary
 * one), the records 600 rows of {@link GoldenModelTest#sensorTable}, so that a batch spans three
 * chunks of 256 and two threads.
 */
class RowSeedBoundTest {

    /**
     * Relative difference (of max(|nats|, 1)) allowed between a record alone and in a batch: the
     * network's float32 outputs round differently with the row's place in the matrix (OpenBLAS's
     * sgemm treats the matrix's edges apart; measured on this model: up to 2e-6 nats on a
     * Monte Carlo bound of 4 draws, whose terms are multiplied by (T - 1)/K and partly cancel).
     * Different draws would move a bound by tenths of a nat (common practice, no source).
     */
    static final double PLACE_ROUNDING = 1e-5;

    private static DiffusionModel model;
    private static Table records;
    private static long[] seeds;

    @BeforeAll
    static void load() throws Exception {
        model = DiffusionModel.load(Path.of(RowSeedBoundTest.class.getResource("/golden/model-v3.backstep").toURI()));
        records = GoldenModelTest.sensorTable(600, 77);
        SplittableRandom rng = new SplittableRandom(5);
        seeds = new long[records.rows()];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = rng.nextLong();
        }
    }

    @Test
    void aBatchGivesEachRecordTheDrawsOfItsOneRecordCall() {
        for (BoundOptions how : new BoundOptions[] {BoundOptions.exact(), BoundOptions.sampled(4),
                BoundOptions.exactStrided(5), BoundOptions.steady(4)}) {
            BoundReport batch = model.bound(records, how, seeds);
            for (int i = 0; i < records.rows(); i++) {
                Table record = records.selectRows(new int[] {i});
                BoundReport one = model.bound(record, how, seeds[i]);
                double tol = PLACE_ROUNDING * Math.max(1.0, Math.abs(one.nats()[0]));
                assertEquals(one.nats()[0], batch.nats()[i], tol, how + " record " + i);
                assertEquals(one.standardErrors()[0], batch.standardErrors()[i], tol, how + " standard error " + i);
                // the one-record form of the batched call is the one-seed call, bit for bit
                assertEquals(one.nats()[0], model.bound(record, how, new long[] {seeds[i]}).nats()[0], 0.0,
                        how + " record " + i + " alone");
            }
        }
    }

    @Test
    void aRecordsFiguresDoNotDependOnTheOtherRecordsOrTheirOrder() {
        BoundOptions how = BoundOptions.sampled(4);
        double[] all = model.bound(records, how, seeds).nats();
        int[] reversed = IntStream.range(0, 300).map(i -> 299 - i).toArray();
        long[] reversedSeeds = IntStream.of(reversed).mapToLong(i -> seeds[i]).toArray();
        double[] part = model.bound(records.selectRows(reversed), how, reversedSeeds).nats();
        for (int k = 0; k < reversed.length; k++) {
            double a = all[reversed[k]];
            assertEquals(a, part[k], PLACE_ROUNDING * Math.max(1.0, Math.abs(a)), "record " + reversed[k]);
        }
        // and the same batch twice gives the same bits (determinism)
        assertArrayEquals(all, model.bound(records, how, seeds).nats(), 0.0);
    }

    @Test
    void theSeedCountMustMatchTheRecords() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> model.bound(records, BoundOptions.exact(), new long[3]));
        assertEquals("rowSeeds has 3 seeds; expected 600 (one per record)", e.getMessage());
    }
}
