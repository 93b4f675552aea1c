package org.backstep;

import org.backstep.option.BoundOptions;
import org.backstep.report.BoundReport;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

import java.util.Arrays;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * bound() never returns a silent NaN (issue 13): a finite cell beyond the float32 model space's
 * range, or outside its column's support, is refused naming row and column, as the ranges of
 * {@code ScoringRange} define them (|z| above sqrt(beta_1) 2^23, IEEE 754 binary32's 24 significant
 * bits); a large value the range holds (a log column) gets a finite bound. Binary columns hold 0
 * and 1 only: such a cell is refused when the table is made (Table's invariant), before bound().
 */
class BoundRangeTest {

    private static final NoiseSchedule SCHEDULE = NoiseSchedule.linear(100);
    private static final DiffusionModel MODEL = ScreeningCases.threeKinds(SCHEDULE);
    private static final Table NORMAL = ScreeningCases.threeKindsRows(20, 2);
    private static final BoundOptions FAST = BoundOptions.sampled(20);

    private static Table withCell(int column, double value) {
        double[] row = {0.3, 1.2, ScreeningCases.UNIT};
        row[column] = value;
        return ScreeningCases.append(NORMAL, row);
    }

    /** In the continuous column (training sd of order 1) every one of these is beyond range: refused, not NaN. */
    @ParameterizedTest
    @ValueSource(doubles = {1e15, 1e39, 1e300, -1e300})
    void aContinuousCellBeyondRangeIsRefusedNamingRowAndColumn(double value) {
        Table records = withCell(0, value);
        for (BoundOptions how : List.of(FAST, Defaults.bound())) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> MODEL.bound(records, how, 7));
            assertTrue(e.getMessage().contains("row " + NORMAL.rows()) && e.getMessage().contains("column 'temp'")
                    && e.getMessage().contains("screen"), e.getMessage());
        }
    }

    /** In the log column 1e15, 1e39 and 1e300 are within range (log x = 34.5, 89.8, 690.8): finite; -1e300 is outside the support. */
    @ParameterizedTest
    @ValueSource(doubles = {1e15, 1e39, 1e300, -1e300})
    void aLogColumnBoundsLargeValuesAndRefusesNonPositiveOnes(double value) {
        Table records = withCell(1, value);
        if (value > 0) {
            BoundReport b = MODEL.bound(records, FAST, 7);
            double[] per = b.nats();
            assertTrue(Arrays.stream(per).allMatch(Double::isFinite), Arrays.toString(per));
            double highest = Arrays.stream(per, 0, NORMAL.rows()).max().orElseThrow();
            assertTrue(per[NORMAL.rows()] > highest, "flow = " + value + " bounds " + per[NORMAL.rows()]);
        } else {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> MODEL.bound(records, FAST, 7));
            assertTrue(e.getMessage().contains("row " + NORMAL.rows()) && e.getMessage().contains("column 'flow'"), e.getMessage());
        }
    }

    /** The mixed model (a continuous and a binary column): the continuous cell is refused; the binary cell cannot be made. */
    @ParameterizedTest
    @ValueSource(doubles = {1e15, 1e39, 1e300, -1e300})
    void onTheMixedModelTheContinuousCellIsRefusedAndTheBinaryCellCannotBeMade(double value) {
        DiffusionModel mixed = ImputationCases.mixedModel(SCHEDULE);
        Table records = ScreeningCases.append(mixed.sample(5, 4), new double[] {value, 1.0});
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> mixed.bound(records, FAST, 5));
        assertTrue(e.getMessage().contains("row 5") && e.getMessage().contains("column 'x'"), e.getMessage());
        IllegalArgumentException binary = assertThrows(IllegalArgumentException.class, () -> Table.of(List.of("x", "b"),
                List.of(ColumnKind.CONTINUOUS, ColumnKind.BINARY), new double[][] {{0.0, 1.0}, {0.5, value}}));
        assertTrue(binary.getMessage().contains("row 1") && binary.getMessage().contains("column 'b'"), binary.getMessage());
        assertEquals(5, mixed.bound(mixed.sample(5, 4), FAST, 5).nats().length);
    }
}
