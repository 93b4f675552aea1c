package org.backstep.examples.fleet;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/** Shapes, determinism, missing cells and options of {@link ReeferFleet}. */
class ReeferFleetTest {

    /** Two-sided tail probability outside the binomial bounds on missing counts; a false alarm is that rare. */
    private static final double BINOMIAL_TAIL = 1e-6;
    /** Share of continuous truth cells that must differ between two seeds. */
    private static final double MIN_SHARE_CHANGED_BY_SEED = 0.99;

    private static Telemetry telemetry;

    @BeforeAll
    static void generate() {
        telemetry = ReeferFleet.generate(ReeferFleet.options());
    }

    @Test
    void defaultsAreTheDocumentedOnes() {
        ReeferFleet.Options o = ReeferFleet.options();
        // values from the brief of this package (documented defaults)
        assertEquals(48, o.containers());
        assertEquals(3, o.days());
        assertEquals(2026L, o.seed());
        assertEquals(0.125, o.faultyShare());
        assertEquals(0.05, o.missingShare());
        assertEquals(15, o.intervalMinutes());
    }

    @Test
    void sameSeedGivesBitIdenticalTelemetry() {
        // common practice, no source: determinism from the seed is a test
        Telemetry again = ReeferFleet.generate(ReeferFleet.options());
        assertBitIdentical(telemetry.cells(), again.cells());
        assertBitIdentical(telemetry.truth(), again.truth());
        assertArrayEquals(telemetry.container(), again.container());
        assertArrayEquals(telemetry.readingIndex(), again.readingIndex());
        assertArrayEquals(telemetry.fault(), again.fault());
        assertArrayEquals(telemetry.setpointC(), again.setpointC());
        assertEquals(telemetry, again);
        assertEquals(telemetry.hashCode(), again.hashCode());
    }

    @Test
    void anotherSeedGivesDifferentTelemetry() {
        // common practice, no source: the seed must reach every continuous cell
        Telemetry other = ReeferFleet.generate(ReeferFleet.options().withSeed(2027));
        double[][] a = telemetry.truth();
        double[][] b = other.truth();
        long changed = 0;
        long total = 0;
        for (int r = 0; r < a.length; r++) {
            for (int j = 0; j < ReeferFleet.DOOR_OPEN; j++) {
                changed += Double.doubleToRawLongBits(a[r][j]) != Double.doubleToRawLongBits(b[r][j]) ? 1 : 0;
                total++;
            }
        }
        assertTrue(changed >= MIN_SHARE_CHANGED_BY_SEED * total, changed + " of " + total + " cells changed");
        assertNotEquals(telemetry, other);
        assertFalse(java.util.Arrays.equals(maskOf(telemetry.cells()), maskOf(other.cells())));
    }

    @Test
    void shapesFollowTheOptions() {
        // 48 containers * 3 days * 96 readings a day = 13824 rows (arithmetic by hand)
        assertEquals(13824, telemetry.rows());
        assertEquals(List.of("supply_air_c", "return_air_c", "ambient_c", "humidity_pct", "compressor_a",
                "door_open", "defrost", "door_openings", "alarm_code"), telemetry.columnNames()); // column order from the brief
        assertEquals(List.of(false, false, false, false, false, true, true, false, false), telemetry.binaryColumns());
        double[][] cells = telemetry.cells();
        double[][] truth = telemetry.truth();
        int[] container = telemetry.container();
        int[] reading = telemetry.readingIndex();
        assertEquals(13824, cells.length);
        assertEquals(13824, truth.length);
        assertEquals(13824, container.length);
        assertEquals(13824, reading.length);
        assertEquals(13824, telemetry.fault().length);
        assertEquals(48, telemetry.setpointC().length);
        for (int r = 0; r < cells.length; r++) {
            assertEquals(9, cells[r].length);
            assertEquals(9, truth[r].length);
            // rows are container by container, one reading every 15 minutes (common practice, no source)
            assertEquals(r / 288, container[r]);
            assertEquals(r % 288, reading[r]);
        }
    }

