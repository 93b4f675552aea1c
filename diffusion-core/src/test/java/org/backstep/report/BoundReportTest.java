package org.backstep.report;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The public factory of bound reports: copies, unit conversions and refusals. */
class BoundReportTest {

    /** Identities evaluated in double. */
    private static final double IDENTITY = 1e-12;

    @Test
    void factoryCopiesAndConvertsUnits() {
        double[] continuous = {1.0, 2.0};
        double[] binary = {0.5, 0.25};
        double[] logJacobian = {0.1, -0.2};
        BoundReport report = BoundReport.of(BoundReport.Method.EXACT, 10, 10, 3, continuous, binary, logJacobian,
                new double[2], new double[10]);
        continuous[0] = 99;
        // common practice, no source: values handed in are copied
        assertArrayEquals(new double[] {1.5, 2.25}, report.nats(), IDENTITY);
        // change of variables: -log p_x(x) = -log p_z(z) - sum_j log|dz_j/dx_j|
        assertArrayEquals(new double[] {1.4, 2.45}, report.natsOriginalUnits(), IDENTITY);
        // bits per dimension = mean nats / (D ln 2)
        assertEquals((1.5 + 2.25) / 2 / (3 * Math.log(2)), report.bitsPerDimension(), IDENTITY);
    }

    @Test
    void mismatchedLengthsAreRefusedByName() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> BoundReport.of(BoundReport.Method.EXACT, 10, 10, 3, new double[2], new double[3],
                        new double[2], new double[2], new double[10]));
        assertTrue(e.getMessage().contains("binary"), e.getMessage());
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> BoundReport.of(null, 10, 10, 3, new double[2], new double[2], new double[2], new double[2],
                        new double[10])).getMessage().contains("method"));
    }
}
