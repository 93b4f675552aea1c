package org.backstep.internal.train;

import java.util.SplittableRandom;

import org.backstep.internal.chain.BoundEvaluator;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.AdamOptimizer;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ParallelStep;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.Baseline;
import org.backstep.option.Coordinates;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepSampling;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The seam of synchronous data-parallel training, kept internal: it exists to measure that way of
 * training against training on a sample in one JVM (diffusion-bench/results/spark-fitting.txt), and
 * is not the library's way of fitting. A minibatch of B rows is split into shares held by different
 * workers; each worker computes, at the weights it is sent, the gradient of its share's part of the
 * minibatch loss (each row weighted 1/(B D), as in {@link LossGradient}), the gradients are summed,
 * and the sum is the gradient of the whole minibatch's loss, which {@link #optimizer} applies (the
 * step of Ho et al. 2020, algorithm 1, with Adam, as {@link TrainingRun} does).
 *
 * <p>What it leaves out of {@link TrainingRun}: the moving average of the weights, importance
 * sampling of t, the closed-form baseline and rows with gaps (it refuses options that need them),
 * and checkpoint selection. Each share draws its rows' t and noise from its own seed. Not
 * thread-safe; one per worker thread.
 */
public final class GradientShare implements AutoCloseable {

    private final int d;
    private final int dc;
    private final int rows;
    private final ReverseNetwork net;
    private final Chain chain;
    private final LossGradient terms;
    private final ParallelStep parallel;
    private final StepSampler sampler;
    private final INDArray xtArray;
    private final float[] xt;
    private final float[] encoded;
    private final float[] eps;
    private final int[] k;
    private final int[] src;
    private final double[] weight;

    private GradientShare(FitOptions options, TableTransform transform, int shareRows, int batchRows, int threads) {
        NetworkShape shape = shapeOf(options, transform);
        net = ReverseNetwork.create(shape, options.steps(), options.seed(), false);
        chain = Chain.of(options, transform, new NetworkEstimator(net, null,
                options.variance() == ReverseVariance.LEARNED));
        d = transform.modelColumns();
        dc = transform.modelledContinuous().length;
        rows = shareRows;
        terms = new LossGradient(chain, options, shareRows, null, batchRows);
        parallel = ParallelStep.create(net, shareRows, Math.min(threads, shareRows));
        sampler = new StepSampler(options.steps(), StepSampling.UNIFORM);
        xtArray = Nd4j.create(DataType.FLOAT, shareRows, chain.inputs());
        xt = new float[shareRows * d];
        encoded = chain.inputs() == d ? null : new float[shareRows * chain.inputs()];
        eps = new float[shareRows * Math.max(1, dc)];
        k = new int[shareRows];
        src = new int[shareRows];
        weight = new double[shareRows];
    }

    /**
     * A worker's share of minibatches.
     *
     * @param options validated options, with no baseline and uniform sampling of t
     * @param transform the column transforms
     * @param shareRows the rows of this share, at least 1
     * @param batchRows B, the rows of the whole minibatch, at least 1
     * @param threads threads of this share's forward and backward passes
     * @return the share
     * @throws IllegalArgumentException if the options ask for a baseline, importance sampling or
     *     coordinates other than STANDARDIZED
     */
    public static GradientShare of(FitOptions options, TableTransform transform, int shareRows, int batchRows,
                                   int threads) {
        if (options.baseline() != Baseline.NONE || options.stepSampling() != StepSampling.UNIFORM) {
            throw new IllegalArgumentException("data-parallel shares support no baseline and uniform steps only; got "
                    + options.baseline() + " and " + options.stepSampling());
        }
        if (options.coordinates() != Coordinates.STANDARDIZED) {
            throw new IllegalArgumentException("options.coordinates is " + options.coordinates()
                    + "; data-parallel shares support STANDARDIZED coordinates only");
        }
        if (shareRows < 1 || batchRows < 1) {
            throw new IllegalArgumentException("shareRows is " + shareRows + " and batchRows " + batchRows
                    + "; expected at least 1 each");
        }
        return new GradientShare(options, transform, shareRows, batchRows, threads);
    }

