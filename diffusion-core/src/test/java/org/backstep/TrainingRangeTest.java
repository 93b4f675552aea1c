package org.backstep;

import org.backstep.option.BoundOptions;
import org.backstep.option.StepInput;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.training.EpochRecord;
import org.junit.jupiter.api.Test;

import java.util.List;
import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Training rows holding a cell beyond the model space's range, or outside a log column's support,
 * are left out with a note naming row and column; the fit goes on, and the same rows are then
 * scored +infinity and flagged (issue 13, item 1). A small network for a few epochs: the checks are
 * on the rows, not on how well it learned.
 */
class TrainingRangeTest {

    /** Rows and the cell put in each: continuous 'temp' and log-scale 'flow'. */
    private static final int[] BROKEN_ROWS = {17, 50, 120, 200};
    private static final String[] BROKEN_COLUMNS = {"temp", "flow", "temp", "temp"};
    private static final double[] BROKEN_VALUES = {1e39, -1e300, 1e15, -1e300};
    /** 1e300 in the log column: log 1e300 = 690.8, within range, so kept in training. */
    private static final int KEPT_ROW = 250;
    /** The training mean of temp, 20, within this many of its sd (3) once the broken rows are out (common practice, no source). */
    private static final double MEAN_TOLERANCE = 0.5;

    private static Table rows(int n, long seed, boolean broken) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            double temp = 20.0 + 3.0 * rng.nextGaussian();
            rows[i] = new double[] {temp, Math.exp(1.0 + 0.3 * rng.nextGaussian() + 0.05 * temp),
                    rng.nextDouble() < 0.2 ? 1.0 : 0.0};
        }
        if (broken) {
            for (int k = 0; k < BROKEN_ROWS.length; k++) {
                rows[BROKEN_ROWS[k]][BROKEN_COLUMNS[k].equals("temp") ? 0 : 1] = BROKEN_VALUES[k];
            }
            rows[KEPT_ROW][1] = 1e300;
        }
        return Table.of(List.of("temp", "flow", "door"),
                List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
    }

    @Test
    void brokenTrainingRowsAreLeftOutWithANoteAndThenFlagged() {
        Table table = rows(300, 1, true);
        DiffusionModel model = Backstep.builder().steps(20).hidden(16, 16).timeEmbedding(8, StepInput.EVERY_BLOCK)
                .batchSize(64).epochs(3).checkpointFraction(0.2).logColumns("flow").seed(2).threads(2).fit(table);
        List<String> notes = model.provenance().notes();
        for (int k = 0; k < BROKEN_ROWS.length; k++) {
            String row = "row " + BROKEN_ROWS[k] + ", column '" + BROKEN_COLUMNS[k] + "'";
            assertTrue(notes.stream().anyMatch(n -> n.startsWith(row) && n.contains("left out of training")),
                    row + " has no note in " + notes);
        }
        assertFalse(notes.stream().anyMatch(n -> n.startsWith("row " + KEPT_ROW + ",")), notes.toString());
        assertEquals(300 - BROKEN_ROWS.length, model.provenance().trainingRows() + model.provenance().checkpointRows());
        ColumnTransform temp = model.transform().transform(0);
        assertEquals(20.0, temp.shift(), MEAN_TOLERANCE * 3.0);
        for (EpochRecord e : model.history()) {
            e.checkpointBound().ifPresent(b -> assertTrue(Double.isFinite(b), "checkpoint bound " + b));
        }
        AnomalyScreen s = model.screen(rows(200, 3, false), table,
                Defaults.screening().withBound(BoundOptions.sampled(10)).withSurprisal(SurprisalOptions.none()), 4);
        for (int r : BROKEN_ROWS) {
            assertEquals(Double.POSITIVE_INFINITY, s.scores()[r], "row " + r);
            assertTrue(s.flaggedList().contains(r), "row " + r + " is not flagged");
            assertFalse(s.notesFor(r).isEmpty());
        }
        assertTrue(Double.isFinite(s.scores()[KEPT_ROW]));
    }
}
