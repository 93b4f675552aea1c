package org.backstep.internal.net;

import java.nio.FloatBuffer;
import java.util.Arrays;

import org.backstep.schedule.Require;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * Adam of Kingma &amp; Ba, "Adam: a method for stochastic optimization", ICLR 2015, Algorithm 1, with
 * the optional decoupled weight decay of Loshchilov &amp; Hutter, "Decoupled weight decay
 * regularization", ICLR 2019, Algorithm 2 (AdamW). At iteration t = 1, 2, ... with gradient g:
 * <pre>
 *   m_t = beta1 m_(t-1) + (1 - beta1) g
 *   v_t = beta2 v_(t-1) + (1 - beta2) g^2
 *   mhat = m_t / (1 - beta1^t),   vhat = v_t / (1 - beta2^t)
 *   theta_t = theta_(t-1) - alpha mhat / (sqrt(vhat) + epsilon) - lambda theta_(t-1)
 * </pre>
 * with alpha the learning rate and lambda the weight decay (0 gives plain Adam). Following
 * Algorithm 2 with its schedule multiplier eta_t = 1, lambda is <i>not</i> multiplied by alpha (to
 * decay by {@code alpha * lambda'} per step, pass {@code lambda = alpha * lambda'}). The decay applies
 * to every parameter, biases included.
 *
 * <p>The moments are kept in float32 on the Java heap; the element loop runs in float32 (the bias
 * corrections are computed in double, then rounded), over chunks copied from and to the native
 * parameter vector (heap memory: four floats per parameter). Not thread-safe.
 */
public final class AdamOptimizer {

    private static final int CHUNK = 4096;

    private final double learningRate;
    private final double beta1;
    private final double beta2;
    private final double epsilon;
    private final double weightDecay;
    private final float[] m;
    private final float[] v;
    private final float[] paramStage;
    private final float[] gradStage;
    private long iteration;

    /**
     * The moments and iteration count, for saving and resuming training.
     *
     * @param iteration t, the number of steps taken
     * @param firstMoment m_t (copied in and out)
     * @param secondMoment v_t (copied in and out)
     */
    public record State(long iteration, float[] firstMoment, float[] secondMoment) {
        /** Validates and copies the arrays. */
        public State {
            Require.notNull("firstMoment", firstMoment);
            Require.notNull("secondMoment", secondMoment);
            if (iteration < 0) {
                throw new IllegalArgumentException("iteration is " + iteration + "; expected at least 0");
            }
            if (firstMoment.length != secondMoment.length) {
                throw new IllegalArgumentException("firstMoment has length " + firstMoment.length
                        + " but secondMoment has length " + secondMoment.length + "; expected equal lengths");
            }
            firstMoment = firstMoment.clone();
            secondMoment = secondMoment.clone();
        }

        /** @return a copy of m_t */
        @Override
        public float[] firstMoment() {
            return firstMoment.clone();
        }

        /** @return a copy of v_t */
        @Override
        public float[] secondMoment() {
            return secondMoment.clone();
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof State s && s.iteration == iteration && Arrays.equals(s.firstMoment, firstMoment)
                    && Arrays.equals(s.secondMoment, secondMoment);
        }

        @Override
        public int hashCode() {
            return Long.hashCode(iteration) * 31 * 31 + Arrays.hashCode(firstMoment) * 31
                    + Arrays.hashCode(secondMoment);
        }

        @Override
        public String toString() {
            return "State[iteration=" + iteration + ", parameters=" + firstMoment.length + "]";
        }
    }

    private AdamOptimizer(int count, double learningRate, double beta1, double beta2, double epsilon,
            double weightDecay) {
        this.learningRate = learningRate;
        this.beta1 = beta1;
        this.beta2 = beta2;
        this.epsilon = epsilon;
        this.weightDecay = weightDecay;
        this.m = new float[count];
        this.v = new float[count];
        this.paramStage = new float[count];
        this.gradStage = new float[count];
    }

    /**
     * A new optimizer with zero moments at iteration 0.
     *
     * @param parameterCount length of the parameter vector, 1..2^31-9
     * @param learningRate alpha, above 0 (Kingma &amp; Ba suggest 0.001)
     * @param beta1 decay of the first moment, in [0, 1) (suggested 0.9)
     * @param beta2 decay of the second moment, in [0, 1) (suggested 0.999)
     * @param epsilon added to sqrt(vhat), above 0 (suggested 1e-8)
     * @param weightDecay lambda of AdamW, at least 0 and below 1; 0 for plain Adam
     * @return the optimizer
     */
    public static AdamOptimizer create(long parameterCount, double learningRate, double beta1, double beta2,
            double epsilon, double weightDecay) {
        if (parameterCount < 1 || parameterCount > Integer.MAX_VALUE - 8) {
            throw new IllegalArgumentException("parameterCount is " + parameterCount + "; expected 1 to "
                    + (Integer.MAX_VALUE - 8));
        }
        Require.positive("learningRate", learningRate);
        checkDecay("beta1", beta1);
        checkDecay("beta2", beta2);
        Require.positive("epsilon", epsilon);
        checkDecay("weightDecay", weightDecay);
        return new AdamOptimizer((int) parameterCount, learningRate, beta1, beta2, epsilon, weightDecay);
    }

