package org.backstep.bench;

import java.util.Random;
import java.util.concurrent.TimeUnit;

import org.backstep.internal.net.AdamOptimizer;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ParallelStep;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.internal.net.SquaredError;
import org.backstep.option.StepInput;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.TearDown;
import org.openjdk.jmh.annotations.Warmup;

/**
 * One full training step of the reverse network: forward, mean-squared-error gradient, backward
 * (data-parallel over {@code threads} Java threads, one BLAS thread each) and an Adam update (split
 * across the same threads), for a batch of 256 rows. Throughput is in steps per second.
 *
 * <p>Shapes: {@code columns -> 3 x 256 SiLU -> columns} with a 32-wide step embedding at the input
 * ({@code columns} = 8, 64, 256), and the reference shape {@code 128 -> 3 x 256 -> 64}
 * ({@code columns} = reference). GFLOP/s for a shape is
 * {@code steps/s * 2 * batch * sum_j fanIn_j * fanOut_j * 3 / 1e9} (forward and twice that for
 * backward); see {@link #flopsPerStep}.
 */
@State(Scope.Benchmark)
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
@Warmup(iterations = 3, time = 2)
@Measurement(iterations = 5, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xmx2g", "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn"})
public class TrainingStepBenchmark {

    /** Rows of each minibatch. */
    static final int BATCH = 256;
    /** Width of each of the three hidden layers. */
    static final int WIDTH = 256;
    /** Size of the sinusoidal step embedding. */
    static final int EMBEDDING = 32;
    /** T of the training schedule. */
    static final int STEPS = 1000;

    /** Input and output columns, or "reference" for the shape 128 -> 3 x 256 -> 64. */
    @Param({"8", "64", "256", "reference"})
    public String columns;

    /** Java threads (batch shards) of the step. */
    @Param({"1", "2"})
    public int threads;

    private ReverseNetwork net;
    private ParallelStep step;
    private AdamOptimizer adam;
    private INDArray xt;
    private INDArray target;
    private int[] stepOfRow;
    private double scale;

    /** The shape of a benchmark case. */
    static NetworkShape shapeFor(String columns) {
        boolean reference = "reference".equals(columns);
        int in = reference ? 128 : Integer.parseInt(columns);
        int out = reference ? 64 : in;
        return new NetworkShape(in, new int[] {WIDTH, WIDTH, WIDTH}, out, EMBEDDING, StepInput.INPUT);
    }

    /** Multiply-adds of forward and backward, times 2 flops each: 2 * batch * sum_j fanIn_j fanOut_j * 3. */
    static double flopsPerStep(NetworkShape shape) {
        int[] hidden = shape.hidden();
        double sum = 0;
        int previous = shape.inputs() + shape.embeddingSize();
        for (int width : hidden) {
            sum += (double) previous * width;
            previous = width;
        }
        sum += (double) previous * shape.outputs();
        return 2.0 * BATCH * sum * 3;
    }

    /** Builds a seeded network, a seeded minibatch and its target. */
    @Setup(Level.Trial)
    public void setUp() {
        NetworkShape shape = shapeFor(columns);
        net = ReverseNetwork.create(shape, STEPS, 2024);
        step = ParallelStep.create(net, BATCH, threads);
        adam = AdamOptimizer.create(net.parameterCount(), 1e-4, 0.9, 0.999, 1e-8, 0);
        Random random = new Random(17);
        float[] x = new float[BATCH * shape.inputs()];
        float[] y = new float[BATCH * shape.outputs()];
        for (int i = 0; i < x.length; i++) {
            x[i] = (float) random.nextGaussian();
        }
        for (int i = 0; i < y.length; i++) {
            y[i] = (float) random.nextGaussian();
        }
        xt = Nd4j.createFromArray(x).reshape(BATCH, shape.inputs());
        target = Nd4j.createFromArray(y).reshape(BATCH, shape.outputs());
        stepOfRow = new int[BATCH];
        for (int r = 0; r < BATCH; r++) {
            stepOfRow[r] = 1 + random.nextInt(STEPS);
        }
        scale = 1.0 / ((double) BATCH * shape.outputs());
    }

    /** Stops the worker threads. */
    @TearDown(Level.Trial)
    public void tearDown() {
        step.close();
    }

    /**
     * One step: forward, MSE gradient, backward, Adam ({@link ParallelStep#trainInPlace}).
     *
     * @return the minibatch loss
     */
    @Benchmark
    public double trainingStep() {
        return step.trainInPlace(xt, stepOfRow,
                (shard, rowOffset, output, dOutputInto) -> SquaredError.lossAndGradientInto(output, target,
                        rowOffset, scale, dOutputInto),
                adam);
    }
}