    @Test
    void countsAndCodesAreValidAndFollowTheirCauses() {
        // common practice, no source: a count is a whole number >= 0, a code one of the labels; the relations are the
        // class comment's own rules (an open door is an opening within the hour; a stuck sensor raises sensor-fault)
        double[][] truth = telemetry.truth();
        double[][] cells = telemetry.cells();
        FaultKind[] fault = telemetry.fault();
        int[] codes = new int[ReeferFleet.ALARM_CODES.size()];
        int stuckRows = 0;
        int stuckAlarms = 0;
        int healthyAlarms = 0;
        int healthy = 0;
        for (int r = 0; r < truth.length; r++) {
            double n = truth[r][ReeferFleet.DOOR_OPENINGS];
            assertTrue(n >= 0 && n == Math.rint(n), "door_openings " + n + " at row " + r);
            if (truth[r][ReeferFleet.DOOR_OPEN] == 1.0) {
                assertTrue(n >= 1, "door open without an opening in the hour at row " + r);
            }
            double code = truth[r][ReeferFleet.ALARM_CODE];
            assertTrue(code >= 0 && code < codes.length && code == Math.rint(code), "alarm_code " + code + " at row " + r);
            codes[(int) code]++;
            double cell = cells[r][ReeferFleet.ALARM_CODE];
            assertTrue(Double.isNaN(cell) || cell == code, "a cell differs from the truth at row " + r);
            if (fault[r] == FaultKind.STUCK_SENSOR) {
                stuckRows++;
                stuckAlarms += code == ReeferFleet.ALARM_SENSOR_FAULT ? 1 : 0;
            } else if (fault[r] == FaultKind.NONE) {
                healthy++;
                healthyAlarms += code == ReeferFleet.ALARM_SENSOR_FAULT ? 1 : 0;
            }
        }
        for (int k = 0; k < codes.length; k++) {
            assertTrue(codes[k] > 0, "no row has the code " + ReeferFleet.ALARM_CODES.get(k));
        }
        assertTrue(codes[ReeferFleet.ALARM_NONE] > 0.8 * truth.length, "none on " + codes[ReeferFleet.ALARM_NONE] + " rows");
        // sensor-fault: about half the stuck rows past the 8th, against 0.2% of healthy rows
        assertTrue(stuckAlarms > 0.2 * stuckRows, stuckAlarms + " of " + stuckRows);
        assertTrue(healthyAlarms < 0.01 * healthy, healthyAlarms + " of " + healthy);
        // the seven measured columns do not depend on the new ones: their own streams (the class comment)
        assertEquals(9, org.backstep.examples.fleet.FleetTables.cells(telemetry).columns());
        assertEquals(org.backstep.table.ColumnKind.CATEGORICAL, FleetTables.cells(telemetry).kind(ReeferFleet.ALARM_CODE));
        assertEquals(ReeferFleet.ALARM_CODES, FleetTables.cells(telemetry).categories(ReeferFleet.ALARM_CODE));
    }

    @Test
    void smallRunHasOneDayOfReadingsPerContainer() {
        Telemetry small = ReeferFleet.generate(ReeferFleet.options().withContainers(3).withDays(1));
        assertEquals(3 * 96, small.rows()); // 24 h * 4 readings an hour, by hand
        assertEquals(3, small.setpointC().length);
        assertEquals(0, small.faultyContainers().length); // round(0.125 * 3) = 0
    }

    @Test
    void setpointsAreTheThreeCargoKinds() {
        // our own invented scenario; relation by construction: frozen -18 C, chilled +4 C, tropical +13 C
        Set<Double> seen = new TreeSet<>();
        int frozen = 0;
        for (double s : telemetry.setpointC()) {
            seen.add(s);
            frozen += s == -18.0 ? 1 : 0;
        }
        assertEquals(Set.of(-18.0, 4.0, 13.0), seen);
        assertEquals(Math.round(0.45 * 48), frozen); // fixed count round(0.45 n), by construction
    }

