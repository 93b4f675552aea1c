package org.backstep.net;

import java.lang.ref.Reference;
import java.nio.FloatBuffer;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;

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
     * summed gradient {@code sum_i dLoss_i/dParameters} in {@link #gradient()}.
     *
     * @param xt the minibatch, batchSize x inputs (not modified)
     * @param steps the step t (1..T) of each row (not modified)
     * @param lossGrad the per-shard loss and output gradient
     * @return the summed loss of the shards (NaN if a shard returned NaN)
     */
    public double run(INDArray xt, int[] steps, LossGradient lossGrad) {
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
        int threads = passes.length;
        double[] losses = new double[threads];
        Future<?>[] futures = new Future<?>[threads];
        for (int i = 1; i < threads; i++) {
            int shard = i;
            futures[i] = workers.submit(() -> {
                losses[shard] = runShard(shard, x.duplicate(), steps, lossGrad);
            });
        }
        Throwable failure = null;
        try {
            losses[0] = runShard(0, x, steps, lossGrad);
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
        Reference.reachabilityFence(dense);
        if (failure instanceof RuntimeException r) {
            throw r;
        }
        if (failure instanceof Error err) {
            throw err;
        }
        if (failure != null) {
            throw new IllegalStateException("a shard of the training step failed", failure);
        }
        int count = (int) net.parameterCount();
        double loss = losses[0];
        for (int i = 1; i < threads; i++) {
            NativeMath.addInPlace(count, gradientBase[i], gradientBase[0]);
            loss += losses[i];
        }
        return loss;
    }

    private double runShard(int shard, FloatBuffer x, int[] steps, LossGradient lossGrad) {
        NativeMath.oneBlasThreadHere();
        ReverseNetwork.Pass pass = passes[shard];
        pass.forwardRows(x, shardOffset[shard], shardRows[shard], steps, pass.outputPointer());
        double loss = lossGrad.compute(shard, shardOffset[shard], pass.output(), dOutputs[shard]);
        pass.backwardRows(dOutputPointers[shard], pass.gradientPointers(gradients[shard]), 0f);
        return loss;
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
