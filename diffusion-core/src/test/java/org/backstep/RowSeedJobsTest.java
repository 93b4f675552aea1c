package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.file.Path;
import java.util.SplittableRandom;
import java.util.stream.IntStream;

import org.backstep.option.DenoisingOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The per-record-seed forms of imputation, denoising and sampling
 * ({@link DiffusionModel#impute(Table, ImputationOptions, long[])},
 * {@link DiffusionModel#denoise(Table, DenoisingOptions, long[])},
 * {@link DiffusionModel#sample(SamplingPlan, long[])}): a batch gives each record the draws of the
 * one-record call with its seed, whatever the other records and their order. The reference is the
 * one-record call of the same library (a batch must not change what a record draws; common
 * practice, no source). Model and records as in {@link RowSeedBoundTest}: the golden format-3 file
 * (T = 20, two continuous columns and a binary one) and rows of {@link GoldenModelTest#sensorTable},
 * 300 of them so that a batch spans two chunks of 256 and two threads.
 */
class RowSeedJobsTest {

    /**
     * Absolute difference allowed (in the columns' units, which are of order 1 to 10 here) between
     * a record's figure alone and in a batch: the float32 network rounds a row's products
     * differently with its place in the matrix (OpenBLAS's sgemm treats the matrix's edges apart),
     * and the chain carries that rounding through its steps; measured on this model over 300
     * records (20 steps, 5 draws): at most 3.2e-6 in an imputed draw, 3.6e-7 in a denoised mean or
     * spread, 3.7e-6 in a sampled cell; no binary draw took the other value. A different draw moves a cell by about its
     * conditional spread, tenths here (common practice, no source).
     */
    static final double PLACE_ROUNDING = 1e-4;

    private static DiffusionModel model;
    private static Table records;
    private static Table gappy;
    private static long[] seeds;

    @BeforeAll
    static void load() throws Exception {
        model = DiffusionModel.load(Path.of(RowSeedJobsTest.class.getResource("/golden/model-v3.backstep").toURI()));
        records = GoldenModelTest.sensorTable(300, 78);
        double[][] cells = records.toArray();
        for (int i = 0; i < cells.length; i++) {
            if (i % 3 != 2) {
                cells[i][i % 3] = Double.NaN;     // every third record complete; the others miss one cell
            }
        }
        gappy = records.withRows(cells);
        SplittableRandom rng = new SplittableRandom(6);
        seeds = new long[records.rows()];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = rng.nextLong();
        }
    }

    @Test
    void anImputedBatchGivesEachRecordTheDrawsOfItsOneRecordCall() {
        ImputationOptions how = Defaults.imputation().withDraws(5);
        Imputation batch = model.impute(gappy, how, seeds);
        for (int i = 0; i < gappy.rows(); i++) {
            Imputation one = model.impute(gappy.selectRows(new int[] {i}), how, seeds[i]);
            for (int j = 0; j < gappy.columns(); j++) {
                for (int k = 0; k < how.draws(); k++) {
                    double a = one.draws().get(k).get(0, j);
                    double b = batch.draws().get(k).get(i, j);
                    assertEquals(a, b, PLACE_ROUNDING, "record " + i + ", column " + j + ", draw " + k);
                }
                assertEquals(one.mean().get(0, j), batch.mean().get(i, j), PLACE_ROUNDING, "mean " + i + ", " + j);
            }
        }
        // the one-record form of the batched call is the one-seed call, bit for bit
        Table first = gappy.selectRows(new int[] {0});
        assertEquals(model.impute(first, how, seeds[0]).mean(), model.impute(first, how, new long[] {seeds[0]}).mean());
    }

    @Test
    void aDenoisedBatchGivesEachRecordTheDrawsOfItsOneRecordCall() {
        DenoisingOptions how = Defaults.denoising(0.3, 0.3, 0.0).withDraws(5);
        Denoising batch = model.denoise(records, how, seeds);
        for (int i = 0; i < records.rows(); i++) {
            Denoising one = model.denoise(records.selectRows(new int[] {i}), how, seeds[i]);
            for (int j = 0; j < records.columns(); j++) {
                assertEquals(one.mean().get(0, j), batch.mean().get(i, j), PLACE_ROUNDING, "mean " + i + ", " + j);
                assertEquals(one.standardDeviation().get(0, j), batch.standardDeviation().get(i, j), PLACE_ROUNDING,
                        "sd " + i + ", " + j);
            }
        }
    }

    @Test
    void aSampledBatchGivesEachSeedTheRecordOfItsOneRecordCall() {
        long[] some = java.util.Arrays.copyOf(seeds, 260);
        Table batch = model.sample(SamplingPlan.ancestral(), some);
        for (int i = 0; i < some.length; i++) {
            double[] one = model.sample(1, SamplingPlan.ancestral(), some[i]).row(0);
            double[] inBatch = batch.row(i);
            for (int j = 0; j < one.length; j++) {
                assertEquals(one[j], inBatch[j], PLACE_ROUNDING, "record " + i + ", column " + j);
            }
        }
    }

    @Test
    void aRecordsDrawsDoNotDependOnTheOtherRecordsOrTheirOrder() {
        ImputationOptions how = Defaults.imputation().withDraws(3);
        Table all = model.impute(gappy, how, seeds).mean();
        int[] reversed = IntStream.range(0, 120).map(i -> 119 - i).toArray();
        long[] reversedSeeds = IntStream.of(reversed).mapToLong(i -> seeds[i]).toArray();
        Table part = model.impute(gappy.selectRows(reversed), how, reversedSeeds).mean();
        for (int k = 0; k < reversed.length; k++) {
            for (int j = 0; j < gappy.columns(); j++) {
                assertEquals(all.get(reversed[k], j), part.get(k, j), PLACE_ROUNDING, "record " + reversed[k]);
            }
        }
        // and the same batch twice gives the same bits (determinism)
        assertArrayEquals(all.toArray(), model.impute(gappy, how, seeds).mean().toArray());
    }

    @Test
    void theSeedCountMustMatchTheRecords() {
        assertEquals("rowSeeds has 3 seeds; expected 300 (one per record)", assertThrows(IllegalArgumentException.class,
                () -> model.impute(gappy, Defaults.imputation(), new long[3])).getMessage());
        assertEquals("rowSeeds has 2 seeds; expected 300 (one per record)", assertThrows(IllegalArgumentException.class,
                () -> model.denoise(records, Defaults.denoising(0.3, 0.3, 0.0), new long[2])).getMessage());
        assertThrows(IllegalArgumentException.class, () -> model.sample(SamplingPlan.ancestral(), new long[0]));
    }
}
