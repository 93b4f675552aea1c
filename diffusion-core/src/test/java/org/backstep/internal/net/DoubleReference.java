package org.backstep.internal.net;

import org.backstep.option.StepInput;

/**
 * A plain double-precision implementation of the network of {@link ReverseNetwork}, written from its
 * documented formula and parameter layout with straightforward loops and {@code Math.exp}, as the
 * reference for the float32 passes (gradient check, forward check) and for the golden model test.
 */
public final class DoubleReference {

    private DoubleReference() {
    }

    /** e(t) of Vaswani et al. 2017, section 3.5: PE(t, 2i) = sin(t / 10000^(2i/E)), PE(t, 2i+1) = cos(same). */
    static double[] embedding(int t, int size) {
        double[] e = new double[size];
        for (int i = 0; i < size / 2; i++) {
            double angle = t / Math.pow(10000.0, 2.0 * i / size);
            e[2 * i] = Math.sin(angle);
            e[2 * i + 1] = Math.cos(angle);
        }
        return e;
    }

    /** silu(z) = z / (1 + exp(-z)), Elfwing, Uchibe &amp; Doya 2018. */
    static double silu(double z) {
        return z / (1 + Math.exp(-z));
    }

    /**
     * The network output for every row, in double.
     *
     * @param shape the architecture
     * @param p the parameters in the documented layout
     * @param x rows x inputs
     * @param steps the step of each row
     * @return rows x outputs
     */
    public static double[][] forward(NetworkShape shape, double[] p, double[][] x, int[] steps) {
        int[] hidden = shape.hidden();
        int layers = hidden.length + 1;
        double[][] out = new double[x.length][];
        for (int r = 0; r < x.length; r++) {
            double[] emb = embedding(steps[r], shape.embeddingSize());
            double[] h = x[r];
            int offset = 0;
            for (int j = 0; j < layers; j++) {
                boolean withEmbedding = j == 0
                        || (shape.stepInput() == StepInput.EVERY_BLOCK && j < layers - 1);
                int units = j < layers - 1 ? hidden[j] : shape.outputs();
                double[] in = new double[h.length + (withEmbedding ? emb.length : 0) + 1];
                System.arraycopy(h, 0, in, 0, h.length);
                if (withEmbedding) {
                    System.arraycopy(emb, 0, in, h.length, emb.length);
                }
                in[in.length - 1] = 1;
                double[] z = new double[units];
                for (int c = 0; c < units; c++) {
                    double sum = 0;
                    for (int k = 0; k < in.length; k++) {
                        sum += in[k] * p[offset + k * units + c];
                    }
                    z[c] = j < layers - 1 ? silu(sum) : sum;
                }
                offset += in.length * units;
                h = z;
            }
            out[r] = h;
        }
        return out;
    }

    /** sum_(r, c) g[r][c] out[r][c]: a loss whose gradient with respect to the output is g. */
    static double weightedSum(NetworkShape shape, double[] p, double[][] x, int[] steps, double[][] g) {
        double[][] out = forward(shape, p, x, steps);
        double sum = 0;
        for (int r = 0; r < out.length; r++) {
            for (int c = 0; c < out[r].length; c++) {
                sum += g[r][c] * out[r][c];
            }
        }
        return sum;
    }
}