    private static void checkDecay(String name, double value) {
        if (!(value >= 0 && value < 1)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a number in [0, 1)");
        }
    }

    /**
     * One step with the configured learning rate; see {@link #stepInPlace(INDArray, INDArray, double)}.
     *
     * @param params theta, dense float32 vector (modified)
     * @param grad g, dense float32 vector of the same length (not modified)
     */
    public void stepInPlace(INDArray params, INDArray grad) {
        stepInPlace(params, grad, learningRate);
    }

    /**
     * One step of Algorithm 1 (plus decoupled decay) as in the class comment, with the given
     * learning rate for this step only (for warm-up or decay schedules).
     *
     * @param params theta, dense float32 vector (modified)
     * @param grad g, dense float32 vector of the same length (not modified)
     * @param learningRate alpha for this step, above 0
     */
    public void stepInPlace(INDArray params, INDArray grad, double learningRate) {
        Require.notNull("params", params);
        Require.notNull("grad", grad);
        checkVector("params", params);
        checkVector("grad", grad);
        Step step = begin(learningRate);
        updateRange(step, NativeMath.buffer(params), NativeMath.buffer(grad), 0, m.length);
    }

    /** The constants of one step t: beta1, beta2, 1 - beta1, 1 - beta2, 1/(1 - beta1^t), 1/(1 - beta2^t), alpha, epsilon, 1 - lambda. */
    record Step(float b1, float b2, float oneMinusB1, float oneMinusB2, float correct1, float correct2, float alpha,
            float eps, float keep) {
    }

    /** Validates the learning rate, advances t and returns the constants of step t. */
    Step begin(double learningRate) {
        Require.positive("learningRate", learningRate);
        iteration++;
        return new Step((float) beta1, (float) beta2, (float) (1 - beta1), (float) (1 - beta2),
                (float) (1 / (1 - Math.pow(beta1, iteration))), (float) (1 / (1 - Math.pow(beta2, iteration))),
                (float) learningRate, (float) epsilon, (float) (1 - weightDecay));
    }

    /** @return the number of parameters */
    int size() {
        return m.length;
    }

    /**
     * Applies step {@code s} to parameters [from, to). Calls on disjoint ranges may run on
     * different threads at once; each element is computed the same way whatever the ranges.
     *
     * @param s the step constants from {@link #begin}
     * @param p theta (modified in [from, to))
     * @param g the gradient (not modified)
     * @param from first index
     * @param to end index (exclusive)
     */
    void updateRange(Step s, FloatBuffer p, FloatBuffer g, int from, int to) {
        float b1 = s.b1;
        float b2 = s.b2;
        float oneMinusB1 = s.oneMinusB1;
        float oneMinusB2 = s.oneMinusB2;
        float correct1 = s.correct1;
        float correct2 = s.correct2;
        float alpha = s.alpha;
        float eps = s.eps;
        float keep = s.keep;
        float[] pc = paramStage;
        float[] gc = gradStage;
        float[] mm = m;
        float[] vv = v;
        // Chunks stay in cache between the copy in, the update and the copy out; every array is
        // indexed by the same i so that the loop vectorizes.
        for (int start = from; start < to; start += CHUNK) {
            int end = Math.min(to, start + CHUNK);
            p.get(start, pc, start, end - start);
            g.get(start, gc, start, end - start);
            for (int i = start; i < end; i++) {
                float gi = gc[i];
                float mi = b1 * mm[i] + oneMinusB1 * gi;
                float vi = b2 * vv[i] + oneMinusB2 * (gi * gi);
                mm[i] = mi;
                vv[i] = vi;
                float mhat = mi * correct1;
                float vhat = vi * correct2;
                pc[i] = keep * pc[i] - alpha * mhat / ((float) Math.sqrt(vhat) + eps);
            }
            p.put(start, pc, start, end - start);
        }
    }

    private void checkVector(String name, INDArray x) {
        if (x.length() != m.length || !NativeMath.isDenseFloat(x) || !(x.rank() <= 1 || x.isVector())) {
            throw new IllegalArgumentException(name + " has shape " + Arrays.toString(x.shape()) + " and type "
                    + x.dataType() + "; expected a dense FLOAT vector of length " + m.length);
        }
    }

    /** @return alpha, the configured learning rate */
    public double learningRate() {
        return learningRate;
    }

    /** @return t, the number of steps taken */
    public long iteration() {
        return iteration;
    }

    /** @return a copy of the moments and the iteration count */
    public State exportState() {
        return new State(iteration, m, v);
    }

    /**
     * Replaces the moments and iteration count (to resume training).
     *
     * @param state saved by {@link #exportState()} of an optimizer of the same parameter count (not
     *     modified)
     */
    public void importStateInPlace(State state) {
        Require.notNull("state", state);
        if (state.firstMoment.length != m.length) {
            throw new IllegalArgumentException("state has " + state.firstMoment.length
                    + " parameters; expected " + m.length);
        }
        System.arraycopy(state.firstMoment, 0, m, 0, m.length);
        System.arraycopy(state.secondMoment, 0, v, 0, v.length);
        iteration = state.iteration;
    }
}
