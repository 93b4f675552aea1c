package org.backstep.internal.net;

import java.nio.FloatBuffer;
import java.util.Arrays;

import org.backstep.schedule.Require;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * An exponential moving average of the weights, {@code avg <- decay avg + (1 - decay) theta} after
 * each optimizer step (Polyak &amp; Juditsky, "Acceleration of stochastic approximation by
 * averaging", SIAM J. Control Optim. 30(4), 1992, use the uniform average; the exponential form is
 * the usual variant for non-stationary training). Sampling from the averaged weights, for example
 * {@code ReverseNetwork.fromParameters(shape, steps, average.average())}, is usually smoother than
 * from the last iterate. Kept in float32 on the heap. Not thread-safe.
 */
public final class WeightAverage {

    private static final int CHUNK = 4096;

    private final float[] average;
    private final double decay;
    private final float[] stage;

    private WeightAverage(float[] average, double decay) {
        this.average = average;
        this.decay = decay;
        this.stage = new float[average.length];
    }

    /**
     * An average that starts at the current weights.
     *
     * @param params theta, a dense float32 vector (not modified)
     * @param decay the weight of the old average, in [0, 1)
     * @return the average
     */
    public static WeightAverage of(INDArray params, double decay) {
        Require.notNull("params", params);
        if (!(decay >= 0 && decay < 1)) {
            throw new IllegalArgumentException("decay is " + decay + "; expected a number in [0, 1)");
        }
        checkVector(params, params.length());
        float[] start = new float[(int) params.length()];
        NativeMath.buffer(params).get(0, start);
        return new WeightAverage(start, decay);
    }

    /**
     * {@code avg = decay * avg + (1 - decay) * params}, elementwise in float32.
     *
     * @param params theta, a dense float32 vector of the same length (not modified)
     */
    public void updateInPlace(INDArray params) {
        updateInPlace(params, decay);
    }

    /**
     * {@code avg = d * avg + (1 - d) * params} with the given decay d for this update, for a
     * warm-up that starts with a small d.
     *
     * @param params the live parameter vector (not modified)
     * @param stepDecay d for this update, in [0, 1)
     */
    public void updateInPlace(INDArray params, double stepDecay) {
        Require.notNull("params", params);
        if (!(stepDecay >= 0 && stepDecay < 1)) {
            throw new IllegalArgumentException("stepDecay is " + stepDecay + "; expected a number in [0, 1)");
        }
        checkVector(params, average.length);
        float keep = (float) stepDecay;
        float take = (float) (1 - stepDecay);
        FloatBuffer p = NativeMath.buffer(params);
        float[] c = stage;
        float[] avg = average;
        for (int start = 0; start < avg.length; start += CHUNK) {
            int end = Math.min(avg.length, start + CHUNK);
            p.get(start, c, start, end - start);
            for (int i = start; i < end; i++) {
                avg[i] = keep * avg[i] + take * c[i];
            }
        }
    }

    /** @return the decay */
    public double decay() {
        return decay;
    }

    /** @return a copy of the averaged weights */
    public float[] average() {
        return average.clone();
    }

    private static void checkVector(INDArray x, long length) {
        if (x.length() != length || length > Integer.MAX_VALUE - 8 || !NativeMath.isDenseFloat(x)
                || !(x.rank() <= 1 || x.isVector())) {
            throw new IllegalArgumentException("params has shape " + Arrays.toString(x.shape()) + " and type "
                    + x.dataType() + "; expected a dense FLOAT vector of length " + length);
        }
    }
}
