package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class ColumnTransformTest {

    /** Relative tolerance of identities such as f^-1(f(x)) = x. */
    private static final double IDENTITY_TOL = 1e-12;

    /**
     * Relative tolerance of a central difference with step h = 1e-5 |x|: truncation error O(h^2)
     * times the third derivative, plus rounding eps / h; about 1e-9 here, so 1e-7 leaves room.
     */
    private static final double DERIVATIVE_TOL = 1e-7;

    private static final List<ColumnTransform> INVERTIBLE = List.of(
            ColumnTransform.standardize(-17.25, 2.5),
            ColumnTransform.standardize(1500, 300),
            ColumnTransform.logStandardize(0.7, 0.35),
            ColumnTransform.logStandardize(-3.0, 1.8),
            ColumnTransform.identity());

    private static double sample(ColumnTransform t, SplittableRandom rng) {
        double z = rng.nextGaussian() * 3;
        return t.inverse(z); // a point in the column's domain, positive for the log kinds
    }

    @Test
    void forwardThenInverseIsTheIdentity() {
        SplittableRandom rng = new SplittableRandom(7);
        for (ColumnTransform t : INVERTIBLE) {
            for (int i = 0; i < 1000; i++) {
                double x = sample(t, rng);
                double z = t.forward(x);
                // common practice, no source: f^-1(f(x)) = x and f(f^-1(z)) = z
                assertEquals(x, t.inverse(z), IDENTITY_TOL * Math.max(1, Math.abs(x)), t + " at " + x);
                assertEquals(z, t.forward(t.inverse(z)), IDENTITY_TOL * Math.max(1, Math.abs(z)), t + " at z " + z);
            }
        }
    }

    @Test
    void logJacobianMatchesACentralDifference() {
        SplittableRandom rng = new SplittableRandom(11);
        for (ColumnTransform t : INVERTIBLE) {
            for (int i = 0; i < 200; i++) {
                double x = sample(t, rng);
                double h = 1e-5 * Math.max(Math.abs(x), 1e-3);
                if (t.kind() == ColumnTransform.Kind.LOG_STANDARDIZE) {
                    h = 1e-5 * x; // stays inside x > 0
                }
                // central difference (f(x+h) - f(x-h)) / 2h, common practice, no source
                double slope = (t.forward(x + h) - t.forward(x - h)) / (2 * h);
                double expected = Math.log(Math.abs(slope));
                assertEquals(expected, t.logJacobian(x), DERIVATIVE_TOL * Math.max(1, Math.abs(expected)),
                        t + " at " + x);
            }
        }
    }

    @Test
    void workedValues() {
        ColumnTransform s = ColumnTransform.standardize(10, 4);
        // the formulas in the ColumnTransform Javadoc, worked by hand
        assertEquals(0.5, s.forward(12));
        assertEquals(12.0, s.inverse(0.5));
        assertEquals(-Math.log(4), s.logJacobian(123));
        ColumnTransform l = ColumnTransform.logStandardize(0, 2);
        assertEquals(Math.log(Math.E * Math.E) / 2, l.forward(Math.E * Math.E), IDENTITY_TOL);
        assertEquals(-Math.log(2) - 2, l.logJacobian(Math.E * Math.E), IDENTITY_TOL);
        ColumnTransform c = ColumnTransform.constant(4.0);
        assertEquals(0.0, c.forward(4.0));
        assertEquals(4.0, c.inverse(-7.3));
        assertEquals(4.0, c.inverse(Double.NaN));
        assertEquals(0.0, c.logJacobian(4.0));
        assertEquals(0.0, ColumnTransform.identity().logJacobian(1));
        assertTrue(Double.isNaN(s.forward(Double.NaN)));
        assertTrue(Double.isNaN(l.inverse(Double.NaN)));
    }

    @Test
    void invalidParametersAndArgumentsAreRefused() {
        // common practice, no source: the compact constructor checks each kind's parameters
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.standardize(0, 0));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.standardize(0, -1));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.standardize(Double.NaN, 1));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.logStandardize(0, Double.POSITIVE_INFINITY));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.constant(Double.NaN));
        assertThrows(IllegalArgumentException.class,
                () -> new ColumnTransform(ColumnTransform.Kind.CONSTANT, 1, 2));
        assertThrows(IllegalArgumentException.class,
                () -> new ColumnTransform(ColumnTransform.Kind.IDENTITY, 1, 1));
        assertThrows(IllegalArgumentException.class, () -> new ColumnTransform(null, 0, 1));
        ColumnTransform l = ColumnTransform.logStandardize(0, 1);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> l.forward(-0.25));
        assertTrue(e.getMessage().contains("-0.25"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> l.forward(0.0));
        assertThrows(IllegalArgumentException.class, () -> l.logJacobian(0.0));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.standardize(0, 1).logJacobian(Double.NaN));
    }
}
