package org.backstep.internal.net;

import org.backstep.option.Limits;

import org.backstep.option.StepInput;
import java.lang.ref.Reference;
import java.nio.FloatBuffer;
import java.util.Arrays;

import org.backstep.schedule.Require;
import org.bytedeco.javacpp.FloatPointer;
import org.nd4j.linalg.api.memory.MemoryWorkspace;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The reverse network (the estimator) of a diffusion model on tables: a multilayer perceptron in
 * float32 that maps a noisy batch x_t and the step t of each row to {@code outputs} columns (for
 * example the predicted noise epsilon).
 *
 * <p><b>Architecture.</b> With {@code e(t)} the sinusoidal embedding of the step (Vaswani et al.,
 * "Attention is all you need", NeurIPS 2017, section 3.5, with the step in place of the position):
 * {@code e(t)_(2k) = sin(t w_k)}, {@code e(t)_(2k+1) = cos(t w_k)},
 * {@code w_k = exp(-ln(10000) k / (E/2))}, k = 0..E/2-1, precomputed once for t = 1..T:
 * <pre>
 *   h_0 = x_t
 *   h_l = silu([h_(l-1), e(t) if it enters block l, 1] W_l)      l = 1..L   (silu(z) = z sigmoid(z))
 *   out = [h_L, 1] W_(L+1)                                           (no activation)
 * </pre>
 * where {@code e(t)} enters block 1 always and every block with {@link StepInput#EVERY_BLOCK};
 * the trailing 1 makes the last row of each {@code W_j} its bias.
 *
 * <p><b>Parameters.</b> One flat float32 vector: for j = 1..L+1 in order, {@code W_j} in row-major
 * order with {@code unitsIn_j + embeddingIn_j + 1} rows (the units of the previous layer or x_t's
 * columns, then the E embedding components if the embedding enters here, then the bias) and
 * {@code unitsOut_j} columns. Gradients use the same layout.
 *
 * <p><b>Initialization</b> (from a seed, bit-reproducible; SplitMix64 draws in parameter order):
 * hidden layers' weights uniform on {@code [-b, b]} with {@code b = sqrt(6 / fanIn)} (He et al.,
 * "Delving deep into rectifiers", ICCV 2015, eq. 10, variance 2 / fanIn), the output layer's uniform
 * with {@code b = sqrt(6 / (fanIn + fanOut))} (Glorot &amp; Bengio, AISTATS 2010, eq. 16), where fanIn
 * counts the units and embedding components feeding the layer; biases zero.
 *
 * <p><b>Speed.</b> Each pass is one {@code sgemm} per layer forward and two per layer backward (one
 * for the first layer), into preallocated native buffers, on the calling thread with one BLAS
 * thread (see {@link ParallelStep} for parallelism across Java threads); the SiLU work runs in
 * vectorized Java on heap copies. The fast path takes dense row-major float32 arrays; other arrays
 * are copied first. Side effect: the first pass on a thread sets the bundled OpenBLAS to one thread
 * for BLAS calls made from that thread (the bundled OpenBLAS applies it per calling thread; other
 * code on the same thread sees it too). Nothing process-wide and no environment variable is changed.
 *
 * <p>Instances are immutable except for the live parameter vector ({@link #parameterView()}).
 *
 * <p>One file of more than 400 lines: the forward pass, the hand-written backward pass and the
 * parameter layout must change together, and the gradient tests check them as one.
 */
public final class ReverseNetwork {

    /** Rows per chunk of {@link #predict}: each thread keeps one {@link Pass} of this capacity. */
    static final int PREDICT_ROWS = 256;

    private final NetworkShape shape;
    private final int steps;
    private final INDArray params;
    private final long[] weightOffset;
    private final float[] embedding;
    private final ThreadLocal<Pass> predictPass;

    private ReverseNetwork(NetworkShape shape, int steps, float[] values) {
        this.shape = shape;
        this.steps = steps;
        try (MemoryWorkspace ignored = Nd4j.getWorkspaceManager().scopeOutOfWorkspaces()) {
            this.params = Nd4j.createFromArray(values);
        }
        this.weightOffset = new long[shape.layerCount()];
        long offset = 0;
        for (int j = 0; j < shape.layerCount(); j++) {
            weightOffset[j] = offset;
            offset += (long) shape.weightRows(j) * shape.unitsOut(j);
        }
        this.embedding = embeddingTable(steps, shape.embeddingSize());
        this.predictPass = ThreadLocal.withInitial(() -> new Pass(this, PREDICT_ROWS));
    }

    /**
     * A new network with weights drawn from {@code seed} as described in the class comment.
     *
     * @param shape the architecture
     * @param steps T, the number of steps of the training schedule; steps passed in are 1..T
     * @param seed the seed; the same seed gives bit-identical parameters
     * @return the network
     */
    public static ReverseNetwork create(NetworkShape shape, int steps, long seed) {
        return create(shape, steps, seed, false);
    }

    /**
     * As {@link #create(NetworkShape, int, long)}, the same draws; with {@code zeroOutput} the output
     * layer's weights are then set to zero, so that the network outputs zero for every input until
     * trained (a correction to a closed-form part starts at that closed form; the other layers
     * still get gradients once the output weights move).
     */
    public static ReverseNetwork create(NetworkShape shape, int steps, long seed, boolean zeroOutput) {
        Require.notNull("shape", shape);
        Require.atLeast("steps", steps, 1);
        float[] values = new float[checkedCount(shape)];
        SplitMix64 random = new SplitMix64(seed);
        int offset = 0;
        for (int j = 0; j < shape.layerCount(); j++) {
            int fanIn = shape.unitsIn(j) + shape.embeddingIn(j);
            int fanOut = shape.unitsOut(j);
            boolean output = j == shape.layerCount() - 1;
            double bound = output ? Math.sqrt(6.0 / (fanIn + fanOut)) : Math.sqrt(6.0 / fanIn);
            int weights = fanIn * fanOut;
            for (int i = 0; i < weights; i++) {
                float w = (float) ((2 * random.nextDouble() - 1) * bound);
                values[offset + i] = output && zeroOutput ? 0f : w;
            }
            offset += weights + fanOut; // the bias row stays zero
        }
        return new ReverseNetwork(shape, steps, values);
    }

    /**
     * A network with the given parameters (for example read from a model file).
     *
     * @param shape the architecture
     * @param steps T of the training schedule
     * @param parameters the flat parameter vector in the layout of the class comment (copied, not
     *     modified); every value must be finite
     * @return the network
     */
    public static ReverseNetwork fromParameters(NetworkShape shape, int steps, float[] parameters) {
        Require.notNull("shape", shape);
        Require.atLeast("steps", steps, 1);
        Require.notNull("parameters", parameters);
        int count = checkedCount(shape);
        if (parameters.length != count) {
            throw new IllegalArgumentException("parameters has length " + parameters.length + "; expected "
                    + count + " for " + shape);
        }
        for (int i = 0; i < count; i++) {
            if (!Float.isFinite(parameters[i])) {
                throw new IllegalArgumentException(
                        "parameters[" + i + "] is " + parameters[i] + "; expected a finite number");
            }
        }
        return new ReverseNetwork(shape, steps, parameters.clone());
    }

    private static int checkedCount(NetworkShape shape) {
        long count = shape.parameterCount();
        if (count > Integer.MAX_VALUE - 8) {
            throw new IllegalArgumentException("parameter count of " + shape + " is " + count
                    + "; expected at most " + (Integer.MAX_VALUE - 8));
        }
        return (int) count;
    }

    /**
     * The sinusoidal step embedding table, row t-1 holding e(t) for t = 1..steps: Vaswani et al.
     * 2017, section 3.5, {@code e(t)_(2k) = sin(t w_k)}, {@code e(t)_(2k+1) = cos(t w_k)},
     * {@code w_k = exp(-ln(10000) k / (size/2))}; computed in double, stored in float.
     */
    static float[] embeddingTable(int steps, int size) {
        Require.inRange("steps", steps, 1, Limits.MAX_STEPS);
        if ((long) steps * size > Limits.MAX_PARAMETERS) {
            throw new IllegalArgumentException("steps x embeddingSize is " + steps + " x " + size
                    + " values of the step embedding table; the limit is " + Limits.MAX_PARAMETERS + " (Limits.MAX_PARAMETERS)");
        }
        int half = size / 2;
        float[] table = new float[steps * size];
        for (int t = 1; t <= steps; t++) {
            for (int k = 0; k < half; k++) {
                double angle = t * Math.exp(-Math.log(10000.0) * k / half);
                table[(t - 1) * size + 2 * k] = (float) Math.sin(angle);
                table[(t - 1) * size + 2 * k + 1] = (float) Math.cos(angle);
            }
        }
        return table;
    }

    /** @return the architecture */
    public NetworkShape shape() {
        return shape;
    }

    /** @return T, the number of steps of the training schedule */
    public int steps() {
        return steps;
    }

    /** @return the number of parameters, {@link NetworkShape#parameterCount()} */
    public long parameterCount() {
        return params.length();
    }

    /** @return a copy of the flat parameter vector (layout in the class comment) */
    public float[] parameters() {
        float[] copy = new float[(int) params.length()];
        NativeMath.buffer(params).get(0, copy);
        return copy;
    }

    /**
     * The live flat float32 parameter vector. It is mutable on purpose: optimizers update it in
     * place ({@link AdamOptimizer#stepInPlace}) and every later pass sees the change. Do not change
     * it while a pass of this network runs on another thread.
     *
     * @return the parameter vector itself, not a copy
     */
    public INDArray parameterView() {
        return params;
    }

    /**
     * A copy of the step embedding e(t) (formula in the class comment).
     *
     * @param step t, 1..T
     * @return the E components of e(t)
     */
    public float[] stepEmbedding(int step) {
        Require.inRange("step", step, 1, steps);
        int e = shape.embeddingSize();
        return Arrays.copyOfRange(embedding, (step - 1) * e, step * e);
    }

    /**
     * Inference: {@code out = network(xt, steps)} for any number of rows, in chunks of
     * {@value #PREDICT_ROWS} rows on the calling thread. Thread-safe: each thread has its own
     * buffers.
     *
     * @param xt the noisy batch, rows x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @param out rows x outputs, receives the result (modified)
     */
    public void predict(INDArray xt, int[] steps, INDArray out) {
        int rows = checkInput(xt, steps);
        Require.notNull("out", out);
        if (out.rank() != 2 || out.rows() != rows || out.columns() != shape.outputs()) {
            throw new IllegalArgumentException("out has shape " + Arrays.toString(out.shape()) + "; expected ["
                    + rows + ", " + shape.outputs() + "] for xt of shape " + Arrays.toString(xt.shape()));
        }
        NativeMath.oneBlasThreadHere();
        Pass pass = predictPass.get();
        INDArray dense = NativeMath.denseFloat(xt);
        FloatBuffer x = NativeMath.buffer(dense);
        INDArray target = NativeMath.isDenseFloat(out) ? out : NativeMath.zeros(rows, shape.outputs());
        FloatPointer base = NativeMath.pointer(target);
        for (int r = 0; r < rows; r += PREDICT_ROWS) {
            int n = Math.min(PREDICT_ROWS, rows - r);
            pass.forwardRows(x, r, n, steps, NativeMath.offset(base, (long) r * shape.outputs()));
        }
        if (target != out) {
            out.assign(target);
        }
        Reference.reachabilityFence(dense);
        Reference.reachabilityFence(target);
    }

    /**
     * Inference into a new array; see {@link #predict(INDArray, int[], INDArray)}.
     *
     * @param xt the noisy batch, rows x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @return rows x outputs, float32, row-major
     */
    public INDArray predict(INDArray xt, int[] steps) {
        int rows = checkInput(xt, steps);
        INDArray out = NativeMath.zeros(rows, shape.outputs());
        predict(xt, steps, out);
        return out;
    }

    /**
     * Buffers for training passes on one thread at one batch size.
     *
     * @param batchSize rows of every {@link Pass#forward} call, at least 1
     * @return a new pass; not thread-safe, use one per worker thread
     */
    public Pass newPass(int batchSize) {
        Require.atLeast("batchSize", batchSize, 1);
        return new Pass(this, batchSize);
    }

    /** Validates xt (rank 2, inputs columns) and steps (one per row, each in 1..T); returns the rows. */
    int checkInput(INDArray xt, int[] steps) {
        return checkInput(shape, this.steps, xt, steps);
    }

    private static int checkInput(NetworkShape shape, int scheduleSteps, INDArray xt, int[] steps) {
        Require.notNull("xt", xt);
        Require.notNull("steps", steps);
        if (xt.rank() != 2 || xt.columns() != shape.inputs()) {
            throw new IllegalArgumentException("xt has shape " + Arrays.toString(xt.shape())
                    + "; expected [rows, " + shape.inputs() + "] (the network has " + shape.inputs() + " inputs)");
        }
        int rows = xt.rows();
        if (steps.length != rows) {
            throw new IllegalArgumentException("steps has length " + steps.length + "; expected " + rows
                    + ", one per row of xt of shape " + Arrays.toString(xt.shape()));
        }
        for (int i = 0; i < rows; i++) {
            if (steps[i] < 1 || steps[i] > scheduleSteps) {
                Require.inRange("steps[" + i + "]", steps[i], 1, scheduleSteps);
            }
        }
        return rows;
    }

    /**
     * Preallocated buffers for the forward and backward passes of one {@link ReverseNetwork} at one
     * batch size on one thread. Not thread-safe; create one per worker thread.
     *
     * <p>Internally the first layer's input {@code [x_t, e(t), 1]} is stored row-major (rows x K),
     * later layers' inputs and the hidden gradients feature-major (K x rows), so every matrix an
     * sgemm reads or writes is dense and every concatenation is a contiguous copy.
     *
     * <p>A pass holds the network's parameter vector and tables but not the network object itself,
     * so that the per-thread passes of {@link ReverseNetwork#predict} do not keep a network alive.
     */
    public static final class Pass {

        private final NetworkShape shape;
        private final int scheduleSteps;
        private final INDArray params;
        private final long[] weightOffset;
        private final float[] embedding;
        private final int capacity;
        private final int last;

        private final FloatPointer[] weights;
        private final INDArray firstInput;
        private final FloatPointer firstInputPointer;
        private final FloatBuffer firstInputBuffer;
        private final INDArray[] inputs;
        private final FloatPointer[] inputPointers;
        private final FloatBuffer[] inputBuffers;
        private final INDArray[] scratch;
        private final FloatPointer[] scratchPointers;
        private final FloatBuffer[] scratchBuffers;
        private final INDArray output;
        private final FloatPointer outputPointer;

        private final float[] stage;
        private final float[] stepStage;
        private final float[] ones;
        private final float[] work;
        private final float[][] sigmoid;
        private final float[][] activation;

        private int rows = -1;
        private INDArray lastGradient;
        private FloatPointer[] gradientPointers;

        Pass(ReverseNetwork net, int capacity) {
            this.shape = net.shape;
            this.scheduleSteps = net.steps;
            this.params = net.params;
            this.weightOffset = net.weightOffset;
            this.embedding = net.embedding;
            this.capacity = capacity;
            this.last = shape.layerCount() - 1;
            int e = shape.embeddingSize();
            FloatPointer base = NativeMath.pointer(params);
            weights = new FloatPointer[last + 1];
            for (int j = 0; j <= last; j++) {
                weights[j] = NativeMath.offset(base, weightOffset[j]);
            }
            firstInput = NativeMath.zeros((long) capacity * shape.weightRows(0));
            firstInputPointer = NativeMath.pointer(firstInput);
            firstInputBuffer = firstInputPointer.asBuffer();
            inputs = new INDArray[last + 1];
            inputPointers = new FloatPointer[last + 1];
            inputBuffers = new FloatBuffer[last + 1];
            int widest = 1;
            for (int j = 1; j <= last; j++) {
                inputs[j] = NativeMath.zeros((long) shape.weightRows(j) * capacity);
                inputPointers[j] = NativeMath.pointer(inputs[j]);
                inputBuffers[j] = inputPointers[j].asBuffer();
                widest = Math.max(widest, shape.unitsIn(j));
            }
            scratch = new INDArray[2];
            scratchPointers = new FloatPointer[2];
            scratchBuffers = new FloatBuffer[2];
            for (int i = 0; i < 2; i++) {
                scratch[i] = NativeMath.zeros((long) widest * capacity);
                scratchPointers[i] = NativeMath.pointer(scratch[i]);
                scratchBuffers[i] = scratchPointers[i].asBuffer();
            }
            output = NativeMath.zeros(capacity, shape.outputs());
            outputPointer = NativeMath.pointer(output);
            stage = new float[capacity * shape.weightRows(0)];
            stepStage = new float[(e + 1) * capacity];
            ones = new float[capacity];
            Arrays.fill(ones, 1f);
            work = new float[widest * capacity];
            sigmoid = new float[last][];
            activation = new float[last][];
            for (int j = 0; j < last; j++) {
                sigmoid[j] = new float[shape.unitsOut(j) * capacity];
                activation[j] = new float[shape.unitsOut(j) * capacity];
            }
        }

        /** @return the rows of every {@link #forward} call */
        public int batchSize() {
            return capacity;
        }

        /**
         * The forward pass on a full batch.
         *
         * @param xt the noisy batch, batchSize x inputs (not modified)
         * @param steps the step t (1..T) of each row (not modified)
         * @return the output buffer, batchSize x outputs, owned by this pass and valid until the next
         *     call; do not modify it
         */
        public INDArray forward(INDArray xt, int[] steps) {
            int n = checkInput(shape, scheduleSteps, xt, steps);
            if (n != capacity) {
                throw new IllegalArgumentException("xt has shape " + Arrays.toString(xt.shape()) + "; expected ["
                        + capacity + ", " + shape.inputs() + "] (the batch size of this pass)");
            }
            NativeMath.oneBlasThreadHere();
            INDArray dense = NativeMath.denseFloat(xt);
            forwardRows(NativeMath.buffer(dense), 0, n, steps, outputPointer);
            Reference.reachabilityFence(dense);
            return output;
        }

        /** The output buffer (capacity x outputs). */
        INDArray output() {
            return output;
        }

        /** A pointer to the output buffer. */
        FloatPointer outputPointer() {
            return outputPointer;
        }

        /**
         * The backward pass through the last forward pass: adds dLoss/dParameters to
         * {@code gradInto}.
         *
         * @param dOutput dLoss/dOutput, batchSize x outputs (not modified)
         * @param gradInto a dense float32 vector of length {@link ReverseNetwork#parameterCount()} in the parameter
         *     layout; the gradient is added to it (modified)
         */
        public void backward(INDArray dOutput, INDArray gradInto) {
            if (rows < 0) {
                throw new IllegalStateException("backward called before forward");
            }
            Require.notNull("dOutput", dOutput);
            if (dOutput.rank() != 2 || dOutput.rows() != rows || dOutput.columns() != shape.outputs()) {
                throw new IllegalArgumentException("dOutput has shape " + Arrays.toString(dOutput.shape())
                        + "; expected [" + rows + ", " + shape.outputs() + "], the shape of the forward output");
            }
            NativeMath.oneBlasThreadHere();
            INDArray dense = NativeMath.denseFloat(dOutput);
            backwardRows(NativeMath.pointer(dense), gradientPointers(gradInto), 1f);
            Reference.reachabilityFence(dense);
        }

        FloatPointer[] gradientPointers(INDArray gradInto) {
            Require.notNull("gradInto", gradInto);
            if (gradInto != lastGradient) {
                if (gradInto.length() != params.length() || !NativeMath.isDenseFloat(gradInto)
                        || !(gradInto.rank() <= 1 || gradInto.isVector())) {
                    throw new IllegalArgumentException("gradInto has shape " + Arrays.toString(gradInto.shape())
                            + " and type " + gradInto.dataType() + "; expected a dense FLOAT vector of length "
                            + params.length());
                }
                FloatPointer base = NativeMath.pointer(gradInto);
                FloatPointer[] pointers = new FloatPointer[last + 1];
                for (int j = 0; j <= last; j++) {
                    pointers[j] = NativeMath.offset(base, weightOffset[j]);
                }
                gradientPointers = pointers;
                lastGradient = gradInto;
            }
            return gradientPointers;
        }

        /**
         * The forward pass on rows [rowOffset, rowOffset + n) of a dense row-major x.
         *
         * @param x dense row-major float view of x_t (not modified)
         * @param rowOffset first row of x to use; steps are read from the same index
         * @param n rows, at most the capacity
         * @param steps steps of all rows of x (not modified)
         * @param out receives n x outputs, row-major (modified)
         */
        void forwardRows(FloatBuffer x, int rowOffset, int n, int[] steps, FloatPointer out) {
            int d = shape.inputs();
            int e = shape.embeddingSize();
            int k0 = shape.weightRows(0);
            float[] table = embedding;
            for (int r = 0; r < n; r++) {
                int at = r * k0;
                x.get((rowOffset + r) * d, stage, at, d);
                System.arraycopy(table, (steps[rowOffset + r] - 1) * e, stage, at + d, e);
                stage[at + d + e] = 1f;
            }
            firstInputBuffer.put(0, stage, 0, n * k0);
            if (last > 1 && shape.stepInput() == StepInput.EVERY_BLOCK) {
                for (int r = 0; r < n; r++) {
                    int from = (steps[rowOffset + r] - 1) * e;
                    for (int c = 0; c < e; c++) {
                        stepStage[c * n + r] = table[from + c];
                    }
                    stepStage[e * n + r] = 1f;
                }
            }
            for (int j = 0; j <= last; j++) {
                int k = shape.weightRows(j);
                int units = shape.unitsOut(j);
                boolean rowInput = j == 0;
                FloatPointer in = rowInput ? firstInputPointer : inputPointers[j];
                int ldIn = rowInput ? k : n;
                if (j < last) {
                    // Z^T (units x n) = W^T (units x k) [in]^T (k x n)
                    NativeMath.gemm(true, rowInput, units, n, k, weights[j], units, in, ldIn, 0f,
                            scratchPointers[0], n);
                    int size = units * n;
                    scratchBuffers[0].get(0, work, 0, size);
                    Silu.forward(work, sigmoid[j], activation[j], size);
                    FloatBuffer next = inputBuffers[j + 1];
                    next.put(0, activation[j], 0, size);
                    if (shape.embeddingIn(j + 1) > 0) {
                        next.put(size, stepStage, 0, (e + 1) * n);
                    } else {
                        next.put(size, ones, 0, n);
                    }
                } else {
                    // out (n x units) = in (n x k) W (k x units)
                    NativeMath.gemm(!rowInput, false, n, units, k, in, ldIn, weights[j], units, 0f, out, units);
                }
            }
            rows = n;
        }

        /**
         * The backward pass through the last forward pass.
         *
         * @param dOutput dLoss/dOutput, rows x outputs row-major (not modified)
         * @param gradient per-layer pointers into the gradient vector (modified)
         * @param beta 1 to add to the gradient, 0 to overwrite it
         */
        void backwardRows(FloatPointer dOutput, FloatPointer[] gradient, float beta) {
            int n = rows;
            FloatPointer dy = dOutput;
            boolean dyRowMajor = true;
            int current = 1;
            for (int j = last; j >= 0; j--) {
                int k = shape.weightRows(j);
                int units = shape.unitsOut(j);
                boolean rowInput = j == 0;
                if (j < last) {
                    // dA^T -> dZ^T through SiLU, in the scratch buffer the previous gemm wrote
                    int size = units * n;
                    FloatBuffer buffer = scratchBuffers[current];
                    buffer.get(0, work, 0, size);
                    Silu.backwardInPlace(work, sigmoid[j], activation[j], size);
                    buffer.put(0, work, 0, size);
                    dy = scratchPointers[current];
                    dyRowMajor = false;
                }
                FloatPointer in = rowInput ? firstInputPointer : inputPointers[j];
                // dW (k x units) (+)= [in]^T (k x n) dY (n x units)
                NativeMath.gemm(rowInput, !dyRowMajor, k, units, n, in, rowInput ? k : n, dy,
                        dyRowMajor ? units : n, beta, gradient[j], units);
                if (j > 0) {
                    // dA_(j-1)^T (unitsIn x n) = W_h (unitsIn x units) dY^T (units x n)
                    int next = current ^ 1;
                    NativeMath.gemm(false, dyRowMajor, shape.unitsIn(j), n, units, weights[j], units, dy,
                            dyRowMajor ? units : n, 0f, scratchPointers[next], n);
                    current = next;
                }
            }
        }
    }
}
