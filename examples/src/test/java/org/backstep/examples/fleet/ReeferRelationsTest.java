package org.backstep.examples.fleet;

import static org.backstep.examples.fleet.ReeferFleet.AMBIENT;
import static org.backstep.examples.fleet.ReeferFleet.COMPRESSOR;
import static org.backstep.examples.fleet.ReeferFleet.DEFROST;
import static org.backstep.examples.fleet.ReeferFleet.DOOR_OPEN;
import static org.backstep.examples.fleet.ReeferFleet.HUMIDITY;
import static org.backstep.examples.fleet.ReeferFleet.RETURN_AIR;
import static org.backstep.examples.fleet.ReeferFleet.SUPPLY_AIR;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.stat.correlation.PearsonsCorrelation;
import org.apache.commons.math3.stat.descriptive.SummaryStatistics;
import org.apache.commons.math3.stat.inference.TTest;
import org.apache.commons.math3.stat.regression.SimpleRegression;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The documented relations of the invented reefer scenario hold on the generated data. Every
 * relation here is our own invention, true by construction; the statistics come from commons-math3.
 */
class ReeferRelationsTest {

    /** Largest two-sided p-value accepted for an effect built into the data (common practice, no source). */
    private static final double SIGNIFICANCE = 1e-6;
    /** Tolerance on a regression slope estimated from thousands of rows against its constructed value. */
    private static final double SLOPE_TOLERANCE = 0.005;
    /** Fewest rows of a kind (door open, defrost) a check needs so that it cannot pass vacuously. */
    private static final int MIN_ROWS = 20;

    private static double[][] truth;
    private static int[] container;
    private static double[] setpoint;
    private static boolean[] faulty;
    private static int containers;

    @BeforeAll
    static void generate() {
        Telemetry t = ReeferFleet.generate(ReeferFleet.options());
        truth = t.truth();
        container = t.container();
        setpoint = t.setpointC();
        faulty = t.faultRows();
        containers = setpoint.length;
    }

    @Test
    void returnAirIsWarmerThanSupplyOnAverage() {
        // our own invented scenario; relation by construction: return - supply = 0.6 + 0.05 (A - s) > 0
        SummaryStatistics diff = new SummaryStatistics();
        for (double[] row : truth) {
            diff.addValue(row[RETURN_AIR] - row[SUPPLY_AIR]);
        }
        assertTrue(diff.getMean() > 0, "mean return - supply " + diff.getMean());
        assertTrue(new TTest().tTest(0.0, diff) < SIGNIFICANCE);
    }

    @Test
    void deltaTGrowsWithAmbientMinusSetpoint() {
        // our own invented scenario; relation by construction: slope 0.05 C per degree of (ambient - setpoint)
        List<double[]> pairs = new ArrayList<>();
        SimpleRegression fit = new SimpleRegression();
        for (int r = 0; r < truth.length; r++) {
            double[] row = truth[r];
            if (quiet(r)) {
                double x = row[AMBIENT] - setpoint[container[r]];
                double y = row[RETURN_AIR] - row[SUPPLY_AIR];
                pairs.add(new double[] {x, y});
                fit.addData(x, y);
            }
        }
        PearsonsCorrelation pearson = new PearsonsCorrelation(pairs.toArray(new double[0][]));
        assertTrue(pearson.getCorrelationMatrix().getEntry(0, 1) > 0);
        assertTrue(pearson.getCorrelationPValues().getEntry(0, 1) < SIGNIFICANCE);
        assertEquals(0.05, fit.getSlope(), SLOPE_TOLERANCE);
    }

    @Test
    void compressorCurrentRisesWithAmbientOutsideDefrost() {
        // our own invented scenario; relation by construction: I = e (3.0 + 0.10 A + 0.12 max(0, A - s))
        List<double[]> pairs = new ArrayList<>();
        for (int r = 0; r < truth.length; r++) {
            if (!faulty[r] && truth[r][DEFROST] == 0.0) {
                pairs.add(new double[] {truth[r][AMBIENT], truth[r][COMPRESSOR]});
            }
        }
        PearsonsCorrelation pearson = new PearsonsCorrelation(pairs.toArray(new double[0][]));
        assertTrue(pearson.getCorrelationMatrix().getEntry(0, 1) > 0);
        assertTrue(pearson.getCorrelationPValues().getEntry(0, 1) < SIGNIFICANCE);
    }

