package org.backstep.internal.net;

import org.backstep.schedule.Require;
import org.bytedeco.javacpp.FloatPointer;
import org.nd4j.linalg.api.ndarray.INDArray;

import java.lang.ref.Reference;
import java.util.Arrays;

/**
 * The exact trace of the Jacobian of the network's first {@code Dc} outputs (epsilon-hat of the
 * continuous columns) with respect to the first {@code Dc} inputs (their x_t), by forward-mode
 * differentiation: one tangent per continuous input, all tangents of all rows carried together as
 * one matrix through each layer (Griewank &amp; Walther, "Evaluating Derivatives", 2nd ed., SIAM 2008,
 * chapter 3, the tangent mode). With the layers of {@link ReverseNetwork},
 * <pre>
 *   dZ_1 = e_c W_1                       (row c of W_1, the same for every record)
 *   dA_l = silu'(Z_l) . dZ_l             (elementwise, per record and tangent)
 *   dZ_(l+1) = dA_l W_(l+1)[units rows]  (the embedding and bias rows do not depend on x_t)
 *   trace = sum_c (dA_L W_(L+1)[units rows])_(c, c) = sum_c sum_h dA_L[c, h] W_(L+1)[h, c]
 * </pre>
 * with {@code silu'(z) = s (1 + z (1 - s))}, s = sigmoid(z) (Elfwing et al. 2018, section 2).
 * The products are float32 matrix products by ND4J's bundled BLAS, as in {@link ReverseNetwork}
 * (records x Dc tangent rows at a time); the trace is summed in double. Cost per record: about Dc forward passes.
 *
 * <p>This is the one place that differentiates the network by hand for the trace; a change to how
 * the estimator forms epsilon-hat from the network (another term, another layer kind) changes it
 * here, and {@code NetworkTangentsTest} checks it against finite differences of the estimator's
 * own predictions.
 *
 * <p>Immutable (it copies the weights when made) and safe to share between threads: each thread
 * keeps its own buffers.
 */
public final class NetworkTangents {

    private final NetworkShape shape;
    private final int scheduleSteps;
    private final int tangents;
    private final int last;
    private final float[][] embedding;      // [step - 1][E], the network's table
    private final INDArray[] weights;       // W_j, weightRows(j) x unitsOut(j)
    private final INDArray[] unitRows;      // W_j rows [0, unitsIn(j)), the rows that multiply h_(j-1), j >= 1
    private final float[] firstRows;        // W_1 rows [0, Dc), Dc x unitsOut(0), row-major
    private final float[] outputDiagonal;   // [c][h] = W_(L+1)[h, c], Dc x unitsIn(last)
    private final ThreadLocal<Scratch> scratch = ThreadLocal.withInitial(Scratch::new);

    /**
     * @param network the network, whose current parameters are copied
     * @param tangents Dc, the continuous inputs (the first Dc inputs and the first Dc outputs), at
     *     least 1 and at most the network's inputs and outputs
     */
    public NetworkTangents(ReverseNetwork network, int tangents) {
        Require.notNull("network", network);
        this.shape = network.shape();
        Require.inRange("tangents", tangents, 1, Math.min(shape.inputs(), shape.outputs()));
        this.scheduleSteps = network.steps();
        this.tangents = tangents;
        this.last = shape.layerCount() - 1;
        this.embedding = new float[scheduleSteps][];
        for (int t = 1; t <= scheduleSteps; t++) {
            embedding[t - 1] = network.stepEmbedding(t);
        }
        float[] p = network.parameters();
        weights = new INDArray[last + 1];
        unitRows = new INDArray[last + 1];
        int offset = 0;
        float[][] raw = new float[last + 1][];
        for (int j = 0; j <= last; j++) {
            int k = shape.weightRows(j);
            int u = shape.unitsOut(j);
            raw[j] = Arrays.copyOfRange(p, offset, offset + k * u);
            weights[j] = dense(raw[j], k, u);
            unitRows[j] = dense(Arrays.copyOf(raw[j], shape.unitsIn(j) * u), shape.unitsIn(j), u);
            offset += k * u;
        }
        firstRows = Arrays.copyOf(raw[0], tangents * shape.unitsOut(0));
        int h = shape.unitsIn(last);
        int outs = shape.unitsOut(last);
        outputDiagonal = new float[tangents * h];
        for (int c = 0; c < tangents; c++) {
            for (int i = 0; i < h; i++) {
                outputDiagonal[c * h + i] = raw[last][i * outs + c];
            }
        }
    }

