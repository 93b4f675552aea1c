package org.backstep.internal.net;

import java.lang.ref.Reference;
import java.nio.FloatBuffer;
import java.util.Arrays;

import org.backstep.schedule.Require;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * The scaled squared error between a shard's network output and its rows of a target, and its
 * gradient, for use in a {@link ParallelStep.LossGradient}:
 * <pre>
 *   loss = scale * sum_(r, c) (out[r, c] - target[rowOffset + r, c])^2
 *   dLoss/dout[r, c] = 2 scale (out[r, c] - target[rowOffset + r, c])
 * </pre>
 * With {@code scale = 1 / (batch * outputs)} the shard losses add up to the mean squared error of
 * the minibatch, the epsilon-prediction objective of Ho, Jain &amp; Abbeel, "Denoising diffusion
 * probabilistic models", NeurIPS 2020, eq. 14, averaged over rows and columns. The loss sum runs in
 * double, the gradient in float32.
 */
public final class SquaredError {

    /** Per-thread staging arrays, grown on demand. */
    private static final ThreadLocal<float[][]> STAGE = ThreadLocal.withInitial(() -> new float[2][0]);

    private SquaredError() {
    }

    /**
     * Computes the loss and writes its gradient.
     *
     * @param output the shard's output, rows x outputs (not modified)
     * @param target the minibatch target, at least rowOffset + rows rows and the same columns (not
     *     modified)
     * @param rowOffset the shard's first row in the target
     * @param scale the factor of the loss, finite
     * @param dOutputInto dense float32 row-major, rows x outputs, receives the gradient (modified)
     * @return the scaled sum of squares
     */
    public static double lossAndGradientInto(INDArray output, INDArray target, int rowOffset, double scale,
            INDArray dOutputInto) {
        Require.notNull("output", output);
        Require.notNull("target", target);
        Require.notNull("dOutputInto", dOutputInto);
        Require.finite("scale", scale);
        if (output.rank() != 2 || target.rank() != 2 || target.columns() != output.columns() || rowOffset < 0
                || target.rows() < (long) rowOffset + output.rows()) {
            throw new IllegalArgumentException("output has shape " + Arrays.toString(output.shape())
                    + " and target has shape " + Arrays.toString(target.shape()) + " with rowOffset " + rowOffset
                    + "; expected target rows [rowOffset, rowOffset + " + output.rows()
                    + ") to exist with the same columns");
        }
        if (!Arrays.equals(dOutputInto.shape(), output.shape()) || !NativeMath.isDenseFloat(dOutputInto)) {
            throw new IllegalArgumentException("dOutputInto has shape " + Arrays.toString(dOutputInto.shape())
                    + " and type " + dOutputInto.dataType() + "; expected a dense FLOAT array of shape "
                    + Arrays.toString(output.shape()));
        }
        INDArray out = NativeMath.denseFloat(output);
        INDArray tgt = NativeMath.denseFloat(target);
        int n = (int) output.length();
        int columns = (int) output.columns();
        float[][] stage = STAGE.get();
        if (stage[0].length < n) {
            stage[0] = new float[n];
            stage[1] = new float[n];
        }
        float[] o = stage[0];
        float[] t = stage[1];
        FloatBuffer ob = NativeMath.buffer(out);
        ob.get(0, o, 0, n);
        NativeMath.buffer(tgt).get(rowOffset * columns, t, 0, n);
        float twice = (float) (2 * scale);
        double sum = 0;
        for (int i = 0; i < n; i++) {
            float diff = o[i] - t[i];
            o[i] = twice * diff;
            sum += (double) diff * diff;
        }
        NativeMath.buffer(dOutputInto).put(0, o, 0, n);
        Reference.reachabilityFence(out);
        Reference.reachabilityFence(tgt);
        return scale * sum;
    }
}
