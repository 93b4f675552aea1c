package org.backstep.internal.net;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/** Adam and AdamW against steps computed by hand from the published algorithms. */
class AdamOptimizerTest {

    /** Float32 rounding of values of order 1 through a few operations. */
    private static final double STEP_TOLERANCE = 1e-6;

    private static INDArray vector(float... values) {
        return Nd4j.createFromArray(values);
    }

    @Test
    void twoStepsOfAlgorithmOne() {
        // Kingma & Ba 2015, Algorithm 1, alpha 0.1, beta1 0.9, beta2 0.999, epsilon 1e-8.
        AdamOptimizer adam = AdamOptimizer.create(3, 0.1, 0.9, 0.999, 1e-8, 0);
        INDArray theta = vector(1f, -2f, 0.5f);
        INDArray g1 = vector(0.1f, -0.2f, 0f);
        adam.stepInPlace(theta, g1);
        // t = 1: m = 0.1 g, v = 0.001 g^2, mhat = g, vhat = g^2, so theta -= 0.1 g / (|g| + 1e-8):
        // 1 - 0.1 * 0.1/0.10000001 = 0.90000001, -2 + 0.1 * 0.2/0.20000001 = -1.900000005, 0.5 (g = 0).
        // Values computed by hand (checked with 30-digit decimal arithmetic).
        assertArrayEquals(new float[] {0.90000001f, -1.900000005f, 0.5f}, theta.toFloatVector(), (float) STEP_TOLERANCE);
        assertArrayEquals(new float[] {0.1f, -0.2f, 0f}, g1.toFloatVector(), 0f, "grad is not modified");
        adam.stepInPlace(theta, vector(0.3f, 0.1f, -0.4f));
        // t = 2: m = (0.039, -0.008, -0.04), v = (9.999e-5, 4.996e-5, 1.6e-4);
        // mhat = m / 0.19, vhat = v / 0.001999; theta -= 0.1 mhat / (sqrt(vhat) + 1e-8):
        // 0.90000001 - 0.1 * 0.20526316 / 0.22365154 = 0.80822190,
        // -1.900000005 + 0.1 * 0.04210526 / 0.15809015 = -1.87336630,
        // 0.5 + 0.1 * 0.21052632 / 0.28291345 = 0.57441368 (by hand, checked as above).
        assertArrayEquals(new float[] {0.80822190f, -1.87336630f, 0.57441368f}, theta.toFloatVector(),
                (float) STEP_TOLERANCE);
        assertEquals(2, adam.iteration());
        AdamOptimizer.State state = adam.exportState();
        assertArrayEquals(new float[] {0.039f, -0.008f, -0.04f}, state.firstMoment(), (float) STEP_TOLERANCE);
        assertArrayEquals(new float[] {9.999e-5f, 4.996e-5f, 1.6e-4f}, state.secondMoment(), 1e-10f);
    }

    @Test
    void decoupledWeightDecayOfAlgorithmTwo() {
        // Loshchilov & Hutter 2019, Algorithm 2 with eta_t = 1: theta -= alpha mhat/(sqrt(vhat)+eps) + lambda theta.
        AdamOptimizer adamW = AdamOptimizer.create(3, 0.1, 0.9, 0.999, 1e-8, 0.01);
        INDArray theta = vector(1f, -2f, 0.5f);
        adamW.stepInPlace(theta, vector(0.1f, -0.2f, 0f));
        // 1 - 0.09999999 - 0.01 = 0.89000001; -2 + 0.099999995 + 0.02 = -1.880000005; 0.5 - 0.005 = 0.495
        // (by hand; the third parameter has zero gradient and shows the decay alone)
        assertArrayEquals(new float[] {0.89000001f, -1.880000005f, 0.495f}, theta.toFloatVector(), (float) STEP_TOLERANCE);
    }

    @Test
    void learningRateOverrideAndStateRoundTrip() {
        AdamOptimizer a = AdamOptimizer.create(2, 0.5, 0.9, 0.999, 1e-8, 0);
        INDArray theta = vector(0f, 0f);
        a.stepInPlace(theta, vector(1f, -1f), 0.01);
        // first step moves each parameter by alpha against the sign of g (Algorithm 1, t = 1; by hand)
        assertArrayEquals(new float[] {-0.01f, 0.01f}, theta.toFloatVector(), (float) STEP_TOLERANCE);
        AdamOptimizer b = AdamOptimizer.create(2, 0.5, 0.9, 0.999, 1e-8, 0);
        b.importStateInPlace(a.exportState());
        INDArray t1 = vector(0.3f, -0.7f);
        INDArray t2 = vector(0.3f, -0.7f);
        a.stepInPlace(t1, vector(0.2f, 0.4f));
        b.stepInPlace(t2, vector(0.2f, 0.4f));
        // common practice, no source: a resumed optimizer continues bit-identically
        assertArrayEquals(t1.toFloatVector(), t2.toFloatVector(), 0f);
        assertEquals(a.exportState(), b.exportState());
    }

    @Test
    void refusesBadArguments() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> AdamOptimizer.create(3, 0.1, 1.0, 0.999, 1e-8, 0));
        assertTrue(e.getMessage().contains("beta1 is 1.0"), e.getMessage());
        AdamOptimizer adam = AdamOptimizer.create(3, 0.1, 0.9, 0.999, 1e-8, 0);
        e = assertThrows(IllegalArgumentException.class, () -> adam.stepInPlace(vector(1f, 2f), vector(1f, 2f)));
        assertTrue(e.getMessage().contains("[2]") && e.getMessage().contains("length 3"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> AdamOptimizer.create(0, 0.1, 0.9, 0.999, 1e-8, 0));
    }
}
