package org.backstep.internal.train;

import org.backstep.internal.chain.BoundTerms;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.net.ParallelStep;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.TrainingLoss;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The training loss of a minibatch and its gradient with respect to the network's outputs, row by
 * row; called by the parallel step for each shard. The loss of one row at step t is the mean over
 * its D modelled cells of
 * <pre>
 *   continuous cell, SIMPLE:  (eps-hat - eps)^2                               (Ho et al. 2020, eq. 14)
 *   continuous cell, BOUND:   T L_{t-1}  (Gaussian KL, or decoder NLL at t = 1) (eq. 5)
 *   continuous cell, HYBRID:  (eps-hat - eps)^2 + lambda T L_{t-1}, the bound part
 *                             reaching only v                               (Nichol &amp; Dhariwal 2021, sec. 3.1)
 *   binary cell:              T L_{t-1}  (Bernoulli KL, or cross-entropy at t = 1)
 *   categorical cell:         T L_{t-1}  (categorical KL, or cross-entropy at t = 1; Hoogeboom et al. 2021, sec. 4)
 * </pre>
 * times 1/(T p_t) under importance sampling, averaged over the minibatch. A cell filled in for a
 * missing one ({@link GapFilling}) has no term: it is an input of the network, not a target (the
 * mean stays over D cells, so a row with gaps weighs its observed cells as a complete row does). Every bound term and its
 * partial derivatives come from {@link BoundTerms}; epsilon-hat and v are the network's output plus
 * the model's {@link ClosedFormPart} when it has one (added here, so the loss sees what the
 * estimator gives; the output's gradient is that of epsilon-hat and v). This class only applies the chain rule through
 * the parameterization (d mu / d eps-hat, d log sigma^2 / d v) and the loss's weights.
 */
final class LossGradient implements ParallelStep.LossGradient {

    private final Chain chain;
    private final TrainingLoss loss;
    private final double lambda;
    private final boolean learned;
    private final int dc;
    private final int db;
    private final int dk;
    private final int outputs;
    private final int logitOffset;
    private final double steps;
    /** Each row's bound summed over its cells, for importance sampling. */
    final double[] rowBound;
    private final int batch;
    /** The closed-form part added to the network's output, or null (the gradient passes through it unchanged). */
    private final ClosedFormPart baseline;
    private float[] x0;
    private float[] xt;
    private float[] eps;
    private int[] k;
    private double[] weight;
    private boolean[] filled;

    LossGradient(Chain chain, FitOptions options, int batch, ClosedFormPart baseline) {
        this(chain, options, batch, baseline, batch);
    }

    /**
     * A loss over {@code rows} rows that are a share of a minibatch of {@code meanOver} rows: each
     * row weighs 1/(meanOver D), so that the shares' gradients sum to the minibatch's
     * ({@link GradientShare}).
     */
    LossGradient(Chain chain, FitOptions options, int rows, ClosedFormPart baseline, int meanOver) {
        this.chain = chain;
        this.baseline = baseline;
        this.loss = options.loss();
        this.lambda = options.hybridWeight();
        this.learned = options.variance() == ReverseVariance.LEARNED;
        this.dc = chain.continuousColumns();
        this.db = chain.binaryColumns();
        this.dk = chain.categoricalColumns();
        this.outputs = chain.outputs();
        this.logitOffset = chain.logitOffset();
        this.steps = chain.steps();
        this.rowBound = new double[rows];
        this.batch = meanOver;
    }

    /**
     * Points at the minibatch of the next step (the arrays are read, not copied or modified).
     *
     * @param filled batch x D, true where a cell was filled in for a missing one (no loss term);
     *     null when every cell is observed
     */
    void prepare(float[] x0, float[] xt, float[] eps, int[] k, double[] weight, boolean[] filled) {
        this.filled = filled;
        this.x0 = x0;
        this.xt = xt;
        this.eps = eps;
        this.k = k;
        this.weight = weight;
    }

