package org.backstep.internal.net;

import org.backstep.option.StepInput;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

import java.util.stream.Stream;

/**
 * The float32 forward and backward passes against a double-precision reference and central finite
 * differences, for tiny networks of both conditioning options.
 */
class ReverseNetworkGradientTest {

    /** Float32 forward against the double reference: float rounding plus the SiLU approximation (below 1e-5 relative). */
    private static final double FORWARD_TOLERANCE = 1e-4;
    /** Float32 gradient against double finite differences, absolute plus relative to the difference quotient. */
    private static final double GRADIENT_TOLERANCE = 2e-4;
    /** Finite-difference step in double; truncation error ~h^2, rounding ~1e-16/h. */
    private static final double H = 1e-6;
    private static final int STEPS = 10;
    private static final int ROWS = 6;

    static Stream<Arguments> shapes() {
        return Stream.of(
                Arguments.of(new NetworkShape(3, new int[] {5, 4}, 2, 4, StepInput.INPUT)),
                Arguments.of(new NetworkShape(3, new int[] {5, 4}, 2, 4, StepInput.EVERY_BLOCK)),
                Arguments.of(new NetworkShape(2, new int[] {3, 4, 3}, 3, 2, StepInput.EVERY_BLOCK)),
                Arguments.of(new NetworkShape(3, new int[] {}, 2, 4, StepInput.INPUT)));
    }

    @ParameterizedTest
    @MethodSource("shapes")
    void backwardMatchesCentralDifferences(NetworkShape shape) {
        ReverseNetwork net = ReverseNetwork.create(shape, STEPS, 7);
        Random random = new Random(3);
        double[][] x = new double[ROWS][shape.inputs()];
        float[] xf = new float[ROWS * shape.inputs()];
        for (int r = 0; r < ROWS; r++) {
            for (int c = 0; c < shape.inputs(); c++) {
                float v = (float) random.nextGaussian();
                x[r][c] = v;
                xf[r * shape.inputs() + c] = v;
            }
        }
        int[] steps = {1, 10, 4, 7, 2, 9};
        double[][] g = new double[ROWS][shape.outputs()];
        float[] gf = new float[ROWS * shape.outputs()];
        for (int r = 0; r < ROWS; r++) {
            for (int c = 0; c < shape.outputs(); c++) {
                float v = (float) random.nextGaussian();
                g[r][c] = v;
                gf[r * shape.outputs() + c] = v;
            }
        }
        // Biases start at zero; perturb every parameter so that bias rows matter in the check.
        float[] pf = net.parameters();
        for (int i = 0; i < pf.length; i++) {
            pf[i] += (float) (0.1 * random.nextGaussian());
        }
        net = ReverseNetwork.fromParameters(shape, STEPS, pf);
        double[] p = new double[pf.length];
        for (int i = 0; i < p.length; i++) {
            p[i] = pf[i];
        }

        ReverseNetwork.Pass pass = net.newPass(ROWS);
        INDArray xt = Nd4j.createFromArray(xf).reshape(ROWS, shape.inputs());
        INDArray out = pass.forward(xt, steps);
        double[][] expected = DoubleReference.forward(shape, p, x, steps);
        for (int r = 0; r < ROWS; r++) {
            for (int c = 0; c < shape.outputs(); c++) {
                // common practice, no source: float pass against the double reference
                assertEquals(expected[r][c], out.getDouble(r, c), FORWARD_TOLERANCE, "output[" + r + "][" + c + "]");
            }
        }

        INDArray grad = Nd4j.zeros(org.nd4j.linalg.api.buffer.DataType.FLOAT, p.length);
        pass.backward(Nd4j.createFromArray(gf).reshape(ROWS, shape.outputs()), grad);
        double largest = 0;
        for (int i = 0; i < p.length; i++) {
            double saved = p[i];
            p[i] = saved + H;
            double up = DoubleReference.weightedSum(shape, p, x, steps, g);
            p[i] = saved - H;
            double down = DoubleReference.weightedSum(shape, p, x, steps, g);
            p[i] = saved;
            double numeric = (up - down) / (2 * H);
            largest = Math.max(largest, Math.abs(numeric));
            // common practice, no source: central finite differences of the double reference
            assertEquals(numeric, grad.getDouble(i), GRADIENT_TOLERANCE * (1 + Math.abs(numeric)),
                    "dLoss/dparameter[" + i + "]");
        }
        assertTrue(largest > 0.1, "the check must not be vacuous: largest gradient " + largest);

        // backward accumulates: a second call doubles the gradient (common practice, no source)
        float[] once = grad.toFloatVector();
        pass.backward(Nd4j.createFromArray(gf).reshape(ROWS, shape.outputs()), grad);
        float[] twice = grad.toFloatVector();
        for (int i = 0; i < once.length; i++) {
            assertEquals(2.0 * once[i], twice[i], 1e-6 * (1 + Math.abs(once[i])), "accumulated gradient " + i);
        }
    }
}
