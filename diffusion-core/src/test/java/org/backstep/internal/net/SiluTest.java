package org.backstep.internal.net;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The vectorized SiLU against the formulas of Elfwing, Uchibe &amp; Doya 2018. */
class SiluTest {

    /** Relative error of the Pade scaling-and-squaring sigmoid on [-20, 20]. */
    private static final double SIGMOID_RELATIVE = 1e-5;
    /** Absolute error of the sigmoid outside the clamp, where it is within 2.1e-9 of 0 or 1. */
    private static final double SIGMOID_TAIL = 3e-9;
    /** Absolute error of silu and its derivative, values of order |x|. */
    private static final double SILU_ABSOLUTE = 1e-6;
    private static final double SILU_RELATIVE = 1e-5;
    /** Central differences of the double formula with step 1e-5: error ~1e-10. */
    private static final double DIFFERENCE_TOLERANCE = 1e-8;

    private static float[] grid() {
        int n = 600_001;
        float[] z = new float[n];
        for (int i = 0; i < n; i++) {
            z[i] = -30f + 60f * i / (n - 1);
        }
        return z;
    }

    private static double sigmoid(double x) {
        return 1 / (1 + Math.exp(-x));
    }

    @Test
    void forwardMatchesTheFormula() {
        float[] z = grid();
        float[] s = new float[z.length];
        float[] a = new float[z.length];
        Silu.forward(z, s, a, z.length);
        for (int i = 0; i < z.length; i++) {
            double x = z[i];
            double expectedS = sigmoid(x);
            double expectedA = x * expectedS; // silu(x) = x sigmoid(x), Elfwing et al. 2018, section 2
            if (Math.abs(x) <= Silu.CLAMP) {
                assertEquals(expectedS, s[i], SIGMOID_RELATIVE * expectedS, () -> "sigmoid at " + x);
            } else {
                assertEquals(expectedS, s[i], SIGMOID_TAIL, () -> "sigmoid at " + x);
            }
            assertEquals(expectedA, a[i], SILU_ABSOLUTE + SILU_RELATIVE * Math.abs(expectedA), () -> "silu at " + x);
        }
    }

    @Test
    void derivativeMatchesTheFormula() {
        float[] z = grid();
        float[] s = new float[z.length];
        float[] a = new float[z.length];
        float[] d = new float[z.length];
        java.util.Arrays.fill(d, 1f);
        Silu.forward(z, s, a, z.length);
        Silu.backwardInPlace(d, s, a, z.length);
        for (int i = 0; i < z.length; i++) {
            double x = z[i];
            double sg = sigmoid(x);
            // silu'(x) = sigmoid(x) (1 + x (1 - sigmoid(x))), Elfwing et al. 2018, section 2
            double expected = sg * (1 + x * (1 - sg));
            assertEquals(expected, d[i], SILU_ABSOLUTE + SILU_RELATIVE * Math.abs(expected), () -> "silu' at " + x);
        }
    }

    @Test
    void derivativeFormulaMatchesCentralDifferences() {
        // common practice, no source: the closed form used above against a difference quotient
        double h = 1e-5;
        for (double x = -12; x <= 12; x += 0.37) {
            double numeric = (DoubleReference.silu(x + h) - DoubleReference.silu(x - h)) / (2 * h);
            double sg = sigmoid(x);
            double at = x;
            assertEquals(numeric, sg * (1 + x * (1 - sg)), DIFFERENCE_TOLERANCE, () -> "at " + at);
        }
    }

    @Test
    void chainRuleScalesByTheIncomingGradient() {
        float[] z = {-3f, -0.5f, 0f, 0.25f, 4f};
        float[] s = new float[5];
        float[] a = new float[5];
        float[] d = {2f, -1f, 3f, 0.5f, -4f};
        float[] incoming = d.clone();
        Silu.forward(z, s, a, 5);
        Silu.backwardInPlace(d, s, a, 5);
        for (int i = 0; i < 5; i++) {
            double sg = sigmoid(z[i]);
            double expected = incoming[i] * sg * (1 + z[i] * (1 - sg)); // chain rule, Elfwing et al. 2018
            assertEquals(expected, d[i], SILU_ABSOLUTE + SILU_RELATIVE * Math.abs(expected));
        }
        // silu(0) = 0 and silu'(0) = 1/2: value from the formula
        assertEquals(0.0, a[2], 0.0);
        assertEquals(1.5, d[2], SILU_ABSOLUTE);
        assertTrue(s[4] > 0.98 && s[4] < 0.99, "sigmoid(4) = 0.98201");
    }
}
