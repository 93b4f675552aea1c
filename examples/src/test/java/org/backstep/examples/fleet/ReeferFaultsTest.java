package org.backstep.examples.fleet;

import static org.backstep.examples.fleet.ReeferFleet.COMPRESSOR;
import static org.backstep.examples.fleet.ReeferFleet.DEFROST;
import static org.backstep.examples.fleet.ReeferFleet.RETURN_AIR;
import static org.backstep.examples.fleet.ReeferFleet.SUPPLY_AIR;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.EnumMap;
import java.util.Map;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Fault windows of {@link ReeferFleet}: labelled rows only on the faulty containers, and each
 * fault's effect, checked against the same fleet generated without faults. The fault effects are our
 * own invented scenario; each holds by construction.
 */
class ReeferFaultsTest {

    /** Tolerance of identities between faulty and healthy readings (a sum of a few doubles near 20). */
    private static final double IDENTITY_TOLERANCE = 1e-12;

    private static Telemetry faulty;
    private static double[][] truth;
    private static double[][] healthy;
    private static FaultKind[] fault;
    private static int[] container;
    private static int perContainer;

    @BeforeAll
    static void generate() {
        ReeferFleet.Options options = ReeferFleet.options();
        faulty = ReeferFleet.generate(options);
        truth = faulty.truth();
        fault = faulty.fault();
        container = faulty.container();
        healthy = ReeferFleet.generate(options.withFaultyShare(0.0)).truth();
        perContainer = options.readingsPerContainer();
    }

    @Test
    void faultsLieOnRoundedShareOfContainersInOneWindowEach() {
        // round(0.125 * 48) = 6 faulty containers, the 4 kinds in turn: 1 or 2 of each (by construction)
        int[] faultyContainers = faulty.faultyContainers();
        assertEquals(6, faultyContainers.length);
        Map<FaultKind, Integer> kinds = new EnumMap<>(FaultKind.class);
        for (int c : faultyContainers) {
            Window w = windowOf(c);
            kinds.merge(w.kind, 1, Integer::sum);
            // window length in [N/4, N/2], start from N/8, inside the run (by construction)
            assertTrue(w.width >= perContainer / 4 && w.width <= perContainer / 2, "width " + w.width);
            assertTrue(w.start >= perContainer / 8 && w.start + w.width <= perContainer, "start " + w.start);
        }
        assertEquals(4, kinds.size(), "kinds " + kinds);
        assertEquals(6, kinds.values().stream().mapToInt(Integer::intValue).sum());
        assertTrue(kinds.values().stream().allMatch(k -> k == 1 || k == 2), "kinds " + kinds);
        boolean[] rows = faulty.faultRows();
        for (int r = 0; r < rows.length; r++) {
            assertEquals(fault[r] != FaultKind.NONE, rows[r]);
        }
    }

    @Test
    void rowsOutsideWindowsAreUntouched() {
        // faults are applied after the noise is drawn, so every unlabelled row equals the fault-free run
        for (int r = 0; r < truth.length; r++) {
            if (fault[r] == FaultKind.NONE) {
                for (int j = 0; j < 7; j++) {
                    assertEquals(Double.doubleToRawLongBits(healthy[r][j]), Double.doubleToRawLongBits(truth[r][j]),
                            "row " + r + " column " + j);
                }
            }
        }
    }