    private static NetworkShape shapeOf(FitOptions options, TableTransform transform) {
        return new NetworkShape(Chain.inputsOf(transform), options.hidden(),
                Chain.outputsOf(options.variance(), transform), options.embeddingSize(), options.stepInput());
    }

    /** @return the network's first weights, as {@link TrainingRun} starts from them */
    public static float[] initialWeights(FitOptions options, TableTransform transform) {
        return ReverseNetwork.create(shapeOf(options, transform), options.steps(), options.seed(), false).parameters();
    }

    /** @return Adam with the options' settings, for the weights of this shape */
    public static AdamOptimizer optimizer(FitOptions options, TableTransform transform) {
        long count = shapeOf(options, transform).parameterCount();
        return AdamOptimizer.create(count, options.learningRate(), options.adamBeta1(), options.adamBeta2(),
                options.adamEpsilon(), options.weightDecay());
    }

    /**
     * @return the rows of a table in model space, float32, row after row
     * @throws IllegalArgumentException if a row has a missing cell (shares train on complete rows only)
     */
    public static float[] modelRows(TableTransform transform, Table rows) {
        if (rows.hasMissing()) {
            throw new IllegalArgumentException("rows has missing cells; data-parallel shares train on complete "
                    + "rows only (select them with Table.completeRows())");
        }
        return Engine.toFloat(transform.toModelSpace(rows));
    }

    /**
     * Adds the gradient of this share's part of the minibatch loss, at the given weights, into
     * {@code gradientSum}: t uniform in 1..T and the noise drawn from {@code seed} for each row.
     *
     * @param weights the network's weights (not modified)
     * @param x0 the share's rows in model space, shareRows x D (not modified)
     * @param seed the share's draws
     * @param gradientSum the running sum of gradients (modified: this share's gradient is added)
     * @return this share's part of the minibatch loss
     */
    public double addGradientInPlace(float[] weights, float[] x0, long seed, float[] gradientSum) {
        INDArray view = net.parameterView();
        view.assign(Nd4j.createFromArray(weights).reshape(view.shape()));
        SplittableRandom rng = new SplittableRandom(seed);
        for (int r = 0; r < rows; r++) {
            k[r] = sampler.draw(rng);
            src[r] = chain.source(k[r]);
            weight[r] = sampler.weight(k[r]);
        }
        chain.diffuse(x0, rows, k, xt, eps, rng);
        if (encoded == null) {
            xtArray.data().setData(xt);
        } else {
            chain.encodeInput(xt, rows, encoded);
            xtArray.data().setData(encoded);
        }
        terms.prepare(x0, xt, eps, k, weight, null);
        double loss = parallel.run(xtArray, src, terms);
        float[] g = parallel.gradient().toFloatVector();
        for (int i = 0; i < g.length; i++) {
            gradientSum[i] += g[i];
        }
        return loss;
    }

    /**
     * The Monte Carlo bound at the given weights, mean nats per row in model space
     * ({@link BoundEvaluator#monteCarlo}).
     *
     * @param options the options
     * @param transform the column transforms
     * @param weights the weights (not modified)
     * @param x0 rows in model space (not modified)
     * @param count the rows
     * @param draws steps drawn per row
     * @param seed the draws
     * @param threads threads
     * @return the mean bound per row
     */
    public static double bound(FitOptions options, TableTransform transform, float[] weights, float[] x0, int count,
                               int draws, long seed, int threads) {
        ReverseNetwork net = ReverseNetwork.fromParameters(shapeOf(options, transform), options.steps(), weights);
        Chain c = Chain.of(options, transform, new NetworkEstimator(net, null,
                options.variance() == ReverseVariance.LEARNED));
        BoundEvaluator.Result res = BoundEvaluator.monteCarlo(c, x0, count, draws, seed, threads);
        return (BoundEvaluator.sum(res.continuous) + BoundEvaluator.sum(res.binary)) / count;
    }

    @Override
    public void close() {
        parallel.close();
    }
}
