package org.backstep;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.file.Path;
import java.util.stream.IntStream;

import org.backstep.option.BoundOptions;
import org.backstep.report.DriftReport;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * {@link DiffusionModel#screeningScores} scores a table in parts as the whole, to the network's
 * rounding ({@link RowSeedBoundTest#PLACE_ROUNDING}; common random numbers: every record shares the
 * seed's draws), and
 * {@link DiffusionModel#drift(Table, double[], Table, double[])} on such scores equals
 * {@link DiffusionModel#drift(Table, Table, org.backstep.option.DriftOptions, long)}. The reference
 * is the one-call form of the same library (common practice, no source); the model is the golden
 * format-3 file, the batches {@link GoldenModelTest#sensorTable} rows of two seeds.
 */
class DriftInPartsTest {

    @Test
    void scoresInPartsAndDriftFromThemEqualTheWholeCall() throws Exception {
        DiffusionModel model = DiffusionModel.load(Path.of(DriftInPartsTest.class.getResource("/golden/model-v3.backstep").toURI()));
        Table reference = GoldenModelTest.sensorTable(300, 3);
        Table batch = GoldenModelTest.sensorTable(280, 4);
        BoundOptions how = Defaults.drift().bound();
        double[] whole = model.screeningScores(reference, how, 8);
        double[] first = model.screeningScores(reference.selectRows(IntStream.range(0, 7).toArray()), how, 8);
        double[] rest = model.screeningScores(reference.selectRows(IntStream.range(7, 300).toArray()), how, 8);
        double[] joined = new double[300];
        System.arraycopy(first, 0, joined, 0, 7);
        System.arraycopy(rest, 0, joined, 7, 293);
        for (int i = 0; i < 300; i++) {
            assertEquals(whole[i], joined[i], RowSeedBoundTest.PLACE_ROUNDING * Math.max(1.0, Math.abs(whole[i])), "row " + i);
        }
        DriftReport expected = model.drift(reference, batch, Defaults.drift(), 8);
        // the report depends on the scores through their ranks only, which rounding does not reorder here
        DriftReport fromScores = model.drift(reference, joined, batch, model.screeningScores(batch, how, 8));
        assertEquals(expected, fromScores);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> model.drift(reference, first, batch, whole));
        assertEquals("referenceScores has 7 values; expected 300 (one per reference row)", e.getMessage());
    }
}