    @Test
    void missingShareLiesWithinBinomialBounds() {
        // each cell missing independently with probability p: the count is Binomial(cells, p);
        // bounds from commons-math3 BinomialDistribution quantiles
        double p = telemetry.options().missingShare();
        double[][] cells = telemetry.cells();
        double[][] truth = telemetry.truth();
        int rows = cells.length;
        int[] missingPerColumn = new int[9];
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < 9; j++) {
                if (Double.isNaN(cells[r][j])) {
                    missingPerColumn[j]++;
                    assertFalse(Double.isNaN(truth[r][j]), "truth keeps the blanked cell"); // by construction
                } else {
                    assertEquals(Double.doubleToRawLongBits(truth[r][j]), Double.doubleToRawLongBits(cells[r][j]));
                }
            }
        }
        int total = 0;
        for (int j = 0; j < 9; j++) {
            assertWithinBinomial(missingPerColumn[j], rows, p, "column " + j);
            total += missingPerColumn[j];
        }
        assertWithinBinomial(total, rows * 9, p, "all cells");
        assertEquals((double) total / (rows * 9), telemetry.missingShare(), 1e-15); // same count, by definition
    }

    @Test
    void zeroMissingShareLeavesEveryCell() {
        Telemetry full = ReeferFleet.generate(ReeferFleet.options().withMissingShare(0.0).withContainers(4));
        assertEquals(0.0, full.missingShare()); // by construction: probability 0
        assertBitIdentical(full.truth(), full.cells());
    }

    @Test
    void missingShareNeverShiftsTheReadings() {
        // by construction: missing cells draw from their own stream and are applied last
        Telemetry sparser = ReeferFleet.generate(ReeferFleet.options().withMissingShare(0.2));
        assertBitIdentical(telemetry.truth(), sparser.truth());
        assertTrue(sparser.missingShare() > telemetry.missingShare());
    }

    @Test
    void binaryColumnsHoldOnlyZeroOneOrNaN() {
        // our own invented scenario; relation by construction: door_open and defrost are 0/1 states
        double[][] cells = telemetry.cells();
        for (int j : new int[] {ReeferFleet.DOOR_OPEN, ReeferFleet.DEFROST}) {
            int ones = 0;
            int zeros = 0;
            for (double[] row : cells) {
                double v = row[j];
                assertTrue(Double.isNaN(v) || v == 0.0 || v == 1.0, "column " + j + " holds " + v);
                ones += v == 1.0 ? 1 : 0;
                zeros += v == 0.0 ? 1 : 0;
            }
            assertTrue(ones > 0 && zeros > ones, "column " + j + ": " + ones + " ones, " + zeros + " zeros");
        }
    }

    @Test
    void accessorsReturnCopies() {
        // common practice, no source: arrays that go out are copies
        double[][] cells = telemetry.cells();
        double before = cells[0][0];
        cells[0][0] = 12345.0;
        telemetry.truth()[0][0] = 12345.0;
        telemetry.container()[0] = 7;
        telemetry.fault()[0] = FaultKind.STUCK_SENSOR;
        telemetry.setpointC()[0] = 99.0;
        assertEquals(Double.doubleToRawLongBits(before), Double.doubleToRawLongBits(telemetry.cells()[0][0]));
        assertTrue(telemetry.truth()[0][0] != 12345.0);
        assertEquals(0, telemetry.container()[0]);
        assertEquals(FaultKind.NONE, telemetry.fault()[0]);
        assertTrue(telemetry.setpointC()[0] != 99.0);
        assertEquals(3, telemetry.columnIndex("humidity_pct")); // fourth column in the brief
    }

    @Test
    void badOptionsAreRejectedByName() {
        // common practice, no source: the message names the parameter and its value
        ReeferFleet.Options o = ReeferFleet.options();
        assertMessage("containers is 0", () -> o.withContainers(0));
        assertMessage("days is -1", () -> o.withDays(-1));
        assertMessage("faultyShare is 1.5", () -> o.withFaultyShare(1.5));
        assertMessage("faultyShare is NaN", () -> o.withFaultyShare(Double.NaN));
        assertMessage("missingShare is 1.0", () -> o.withMissingShare(1.0));
        assertMessage("missingShare is -0.1", () -> o.withMissingShare(-0.1));
        assertMessage("containers * days", () -> o.withContainers(100_000).withDays(1000));
        assertMessage("options is null", () -> ReeferFleet.generate(null));
        assertMessage("column is pressure", () -> telemetry.columnIndex("pressure"));
    }

    private static void assertMessage(String start, Runnable call) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call::run);
        assertTrue(e.getMessage().startsWith(start), e.getMessage());
    }

    private static void assertWithinBinomial(int count, int trials, double p, String what) {
        BinomialDistribution binomial = new BinomialDistribution(trials, p);
        int lo = binomial.inverseCumulativeProbability(BINOMIAL_TAIL / 2);
        int hi = binomial.inverseCumulativeProbability(1 - BINOMIAL_TAIL / 2);
        assertTrue(count >= lo && count <= hi, what + ": " + count + " missing of " + trials
                + "; expected " + lo + " to " + hi);
    }

    private static void assertBitIdentical(double[][] a, double[][] b) {
        assertEquals(a.length, b.length);
        for (int r = 0; r < a.length; r++) {
            assertEquals(a[r].length, b[r].length);
            for (int j = 0; j < a[r].length; j++) {
                if (Double.doubleToRawLongBits(a[r][j]) != Double.doubleToRawLongBits(b[r][j])) {
                    throw new AssertionError("row " + r + " column " + j + ": " + a[r][j] + " vs " + b[r][j]);
                }
            }
        }
    }

    private static boolean[] maskOf(double[][] cells) {
        boolean[] mask = new boolean[cells.length * 7];
        for (int r = 0; r < cells.length; r++) {
            for (int j = 0; j < 7; j++) {
                mask[r * 7 + j] = Double.isNaN(cells[r][j]);
            }
        }
        return mask;
    }
}