    private static INDArray dense(float[] values, int rows, int columns) {
        INDArray a = NativeMath.zeros(rows, columns);
        NativeMath.buffer(a).put(0, values, 0, values.length);
        return a;
    }

    /** @return Dc, the number of tangents per record */
    public int tangents() {
        return tangents;
    }

    /**
     * For each record r: {@code trace[r] = sum_{c < Dc} d out[r, c] / d x[r, c]} at the step.
     *
     * @param x rows x inputs, row-major float32 (not modified)
     * @param rows the records, at least 1
     * @param step the training-schedule step t, 1..T
     * @param trace receives one value per record (modified)
     */
    public void traces(float[] x, int rows, int step, double[] trace) {
        Require.notNull("x", x);
        Require.notNull("trace", trace);
        Require.atLeast("rows", rows, 1);
        Require.inRange("step", step, 1, scheduleSteps);
        int d = shape.inputs();
        if (x.length < rows * d || trace.length < rows) {
            throw new IllegalArgumentException("x has length " + x.length + " and trace " + trace.length
                    + "; expected at least " + rows * d + " and " + rows + " for " + rows + " rows of " + d + " inputs");
        }
        int dc = tangents;
        int e = shape.embeddingSize();
        float[] emb = embedding[step - 1];
        Scratch w = scratch.get().sized(rows);
        // layer 1 input [x, e(t), 1]
        int k0 = shape.weightRows(0);
        float[] in = w.input[0];
        for (int r = 0; r < rows; r++) {
            System.arraycopy(x, r * d, in, r * k0, d);
            System.arraycopy(emb, 0, in, r * k0 + d, e);
            in[r * k0 + d + e] = 1f;
        }
        float[] tangent = null;     // (rows Dc) x units, dA of the previous layer
        for (int j = 0; j < last; j++) {
            int u = shape.unitsOut(j);
            float[] z = w.multiply(j, false, w.input[j], rows * shape.weightRows(j), weights[j], rows * u);
            float[] s = w.sigmoid[j];
            float[] a = w.activation[j];
            Silu.forward(z, s, a, rows * u);
            float[] dz = j == 0 ? null
                    : w.multiply(j, true, tangent, rows * dc * shape.unitsIn(j), unitRows[j], rows * dc * u);
            float[] next = w.tangent[j];
            for (int r = 0; r < rows; r++) {
                for (int c = 0; c < dc; c++) {
                    int o = (r * dc + c) * u;
                    for (int h = 0; h < u; h++) {
                        float sg = s[r * u + h];
                        float slope = sg * (1f + z[r * u + h] * (1f - sg));
                        float dzv = j == 0 ? firstRows[c * u + h] : dz[o + h];
                        next[o + h] = slope * dzv;
                    }
                }
            }
            tangent = next;
            if (j + 1 == last) {
                break;      // the output layer's forward is not needed: only its diagonal meets the tangents
            }
            int emIn = shape.embeddingIn(j + 1);
            int k = shape.weightRows(j + 1);
            in = w.input[j + 1];
            for (int r = 0; r < rows; r++) {
                System.arraycopy(a, r * u, in, r * k, u);
                if (emIn > 0) {
                    System.arraycopy(emb, 0, in, r * k + u, e);
                }
                in[r * k + k - 1] = 1f;
            }
        }
        int h = shape.unitsIn(last);
        for (int r = 0; r < rows; r++) {
            double sum = 0.0;
            if (last == 0) {
                for (int c = 0; c < dc; c++) {
                    sum += outputDiagonal[c * h + c];   // a linear network: W_1[c, c]
                }
            } else {
                for (int c = 0; c < dc; c++) {
                    int o = (r * dc + c) * h;
                    float part = 0f;
                    for (int i = 0; i < h; i++) {
                        part += tangent[o + i] * outputDiagonal[c * h + i];
                    }
                    sum += part;
                }
            }
            trace[r] = sum;
        }
    }