    @Override
    public double compute(int shard, int rowOffset, INDArray output, INDArray dOutputInto) {
        int rows = (int) output.rows();
        float[] out = output.dup('c').data().asFloat();
        float[] grad = new float[rows * outputs];
        double[] partials = new double[2];
        int d = dc + db + dk;
        int[] cats = chain.categories();
        double[][] logits = chain.logitBuffers();
        double[][] gradient = chain.logitBuffers();
        if (baseline != null) {
            // epsilon-hat and v are the closed form plus the network's output: d loss / d output is
            // unchanged. The closed form reads the continuous cells of the model-space x_t, the
            // first dc of each row of width d (never the one-hot encoded network input).
            double[] scratch = new double[baseline.scratchSize()];
            for (int i = 0; i < rows; i++) {
                int r = rowOffset + i;
                baseline.addToRowInPlace(xt, r * d, chain.source(k[r]), out, i * outputs, learned, scratch);
            }
        }
        double total = 0.0;
        for (int i = 0; i < rows; i++) {
            int r = rowOffset + i;
            int s = k[r];
            int o = r * d;
            int oo = i * outputs;
            double w = weight[r] / (batch * (double) d);
            double rowLoss = 0.0;
            double bound = 0.0;
            double dMeanDEps = BoundTerms.meanPerEpsilon(chain, s);
            for (int j = 0; j < dc; j++) {
                if (filled != null && filled[o + j]) {
                    continue;
                }
                double eh = out[oo + j];
                double v = learned ? out[oo + dc + j] : 0.0;
                double term = BoundTerms.continuousCell(chain, s, j, x0[o + j], xt[o + j], eh, v, partials);
                double dMean = partials[0];
                double dLogVar = partials[1];
                bound += term;
                double dLogVarDv = BoundTerms.logVariancePerV(chain, s, v);
                double gEps = 0.0;
                double gV = 0.0;
                switch (loss) {
                    case SIMPLE -> {
                        double e = eh - eps[r * dc + j];
                        rowLoss += e * e;
                        gEps = 2.0 * e;
                    }
                    case BOUND -> {
                        rowLoss += steps * term;
                        gEps = steps * dMean * dMeanDEps;
                        gV = steps * dLogVar * dLogVarDv;
                    }
                    case HYBRID -> {
                        double e = eh - eps[r * dc + j];
                        rowLoss += e * e + lambda * steps * term;
                        gEps = 2.0 * e;
                        gV = lambda * steps * dLogVar * dLogVarDv;
                    }
                }
                grad[oo + j] = (float) (w * gEps);
                if (learned) {
                    grad[oo + dc + j] = (float) (w * gV);
                }
            }
            for (int j = 0; j < db; j++) {
                if (filled != null && filled[o + dc + j]) {
                    continue;
                }
                double term = BoundTerms.binary(chain, s, x0[o + dc + j] > 0.5f ? 1 : 0,
                        xt[o + dc + j] > 0.5f ? 1 : 0, out[oo + logitOffset + j], partials);
                bound += term;
                rowLoss += steps * term;
                grad[oo + logitOffset + j] = (float) (w * steps * partials[0]);
            }
            for (int j = 0; j < dk; j++) {
                int at = o + dc + db + j;
                if (filled != null && filled[at]) {
                    continue;
                }
                int first = chain.categoricalLogitOffset(j);
                chain.logitsInto(out, oo, j, logits[j]);
                double term = BoundTerms.categorical(chain, s, j, (int) x0[at], (int) xt[at], logits[j], gradient[j]);
                bound += term;
                rowLoss += steps * term;
                for (int c = 0; c < cats[j]; c++) {
                    grad[oo + first + c] = (float) (w * steps * gradient[j][c]);
                }
            }
            rowBound[r] = bound;
            total += w * rowLoss;
        }
        dOutputInto.assign(Nd4j.create(grad, new long[] {rows, outputs}, 'c'));
        return total;
    }
}
