package org.backstep;

import org.backstep.option.BoundOptions;
import org.backstep.option.MissingCells;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.CellNote;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

import java.util.Arrays;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * No missing scores (issue 13, item 1): cells far beyond the training rows, in each kind of column,
 * on an exact-kernel model (no training). The expectations follow from the definitions in
 * {@code ScoringRange}: |z| beyond sqrt(beta_1) 2^23 is beyond range, a log column holds values above
 * 0 only, a constant column its one value only; a binary column holds 0 and 1 only (Table's
 * invariant).
 */
class ScreeningRangeTest {

    private static final NoiseSchedule SCHEDULE = NoiseSchedule.linear(100);
    private static final DiffusionModel MODEL = ScreeningCases.threeKinds(SCHEDULE);
    private static final Table HELD = ScreeningCases.threeKindsRows(200, 1);
    private static final Table NORMAL = ScreeningCases.threeKindsRows(20, 2);
    /** Scores only: no surprisal, a small sampled bound. */
    private static final ScreeningOptions FAST = Defaults.screening().withBound(BoundOptions.sampled(20))
            .withSurprisal(SurprisalOptions.none());
    private static final double[] ABSURD = {1e15, 1e39, 1e300, -1e300};

    private static AnomalyScreen screenWith(int column, double value) {
        double[] row = {0.3, 1.2, ScreeningCases.UNIT};
        row[column] = value;
        return MODEL.screen(HELD, ScreeningCases.append(NORMAL, row), FAST, 7);
    }

    @Test
    void theRangeIsWhereFloat32StopsAddingTheFirstStepsNoise() {
        // sqrt(beta_1) 2^23 with beta_1 = 1e-4 x 1000/T = 1e-3 at T = 100 (Ho et al. 2020's linear
        // schedule rescaled; IEEE 754 binary32 has 24 significant bits): about 2.65e5
        assertEquals(Math.sqrt(1e-3) * 8388608.0, org.backstep.internal.chain.ScoringRange.limit(SCHEDULE), 1e-6);
    }

    @ParameterizedTest
    @ValueSource(doubles = {1e15, 1e39, 1e300, -1e300})
    void aContinuousCellBeyondRangeScoresInfinityAndIsFlaggedWithANote(double value) {
        AnomalyScreen s = screenWith(0, value);
        int row = NORMAL.rows();
        assertEquals(Double.POSITIVE_INFINITY, s.scores()[row]);
        assertTrue(s.flaggedList().contains(row));
        List<CellNote> notes = s.notesFor(row);
        assertEquals(1, notes.size());
        assertEquals("temp", notes.get(0).column());
        assertEquals(CellNote.Kind.BEYOND_RANGE, notes.get(0).kind());
        assertTrue(notes.get(0).text().contains("column 'temp'"), notes.get(0).text());
        assertNoOtherChange(s);
    }

    /**
     * In a log column 1e15, 1e39 and 1e300 are within range (z = log x = 34.5, 89.8, 690.8) and
     * get finite scores past every held-out score; -1e300 is outside the support.
     */
    @Test
    void aLogColumnScoresLargeValuesAndRefusesNonPositiveOnes() {
        for (double value : ABSURD) {
            AnomalyScreen s = screenWith(1, value);
            int row = NORMAL.rows();
            double score = s.scores()[row];
            assertTrue(s.flaggedList().contains(row), "flow = " + value + " is not flagged");
            if (value > 0) {
                double highestHeldOut = Arrays.stream(s.heldOutScores()).max().orElseThrow();
                assertTrue(Double.isFinite(score) && score > highestHeldOut, "flow = " + value + " scores " + score);
                // the bound is at least the prior term alone, 1/2 alpha-bar_T z^2 (Ho et al. 2020, eq. 5)
                assertTrue(score > 0.5 * SCHEDULE.alphaBar(100) * Math.log(value) * Math.log(value) - 2.0);
                assertTrue(s.notesFor(row).isEmpty());
            } else {
                assertEquals(Double.POSITIVE_INFINITY, score);
                assertEquals(CellNote.Kind.OUTSIDE_SUPPORT, s.notesFor(row).get(0).kind());
                assertEquals("flow", s.notesFor(row).get(0).column());
            }
            assertNoOtherChange(s);
        }
    }

