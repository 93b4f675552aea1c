package org.backstep.internal.net;

import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.option.StepInput;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

import java.util.Random;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertEquals;

/**
 * The exact Jacobian trace of {@link NetworkTangents} against central finite differences of the
 * epsilon-hat outputs: of the double reference network (tight), and of the estimator's own float32
 * predictions (loose, but it ties the trace to what the estimator predicts). Common practice, no
 * source: a derivative checked by its difference quotient.
 */
class NetworkTangentsTest {

    /** Float32 tangents against double differences: float rounding plus the SiLU approximation. */
    private static final double REFERENCE_TOLERANCE = 1e-4;
    /** Double finite-difference step; truncation ~h^2, rounding ~1e-16/h. */
    private static final double H = 1e-6;
    /** Float32 differences of the estimator: step 1e-2, truncation ~1e-4, rounding ~1e-7/1e-2 per term. */
    private static final double ESTIMATOR_TOLERANCE = 3e-3;
    private static final float H_FLOAT = 1e-2f;
    private static final int STEPS = 10;
    private static final int ROWS = 5;

    static Stream<Arguments> shapes() {
        return Stream.of(
                Arguments.of(new NetworkShape(4, new int[] {7, 6}, 9, 4, StepInput.EVERY_BLOCK), 4),
                Arguments.of(new NetworkShape(5, new int[] {6, 5, 4}, 9, 2, StepInput.INPUT), 4),
                Arguments.of(new NetworkShape(3, new int[] {}, 3, 4, StepInput.INPUT), 3));
    }

    @ParameterizedTest
    @MethodSource("shapes")
    void traceMatchesFiniteDifferences(NetworkShape shape, int dc) {
        ReverseNetwork net = ReverseNetwork.create(shape, STEPS, 11);
        Random random = new Random(5);
        int d = shape.inputs();
        float[] x = new float[ROWS * d];
        for (int i = 0; i < x.length; i++) {
            x[i] = (float) random.nextGaussian();
        }
        int step = 6;
        double[] trace = new double[ROWS];
        new NetworkTangents(net, dc).traces(x, ROWS, step, trace);
        float[] pf = net.parameters();
        double[] p = new double[pf.length];
        for (int i = 0; i < p.length; i++) {
            p[i] = pf[i];
        }
        NetworkEstimator estimator = new NetworkEstimator(net);
        for (int r = 0; r < ROWS; r++) {
            double fd = 0.0;
            double fdFloat = 0.0;
            for (int c = 0; c < dc; c++) {
                double[][] plus = {row(x, r, d)};
                double[][] minus = {row(x, r, d)};
                plus[0][c] += H;
                minus[0][c] -= H;
                fd += (DoubleReference.forward(shape, p, plus, new int[] {step})[0][c]
                        - DoubleReference.forward(shape, p, minus, new int[] {step})[0][c]) / (2 * H);
                fdFloat += (predict(estimator, x, r, d, c, H_FLOAT, step) - predict(estimator, x, r, d, c, -H_FLOAT, step))
                        / (2 * H_FLOAT);
            }
            assertEquals(fd, trace[r], REFERENCE_TOLERANCE * (1 + Math.abs(fd)), "row " + r + " against the double reference");
            assertEquals(fdFloat, trace[r], ESTIMATOR_TOLERANCE * (1 + Math.abs(fd)), "row " + r + " against the estimator");
        }
    }

    private static double[] row(float[] x, int r, int d) {
        double[] out = new double[d];
        for (int j = 0; j < d; j++) {
            out[j] = x[r * d + j];
        }
        return out;
    }

    /** Output c of the estimator at row r with x[r, c] moved by delta. */
    private static double predict(NetworkEstimator estimator, float[] x, int r, int d, int c, float delta, int step) {
        float[] one = new float[d];
        System.arraycopy(x, r * d, one, 0, d);
        one[c] += delta;
        INDArray in = Nd4j.create(one, new long[] {1, d}, 'c');
        INDArray out = Nd4j.create(org.nd4j.linalg.api.buffer.DataType.FLOAT, 1, estimator.outputs());
        estimator.predict(in, new int[] {step}, out);
        return out.getDouble(0, c);
    }
}
