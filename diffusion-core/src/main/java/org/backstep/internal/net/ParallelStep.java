package org.backstep.internal.net;

import java.lang.ref.Reference;
import java.nio.FloatBuffer;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.IntConsumer;

import org.backstep.schedule.Require;
import org.bytedeco.javacpp.FloatPointer;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * One data-parallel training step of a {@link ReverseNetwork}: the minibatch is cut into
 * {@code threads} shards of consecutive rows (sizes differ by at most one, the first shards being the
 * larger), each shard runs forward, loss gradient and backward on its own Java thread with its own
 * {@link ReverseNetwork.Pass} and gradient buffer (each BLAS call single-threaded), and the shard
 * gradients are summed in shard order, {@code g = ((g_0 + g_1) + g_2) + ...}, so the result is
 * bit-reproducible for a fixed thread count. The summed loss is {@code sum_i loss_i} in shard order.
 * {@link #trainInPlace} also applies an {@link AdamOptimizer} step, split across the threads.
 *
 * <p>Shard 0 runs on the calling thread, the others on {@code threads - 1} daemon worker threads
 * owned by this object; {@link #close()} stops them. Not thread-safe: one caller at a time.
 */
public final class ParallelStep implements AutoCloseable {

    /**
     * The loss of one shard and its gradient with respect to the shard's output.
     */
    @FunctionalInterface
    public interface LossGradient {
        /**
         * Called once per shard per {@link #run}, concurrently from several threads for different
         * shards, so it must be thread-safe.
         *
         * @param shard the shard index, 0..threads-1
         * @param rowOffset the shard's first row in the minibatch
         * @param output the network output for the shard's rows, rows x outputs (do not modify)
         * @param dOutputInto dense row-major float32, rows x outputs: must be filled entirely with
         *     dLoss/dOutput (modified)
         * @return the shard's loss (its share of the minibatch loss)
         */
        double compute(int shard, int rowOffset, INDArray output, INDArray dOutputInto);
    }

    private static final AtomicInteger POOL_NUMBER = new AtomicInteger();

    private final ReverseNetwork net;
    private final int batchSize;
    private final int[] shardRows;
    private final int[] shardOffset;
    private final ReverseNetwork.Pass[] passes;
    private final INDArray[] gradients;
    private final FloatPointer[] gradientBase;
    private final INDArray[] dOutputs;
    private final FloatPointer[] dOutputPointers;
    private final int[] rangeStart;
    private final FloatPointer[][] rangeOf;
    private final ExecutorService workers;
    private boolean closed;

    private ParallelStep(ReverseNetwork net, int batchSize, int threads) {
        this.net = net;
        this.batchSize = batchSize;
        shardRows = new int[threads];
        shardOffset = new int[threads];
        passes = new ReverseNetwork.Pass[threads];
        gradients = new INDArray[threads];
        gradientBase = new FloatPointer[threads];
        dOutputs = new INDArray[threads];
        dOutputPointers = new FloatPointer[threads];
        int offset = 0;
        for (int i = 0; i < threads; i++) {
            shardRows[i] = batchSize / threads + (i < batchSize % threads ? 1 : 0);
            shardOffset[i] = offset;
            offset += shardRows[i];
            passes[i] = net.newPass(shardRows[i]);
            gradients[i] = NativeMath.zeros(net.parameterCount());
            gradientBase[i] = NativeMath.pointer(gradients[i]);
            dOutputs[i] = NativeMath.zeros(shardRows[i], net.shape().outputs());
            dOutputPointers[i] = NativeMath.pointer(dOutputs[i]);
        }
        // Parameter ranges for the gradient sum and the optimizer step, cut at multiples of 16 floats.
        long count = net.parameterCount();
        rangeStart = new int[threads + 1];
        for (int i = 1; i < threads; i++) {
            rangeStart[i] = (int) (count * i / threads) & ~15;
        }
        rangeStart[threads] = (int) count;
        rangeOf = new FloatPointer[threads][threads];
        for (int shard = 0; shard < threads; shard++) {
            for (int range = 0; range < threads; range++) {
                rangeOf[shard][range] = NativeMath.offset(gradientBase[shard], rangeStart[range]);
            }
        }
        if (threads > 1) {
            int pool = POOL_NUMBER.incrementAndGet();
            AtomicInteger worker = new AtomicInteger();
            workers = Executors.newFixedThreadPool(threads - 1, task -> {
                Thread t = new Thread(task, "backstep-step-" + pool + "-" + worker.incrementAndGet());
                t.setDaemon(true);
                return t;
            });
        } else {
            workers = null;
        }
    }

    /**
     * A step runner for minibatches of {@code batchSize} rows on {@code threads} threads.
     *
     * @param net the network whose live parameters every step reads
     * @param batchSize rows of every minibatch, at least 1
     * @param threads shards and threads, 1..batchSize
     * @return the runner; close it to stop its worker threads
     */
    public static ParallelStep create(ReverseNetwork net, int batchSize, int threads) {
        Require.notNull("net", net);
        Require.atLeast("batchSize", batchSize, 1);
        Require.inRange("threads", threads, 1, batchSize);
        return new ParallelStep(net, batchSize, threads);
    }

    /** @return the number of shards and threads */
    public int threads() {
        return passes.length;
    }

    /** @return the rows of every minibatch */
    public int batchSize() {
        return batchSize;
    }

    /**
     * Runs forward on every shard, calls {@code lossGrad} for it, runs backward, and leaves the
     * summed gradient {@code sum_i dLoss_i/dParameters} in {@link #gradient()}. The sum is split
     * across the threads by ranges of parameters (each element summed in shard order).
     *
     * @param xt the minibatch, batchSize x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @param lossGrad the per-shard loss and output gradient
     * @return the summed loss of the shards (NaN if a shard returned NaN)
     */
    public double run(INDArray xt, int[] steps, LossGradient lossGrad) {
        double loss = forwardBackward(xt, steps, lossGrad);
        onEveryThread(range -> finishRange(range, null, null, null, null));
        return loss;
    }

    /**
     * {@link #run} followed by one optimizer step on the network's live parameters with the
     * optimizer's configured learning rate; the gradient sum and the update of each range of
     * parameters run on the same thread, all threads at once. Same result, bit for bit, as
     * {@code run} then {@code adam.stepInPlace(net.parameterView(), gradient())}.
     *
     * @param xt the minibatch, batchSize x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @param lossGrad the per-shard loss and output gradient
     * @param adam an optimizer of the network's parameter count (its moments are modified)
     * @return the summed loss of the shards
     */
    public double trainInPlace(INDArray xt, int[] steps, LossGradient lossGrad, AdamOptimizer adam) {
        Require.notNull("adam", adam);
        return trainInPlace(xt, steps, lossGrad, adam, adam.learningRate());
    }

    /**
     * {@link #trainInPlace(INDArray, int[], LossGradient, AdamOptimizer)} with the given learning
     * rate for this step.
     *
     * @param xt the minibatch, batchSize x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @param lossGrad the per-shard loss and output gradient
     * @param adam an optimizer of the network's parameter count (its moments are modified)
     * @param learningRate alpha for this step, above 0
     * @return the summed loss of the shards
     */
    public double trainInPlace(INDArray xt, int[] steps, LossGradient lossGrad, AdamOptimizer adam,
            double learningRate) {
        Require.notNull("adam", adam);
        if (adam.size() != net.parameterCount()) {
            throw new IllegalArgumentException("adam has " + adam.size() + " parameters; expected "
                    + net.parameterCount() + ", the parameter count of the network");
        }
        Require.positive("learningRate", learningRate);
        double loss = forwardBackward(xt, steps, lossGrad);
        AdamOptimizer.Step step = adam.begin(learningRate);
        INDArray params = net.parameterView();
        FloatBuffer p = NativeMath.buffer(params);
        FloatBuffer g = NativeMath.buffer(gradients[0]);
        onEveryThread(range -> finishRange(range, adam, step, p.duplicate(), g.duplicate()));
        Reference.reachabilityFence(params);
        return loss;
    }

    /** Forward, loss gradient and backward on every shard; returns the summed loss. */
    private double forwardBackward(INDArray xt, int[] steps, LossGradient lossGrad) {
        if (closed) {
            throw new IllegalStateException("this ParallelStep is closed");
        }
        int rows = net.checkInput(xt, steps);
        if (rows != batchSize) {
            throw new IllegalArgumentException("xt has " + rows + " rows; expected " + batchSize
                    + ", the batch size of this ParallelStep");
        }
        Require.notNull("lossGrad", lossGrad);
        INDArray dense = NativeMath.denseFloat(xt);
        FloatBuffer x = NativeMath.buffer(dense);
        double[] losses = new double[passes.length];
        onEveryThread(shard -> losses[shard] = runShard(shard, x.duplicate(), steps, lossGrad));
        Reference.reachabilityFence(dense);
        double loss = losses[0];
        for (int i = 1; i < losses.length; i++) {
            loss += losses[i];
        }
        return loss;
    }

    /** Runs task(i) for i = 1..threads-1 on the workers and task(0) here; waits; rethrows the first failure. */
    private void onEveryThread(IntConsumer task) {
        int threads = passes.length;
        Future<?>[] futures = new Future<?>[threads];
        for (int i = 1; i < threads; i++) {
            int index = i;
            futures[i] = workers.submit(() -> task.accept(index));
        }
        Throwable failure = null;
        try {
            task.accept(0);
        } catch (RuntimeException | Error e) {
            failure = e;
        }
        for (int i = 1; i < threads; i++) {
            try {
                futures[i].get();
            } catch (ExecutionException e) {
                if (failure == null) {
                    failure = e.getCause();
                }
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                if (failure == null) {
                    failure = e;
                }
            }
        }
        if (failure instanceof RuntimeException r) {
            throw r;
        }
        if (failure instanceof Error err) {
            throw err;
        }
        if (failure != null) {
            throw new IllegalStateException("a shard of the training step failed", failure);
        }
    }

    private double runShard(int shard, FloatBuffer x, int[] steps, LossGradient lossGrad) {
        NativeMath.oneBlasThreadHere();
        ReverseNetwork.Pass pass = passes[shard];
        pass.forwardRows(x, shardOffset[shard], shardRows[shard], steps, pass.outputPointer());
        double loss = lossGrad.compute(shard, shardOffset[shard], pass.output(), dOutputs[shard]);
        pass.backwardRows(dOutputPointers[shard], pass.gradientPointers(gradients[shard]), 0f);
        return loss;
    }

    /** Sums the shard gradients over parameter range {@code range} in shard order, then applies the optimizer step if any. */
    private void finishRange(int range, AdamOptimizer adam, AdamOptimizer.Step step, FloatBuffer p, FloatBuffer g) {
        int from = rangeStart[range];
        int to = rangeStart[range + 1];
        for (int i = 1; i < passes.length; i++) {
            NativeMath.addInPlace(to - from, rangeOf[i][range], rangeOf[0][range]);
        }
        if (adam != null) {
            adam.updateRange(step, p, g, from, to);
        }
    }

    /**
     * The summed gradient of the last {@link #run}, in the parameter layout of
     * {@link ReverseNetwork}. It is this object's buffer: read it (or hand it to
     * {@link AdamOptimizer#stepInPlace}) before the next run, and do not modify it.
     *
     * @return the live gradient buffer, length {@link ReverseNetwork#parameterCount()}
     */
    public INDArray gradient() {
        return gradients[0];
    }

    /** Stops the worker threads; later {@link #run} calls fail. */
    @Override
    public void close() {
        closed = true;
        if (workers != null) {
            workers.shutdownNow();
        }
    }
}
