package org.backstep.posterior;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;

/** Tolerances and closeness checks shared by the posterior tests (tolerances live here, not in equals). */
final class Near {

    /** Identities evaluated two ways in double: a few roundings. */
    static final double IDENTITY_REL = 1e-12;

    /** Float32 batched result against the double scalar form: float has 24 bits, about 6e-8 per
     * rounding; sums over a row and cancellation in posterior means leave a few hundred ulps. */
    static final double FLOAT32_REL = 2e-5;

    private Near() {
    }

    /**
     * Asserts |actual - expected| <= rel * max(|expected|, floor); infinities and NaN must match
     * exactly. The floor keeps values that cross zero from demanding an impossible relative match.
     */
    static void assertClose(double expected, double actual, double rel, double floor, String what) {
        if (Double.isInfinite(expected) || Double.isNaN(expected)) {
            assertEquals(expected, actual, 0.0, what);
            return;
        }
        double tol = rel * Math.max(Math.abs(expected), floor);
        assertTrue(Math.abs(actual - expected) <= tol, () -> what + ": expected " + expected + " but was "
                + actual + " (difference " + Math.abs(actual - expected) + ", tolerance " + tol + ")");
    }

    /** {@link #assertClose} with floor 0: a purely relative check (zero must match exactly). */
    static void assertRelative(double expected, double actual, double rel, String what) {
        assertClose(expected, actual, rel, 0.0, what);
    }

}
