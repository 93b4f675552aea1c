package org.backstep.posterior;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

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

    /** Asserts that every cell of {@code actual} is close to {@code expected[r][c]}. */
    static void assertCells(double[][] expected, INDArray actual, double rel, double floor, String what) {
        assertEquals(expected.length, actual.rows(), what + ": rows");
        assertEquals(expected[0].length, actual.columns(), what + ": columns");
        for (int r = 0; r < expected.length; r++) {
            for (int c = 0; c < expected[r].length; c++) {
                assertClose(expected[r][c], actual.getDouble(r, c), rel, floor, what + " at [" + r + ", " + c + "]");
            }
        }
    }

    /** Asserts that a rank-1 vector of length rows is close to {@code expected}. */
    static void assertVector(double[] expected, INDArray actual, double rel, double floor, String what) {
        assertEquals(1, actual.rank(), what + ": rank of " + Arrays.toString(actual.shape()));
        assertEquals(expected.length, actual.length(), what + ": length");
        for (int r = 0; r < expected.length; r++) {
            assertClose(expected[r], actual.getDouble(r), rel, floor, what + " at [" + r + "]");
        }
    }

    /** @return a rows x columns array of the given type holding {@code values} */
    static INDArray matrix(double[][] values, DataType type) {
        return Nd4j.create(values).castTo(type);
    }

    /** @return the tolerance of a batched form of this type against the double scalar form */
    static double tolerance(DataType type) {
        return type == DataType.FLOAT ? FLOAT32_REL : IDENTITY_REL;
    }
}