    @Test
    void aConstantColumnOffItsValueIsOutsideTheSupport() {
        for (double value : ABSURD) {
            AnomalyScreen s = screenWith(2, value);
            int row = NORMAL.rows();
            assertEquals(Double.POSITIVE_INFINITY, s.scores()[row]);
            assertEquals("unit", s.notesFor(row).get(0).column());
            assertEquals(CellNote.Kind.OUTSIDE_SUPPORT, s.notesFor(row).get(0).kind());
        }
    }

    /** A binary cell other than 0 or 1 is refused before any scoring, naming row and column (Table's invariant). */
    @Test
    void aBinaryCellOtherThanZeroOrOneIsRefused() {
        for (double value : ABSURD) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Table.of(
                    List.of("x", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.BINARY),
                    new double[][] {{0.0, 1.0}, {0.5, value}}));
            assertTrue(e.getMessage().contains("row 1") && e.getMessage().contains("column 'b'"), e.getMessage());
        }
    }

    /** On the mixed model (a continuous and a binary column) a continuous cell beyond range still scores +infinity. */
    @Test
    void theMixedModelScoresACellBeyondRangeAsInfinity() {
        DiffusionModel mixed = ImputationCases.mixedModel(SCHEDULE);
        Table held = mixed.sample(200, 3);
        Table records = ScreeningCases.append(mixed.sample(10, 4), new double[] {1e39, 1.0});
        AnomalyScreen s = mixed.screen(held, records, FAST, 5);
        assertEquals(Double.POSITIVE_INFINITY, s.scores()[10]);
        assertTrue(s.flaggedList().contains(10));
        assertEquals("x", s.notesFor(10).get(0).column());
    }

    @Test
    void aMissingCellIsRefusedOrImputedAsTheCallerChooses() {
        Table records = ScreeningCases.append(NORMAL, new double[] {Double.NaN, 1.1, ScreeningCases.UNIT});
        int row = NORMAL.rows();
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> MODEL.screen(HELD, records, FAST, 7));
        assertTrue(e.getMessage().contains("row " + row) && e.getMessage().contains("column 'temp'"), e.getMessage());
        AnomalyScreen s = MODEL.screen(HELD, records,
                FAST.withMissing(MissingCells.impute(Defaults.imputation().withDraws(4))), 7);
        assertTrue(Double.isFinite(s.scores()[row]));
        assertEquals(CellNote.Kind.IMPUTED, s.notesFor(row).get(0).kind());
        assertEquals("temp", s.notesFor(row).get(0).column());
        assertNoOtherChange(s);
    }

    @Test
    void aHeldOutRowBeyondRangeIsRefusedNamingRowAndColumn() {
        Table held = ScreeningCases.append(HELD, new double[] {1e39, 1.0, ScreeningCases.UNIT});
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> MODEL.screen(held, NORMAL, FAST, 7));
        assertTrue(e.getMessage().contains("heldOut row 200") && e.getMessage().contains("column 'temp'"),
                e.getMessage());
    }

    /** The normal rows score as they do without the broken row (common random numbers: a score is the record's own). */
    private static void assertNoOtherChange(AnomalyScreen s) {
        AnomalyScreen clean = MODEL.screen(HELD, NORMAL, FAST, 7);
        assertTrue(Arrays.equals(clean.scores(), Arrays.copyOf(s.scores(), NORMAL.rows())));
        assertEquals(clean.threshold(), s.threshold());
        assertFalse(Arrays.stream(s.scores()).anyMatch(Double::isNaN));
    }
}