    /**
     * One thread's buffers for one row count: heap arrays for the elementwise work and native
     * float32 matrices for the products (made once, reused by every later call with as many rows).
     */
    private final class Scratch {
        private int rows = -1;
        float[][] input;            // layer j's input [h_(j-1), e(t)?, 1], rows x weightRows(j)
        float[][] sigmoid;
        float[][] activation;
        float[][] tangent;          // dA_j, (rows Dc) x unitsOut(j)
        private INDArray[][] left;  // [forward 0 / tangent 1][j]
        private INDArray[][] product;
        private FloatPointer[][] leftPointer;
        private FloatPointer[][] productPointer;
        private float[][][] result;

        Scratch sized(int n) {
            if (n == rows) {
                return this;
            }
            rows = n;
            input = new float[last + 1][];
            sigmoid = new float[last][];
            activation = new float[last][];
            tangent = new float[last][];
            left = new INDArray[2][last];
            product = new INDArray[2][last];
            leftPointer = new FloatPointer[2][last];
            productPointer = new FloatPointer[2][last];
            result = new float[2][last][];
            for (int j = 0; j <= last; j++) {
                input[j] = new float[n * shape.weightRows(j)];
            }
            for (int j = 0; j < last; j++) {
                int u = shape.unitsOut(j);
                sigmoid[j] = new float[n * u];
                activation[j] = new float[n * u];
                tangent[j] = new float[n * tangents * u];
                left[0][j] = NativeMath.zeros(n, shape.weightRows(j));
                product[0][j] = NativeMath.zeros(n, u);
                result[0][j] = new float[n * u];
                if (j > 0) {
                    left[1][j] = NativeMath.zeros((long) n * tangents, shape.unitsIn(j));
                    product[1][j] = NativeMath.zeros((long) n * tangents, u);
                    result[1][j] = new float[n * tangents * u];
                }
                for (int kind = 0; kind < 2; kind++) {
                    if (left[kind][j] != null) {
                        leftPointer[kind][j] = NativeMath.pointer(left[kind][j]);
                        productPointer[kind][j] = NativeMath.pointer(product[kind][j]);
                    }
                }
            }
            return this;
        }

        /**
         * The float32 product of {@code a} (values of the left matrix, row-major) and w by one
         * {@code sgemm} on ND4J's bundled BLAS ({@link NativeMath#gemm}), as a heap array.
         */
        float[] multiply(int j, boolean ofTangents, float[] a, int size, INDArray w, int outSize) {
            int kind = ofTangents ? 1 : 0;
            INDArray l = left[kind][j];
            INDArray p = product[kind][j];
            NativeMath.buffer(l).put(0, a, 0, size);
            int m = (int) l.rows();
            int k = (int) l.columns();
            int n = (int) w.columns();
            NativeMath.oneBlasThreadHere();
            NativeMath.gemm(false, false, m, n, k, leftPointer[kind][j], k, NativeMath.pointer(w), n, 0f,
                    productPointer[kind][j], n);
            float[] out = result[kind][j];
            NativeMath.buffer(p).get(0, out, 0, outSize);
            Reference.reachabilityFence(l);
            Reference.reachabilityFence(p);
            Reference.reachabilityFence(w);
            return out;
        }
    }
}
