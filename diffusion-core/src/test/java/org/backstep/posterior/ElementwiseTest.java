package org.backstep.posterior;

import static org.backstep.posterior.Near.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/** log1p and expm1 on ND4J arrays against java.lang.Math (within 1 ulp of exact, per the Java SE API). */
class ElementwiseTest {

    /** float64 result against Math: the atanh/tanh forms add a few roundings. */
    private static final double DOUBLE_REL = 1e-14;

    /** float32 result against Math at the float32 input: a few float roundings (2^-24 = 6e-8 each). */
    private static final double FLOAT_REL = 1e-6;

    private static final double[] LOG1P_ARGS = {-0.999999, -0.5, -1.9e-4, -1e-9, -1e-30, 0.0, 1e-30, 1e-12, 1e-8,
        3e-5, 0.25, 0.999, 1.0, 1.5, 40.0, 1e6, 1e12, 1e300};

    private static final double[] EXPM1_ARGS = {-700.0, -30.0, -1.5, -1.0, -0.3, -1e-9, -1e-30, 0.0, 1e-30, 1e-12,
        1e-8, 2e-4, 0.5, 0.999, 1.0, 1.2, 20.0, 300.0};

    private static void check(double[] args, boolean log, DataType type, double rel) {
        INDArray x = Nd4j.create(args, new long[] {1, args.length}, type);
        INDArray before = x.dup();
        INDArray y = log ? Elementwise.log1p(x) : Elementwise.expm1(x);
        assertEquals(before, x, "argument not modified");
        assertEquals(type, y.dataType());
        for (int i = 0; i < args.length; i++) {
            double xi = x.getDouble(0, i);                       // as the array holds it
            double expected = log ? Math.log1p(xi) : Math.expm1(xi);
            if (type == DataType.FLOAT) {
                expected = (float) expected;
            }
            // java.lang.Math.log1p / expm1: within 1 ulp of the exact result (Java SE API)
            assertRelative(expected, y.getDouble(0, i), rel, (log ? "log1p(" : "expm1(") + xi + ") in " + type);
        }
    }

    @Test
    void log1pMatchesJavaLangMath() {
        check(LOG1P_ARGS, true, DataType.DOUBLE, DOUBLE_REL);
        double[] inFloatRange = java.util.Arrays.stream(LOG1P_ARGS).filter(v -> v < 1e30).toArray();
        check(inFloatRange, true, DataType.FLOAT, FLOAT_REL);
    }

    @Test
    void expm1MatchesJavaLangMath() {
        check(EXPM1_ARGS, false, DataType.DOUBLE, DOUBLE_REL);
        double[] inFloatRange = java.util.Arrays.stream(EXPM1_ARGS).filter(v -> Math.abs(v) < 80).toArray();
        check(inFloatRange, false, DataType.FLOAT, FLOAT_REL);
    }

    @Test
    void log1pAtMinusOneStaysFinite() {
        for (DataType type : new DataType[] {DataType.DOUBLE, DataType.FLOAT}) {
            INDArray y = Elementwise.log1p(Nd4j.create(new double[] {-1.0, -2.0}, new long[] {1, 2}, type));
            // the documented floor, log(ulp(1)): common practice, no source
            double floor = Math.log(Elementwise.ulpOfOne(y));
            assertTrue(Double.isFinite(y.getDouble(0, 0)));
            assertEquals(floor, y.getDouble(0, 0), 1e-5);
            assertEquals(floor, y.getDouble(0, 1), 1e-5);
        }
    }
}