    @Test
    void eachFaultChangesItsReadingsByTheDocumentedFormula() {
        // our own invented scenario; relation by construction (formulas of the ReeferFleet Javadoc)
        int checked = 0;
        for (int c : faulty.faultyContainers()) {
            Window w = windowOf(c);
            int base = c * perContainer + w.start;
            double lastRatio = Double.NaN;
            for (int j = 0; j < w.width; j++) {
                double[] f = truth[base + j];
                double[] h = healthy[base + j];
                for (int col : new int[] {ReeferFleet.AMBIENT, ReeferFleet.HUMIDITY, ReeferFleet.DOOR_OPEN, DEFROST}) {
                    if (col != ReeferFleet.HUMIDITY || w.kind != FaultKind.CROSSED_HUMIDITY) {
                        assertEquals(h[col], f[col], 0.0, "no other fault changes column " + col);
                    }
                }
                switch (w.kind) {
                    case DRIFTING_SENSOR -> {
                        assertEquals(0.04 * (j + 1), f[RETURN_AIR] - h[RETURN_AIR], IDENTITY_TOLERANCE);
                        assertEquals(h[SUPPLY_AIR], f[SUPPLY_AIR], 0.0);
                        assertEquals(h[COMPRESSOR], f[COMPRESSOR], 0.0);
                    }
                    case STUCK_SENSOR -> {
                        assertEquals(healthy[base][SUPPLY_AIR], f[SUPPLY_AIR], 0.0);
                        assertEquals(h[RETURN_AIR], f[RETURN_AIR], 0.0);
                        assertEquals(h[COMPRESSOR], f[COMPRESSOR], 0.0);
                    }
                    case FAILING_COMPRESSOR -> {
                        assertEquals(0.015 * (j + 1), f[SUPPLY_AIR] - h[SUPPLY_AIR], IDENTITY_TOLERANCE);
                        assertEquals(0.015 * (j + 1), f[RETURN_AIR] - h[RETURN_AIR], IDENTITY_TOLERANCE);
                        if (h[DEFROST] == 0.0) {
                            lastRatio = f[COMPRESSOR] / h[COMPRESSOR];
                            // the factor 1 + p (j + 1) / W with one p in [0.30, 0.60]
                            double p = (lastRatio - 1.0) * w.width / (j + 1);
                            assertTrue(p >= 0.30 - 1e-9 && p <= 0.60 + 1e-9, "p " + p);
                        } else {
                            assertEquals(h[COMPRESSOR], f[COMPRESSOR], 0.0, "idle current during defrost");
                        }
                    }
                    case CROSSED_HUMIDITY -> {
                        assertEquals(h[SUPPLY_AIR], f[SUPPLY_AIR], 0.0);
                        assertEquals(h[RETURN_AIR], f[RETURN_AIR], 0.0);
                        assertEquals(h[COMPRESSOR], f[COMPRESSOR], 0.0);
                        // 18 points towards the other cargo's humidity, unless the clip at 0 or 100 bites
                        double expected = Math.min(100, Math.max(0, h[ReeferFleet.HUMIDITY]
                                + (faulty.setpointC()[c] < 0 ? 18.0 : -18.0)));
                        assertEquals(expected, f[ReeferFleet.HUMIDITY], IDENTITY_TOLERANCE);
                    }
                    default -> throw new AssertionError("label " + w.kind);
                }
                checked++;
            }
            if (w.kind == FaultKind.FAILING_COMPRESSOR) {
                // near the end of the window the current is 30-60 % above normal (by construction)
                assertTrue(lastRatio > 1.25 && lastRatio <= 1.6 + 1e-9, "ratio " + lastRatio);
            }
        }
        assertTrue(checked >= 6 * perContainer / 4, checked + " rows checked");
    }