    @Test
    void defrostLiftsSupplyAndIdlesTheCompressorInEveryContainer() {
        // our own invented scenario; relation by construction: supply + 5 C, current 1.5 A while d = 1
        for (int c = 0; c < containers; c++) {
            SummaryStatistics supplyOn = new SummaryStatistics();
            SummaryStatistics supplyOff = new SummaryStatistics();
            SummaryStatistics currentOn = new SummaryStatistics();
            SummaryStatistics currentOff = new SummaryStatistics();
            for (int r = 0; r < truth.length; r++) {
                if (container[r] != c || faulty[r]) {
                    continue;
                }
                boolean on = truth[r][DEFROST] == 1.0;
                (on ? supplyOn : supplyOff).addValue(truth[r][SUPPLY_AIR]);
                (on ? currentOn : currentOff).addValue(truth[r][COMPRESSOR]);
            }
            assertTrue(supplyOn.getN() >= 2, "container " + c + " has " + supplyOn.getN() + " defrost rows");
            assertTrue(supplyOn.getMean() > supplyOff.getMean(), "container " + c);
            assertTrue(currentOn.getMean() < currentOff.getMean(), "container " + c);
        }
    }

    @Test
    void openDoorLiftsReturnAirAndHumidity() {
        // our own invented scenario; relation by construction: return + 2 + 0.2 max(0, A - s), humidity + 8
        double[] returnClosed = new double[containers];
        double[] humidityClosed = new double[containers];
        int[] closed = new int[containers];
        for (int r = 0; r < truth.length; r++) {
            if (quiet(r)) {
                returnClosed[container[r]] += truth[r][RETURN_AIR];
                humidityClosed[container[r]] += truth[r][HUMIDITY];
                closed[container[r]]++;
            }
        }
        SummaryStatistics returnLift = new SummaryStatistics();
        SummaryStatistics humidityLift = new SummaryStatistics();
        for (int r = 0; r < truth.length; r++) {
            int c = container[r];
            if (!faulty[r] && truth[r][DOOR_OPEN] == 1.0 && truth[r][DEFROST] == 0.0) {
                returnLift.addValue(truth[r][RETURN_AIR] - returnClosed[c] / closed[c]);
                humidityLift.addValue(truth[r][HUMIDITY] - humidityClosed[c] / closed[c]);
            }
        }
        assertTrue(returnLift.getN() >= MIN_ROWS, returnLift.getN() + " door-open rows");
        assertTrue(returnLift.getMean() > 0);
        assertTrue(humidityLift.getMean() > 0);
        assertTrue(new TTest().tTest(0.0, returnLift) < SIGNIFICANCE);
        assertTrue(new TTest().tTest(0.0, humidityLift) < SIGNIFICANCE);
    }

    @Test
    void chilledCargoIsMoreHumidThanFrozen() {
        // our own invented scenario; relation by construction: humidity 88 or 92 chilled, 70 frozen
        SummaryStatistics frozen = new SummaryStatistics();
        SummaryStatistics chilled = new SummaryStatistics();
        for (int r = 0; r < truth.length; r++) {
            if (quiet(r)) {
                (setpoint[container[r]] < 0 ? frozen : chilled).addValue(truth[r][HUMIDITY]);
            }
        }
        assertTrue(frozen.getN() >= MIN_ROWS && chilled.getN() >= MIN_ROWS);
        assertTrue(chilled.getMean() > frozen.getMean());
        assertTrue(new TTest().tTest(frozen, chilled) < SIGNIFICANCE);
    }

    @Test
    void supplyAirClustersAtTheThreeSetpoints() {
        // our own invented scenario; relation by construction: supply = s + N(0, 0.3^2) + N(0, 0.2^2) off defrost,
        // so nearly every quiet row lies within 2 C of -18, +4 or +13 C: a multimodal column
        int near = 0;
        int quiet = 0;
        int[] perMode = new int[3];
        double[] modes = {-18.0, 4.0, 13.0};
        for (int r = 0; r < truth.length; r++) {
            if (quiet(r)) {
                quiet++;
                for (int m = 0; m < 3; m++) {
                    if (Math.abs(truth[r][SUPPLY_AIR] - modes[m]) < 2.0) {
                        near++;
                        perMode[m]++;
                    }
                }
            }
        }
        assertEquals(quiet, near);
        for (int m = 0; m < 3; m++) {
            assertTrue(perMode[m] >= MIN_ROWS, "mode " + modes[m] + " has " + perMode[m] + " rows");
        }
    }

    /** A row outside every fault window, with the door closed and no defrost. */
    private static boolean quiet(int r) {
        return !faulty[r] && truth[r][DOOR_OPEN] == 0.0 && truth[r][DEFROST] == 0.0;
    }
}
