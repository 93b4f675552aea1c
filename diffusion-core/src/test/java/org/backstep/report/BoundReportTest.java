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
        BoundReport report = BoundReport.exact(10, 3, new BoundReport.RecordNats(continuous, binary, logJacobian),
                new double[11]);
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
                () -> new BoundReport.RecordNats(new double[2], new double[3], new double[2]));
        assertTrue(e.getMessage().contains("binary"), e.getMessage());
        BoundReport.RecordNats two = new BoundReport.RecordNats(new double[2], new double[2], new double[2]);
        assertTrue(assertThrows(IllegalArgumentException.class, () -> BoundReport.sampled(10, 4, 3, two, new double[3]))
                .getMessage().contains("standardErrors has length 3"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> BoundReport.exact(10, 0, two, new double[11]))
                .getMessage().contains("dimensions"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> BoundReport.exact(10, 3, null, new double[11]))
                .getMessage().contains("records"));
    }

    @Test
    void eachFactorySaysHowTheBoundWasComputed() {
        BoundReport.RecordNats two = new BoundReport.RecordNats(new double[] {1, 2}, new double[2], new double[2]);
        BoundReport exact = BoundReport.exact(10, 3, two, new double[11]);
        // common practice, no source: the factory's method is read back
        assertEquals(BoundReport.Method.EXACT, exact.method());
        // Ho et al. 2020, eq. 5: the exact bound sums all T terms, so its draws are the T steps and it has
        // no sampling error (zero standard errors), though the factory was given none of these
        assertEquals(10, exact.draws());
        assertArrayEquals(new double[2], exact.standardErrors(), 0.0);
        BoundReport sampled = BoundReport.sampled(10, 4, 3, two, new double[] {0.1, 0.2});
        // common practice, no source: read-backs of the method, draws and standard errors given to the factory
        assertEquals(BoundReport.Method.MONTE_CARLO, sampled.method());
        assertEquals(4, sampled.draws());
        assertArrayEquals(new double[] {0.1, 0.2}, sampled.standardErrors(), 0.0);
        // Ho et al. 2020, eq. 5 sampled over t: a Monte Carlo bound draws t at random and so has no mean per
        // step t to report (derived, not given to the factory)
        assertEquals(0, sampled.perStepMean().length);
    }
}