    /**
     * CROSSED_HUMIDITY breaks the relation between columns and keeps each column in range: the
     * humidity of its rows lies within [min, max] of the column over the healthy rows of the fleet
     * (the other columns are the fault-free run's; a per-column range check passes them), while the humidity no longer fits the cargo the
     * temperatures show: healthy frozen boxes (supply air below -10 C) read humidity below 79
     * (= 70 + 9, 4 sd of the 2.5-point spread) in over 99% of their cooling rows, chilled and
     * tropical boxes above 79 in over 99%; fault rows the other way round in over 95%. Our own
     * invented scenario; the levels 70, 88, 92 and the shift of 18 are those of the ReeferFleet
     * Javadoc.
     */
    @Test
    void crossedHumidityKeepsEachColumnInRangeAndBreaksTheRelation() {
        double[] lo = new double[7];
        double[] hi = new double[7];
        java.util.Arrays.fill(lo, Double.POSITIVE_INFINITY);
        java.util.Arrays.fill(hi, Double.NEGATIVE_INFINITY);
        int healthy = 0;
        int fits = 0;
        for (int r = 0; r < truth.length; r++) {
            if (fault[r] == FaultKind.NONE) {
                for (int j = 0; j < 7; j++) {
                    lo[j] = Math.min(lo[j], truth[r][j]);
                    hi[j] = Math.max(hi[j], truth[r][j]);
                }
                if (truth[r][DEFROST] == 0.0 && truth[r][ReeferFleet.DOOR_OPEN] == 0.0) {
                    healthy++;
                    fits += humidityFitsCargo(truth[r]) ? 1 : 0;
                }
            }
        }
        assertTrue(fits > 0.99 * healthy, fits + " of " + healthy + " healthy cooling rows fit their cargo's humidity");
        int rows = 0;
        int broken = 0;
        for (int r = 0; r < truth.length; r++) {
            if (fault[r] != FaultKind.CROSSED_HUMIDITY) {
                continue;
            }
            // the one column the fault changes (the others are the fault-free run's, checked above)
            int j = ReeferFleet.HUMIDITY;
            assertTrue(truth[r][j] >= lo[j] && truth[r][j] <= hi[j], "row " + r + " humidity " + truth[r][j]
                    + " outside the healthy range [" + lo[j] + ", " + hi[j] + "]");
            if (truth[r][DEFROST] == 0.0 && truth[r][ReeferFleet.DOOR_OPEN] == 0.0) {
                rows++;
                broken += humidityFitsCargo(truth[r]) ? 0 : 1;
            }
        }
        assertTrue(rows >= perContainer / 8, rows + " fault rows cooling with the door closed");
        assertTrue(broken > 0.95 * rows, broken + " of " + rows + " fault rows with the humidity of the other cargo");
    }

    /** Frozen (supply below -10 C) with humidity below 79, or chilled and tropical with humidity above it. */
    private static boolean humidityFitsCargo(double[] row) {
        boolean frozen = row[SUPPLY_AIR] < -10.0;
        return frozen == (row[ReeferFleet.HUMIDITY] < 79.0);
    }

    @Test
    void eachKindNamesTheColumnItIsInjectedInto() {
        // by construction (ReeferFleet's Javadoc): the column each formula changes most
        assertEquals("return_air_c", FaultKind.DRIFTING_SENSOR.injectedColumn().orElseThrow());
        assertEquals("supply_air_c", FaultKind.STUCK_SENSOR.injectedColumn().orElseThrow());
        assertEquals("compressor_a", FaultKind.FAILING_COMPRESSOR.injectedColumn().orElseThrow());
        assertEquals("humidity_pct", FaultKind.CROSSED_HUMIDITY.injectedColumn().orElseThrow());
        assertTrue(FaultKind.NONE.injectedColumn().isEmpty());
        for (FaultKind k : FaultKind.values()) {
            k.injectedColumn().ifPresent(c -> assertTrue(ReeferFleet.COLUMN_NAMES.contains(c), c));
        }
    }

    @Test
    void noFaultsWhenTheShareIsZero() {
        Telemetry none = ReeferFleet.generate(ReeferFleet.options().withFaultyShare(0.0).withContainers(6));
        assertEquals(0, none.faultyContainers().length);
        for (FaultKind k : none.fault()) {
            assertEquals(FaultKind.NONE, k);
        }
    }

    /** The one contiguous fault window of container c, checked to be contiguous and of one kind. */
    private static Window windowOf(int c) {
        int start = -1;
        int end = -1;
        FaultKind kind = null;
        for (int k = 0; k < perContainer; k++) {
            int r = c * perContainer + k;
            assertEquals(c, container[r]);
            if (fault[r] != FaultKind.NONE) {
                if (start < 0) {
                    start = k;
                    kind = fault[r];
                }
                assertEquals(kind, fault[r], "one kind per container");
                assertTrue(end < 0 || end == k - 1, "window of container " + c + " is contiguous");
                end = k;
            }
        }
        assertTrue(start >= 0, "container " + c + " has a window");
        return new Window(kind, start, end - start + 1);
    }

    private record Window(FaultKind kind, int start, int width) {
    }
}
