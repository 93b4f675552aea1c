package org.backstep.internal.net;

import org.backstep.option.StepInput;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/** The data-parallel step: equivalence with a single pass and bit-reproducible training. */
class ParallelStepTest {

    /** Float32 sums in a different order (shards versus one pass). */
    private static final double SHARDING_TOLERANCE = 1e-5;

    private static final NetworkShape SHAPE = new NetworkShape(6, new int[] {16, 16}, 6, 8, StepInput.EVERY_BLOCK);
    private static final int STEPS = 100;
    private static final int BATCH = 21;

    private static INDArray rows(Random random, int rows, int columns) {
        float[] values = new float[rows * columns];
        for (int i = 0; i < values.length; i++) {
            values[i] = (float) random.nextGaussian();
        }
        return Nd4j.createFromArray(values).reshape(rows, columns);
    }

    /** Trains N steps of MSE + AdamW from seed 11 and returns the final parameters. */
    private static float[] train(int threads, int iterations) {
        return train(threads, iterations, false);
    }

    private static float[] train(int threads, int iterations, boolean fused) {
        ReverseNetwork net = ReverseNetwork.create(SHAPE, STEPS, 11);
        AdamOptimizer adam = AdamOptimizer.create(net.parameterCount(), 1e-2, 0.9, 0.999, 1e-8, 1e-4);
        Random random = new Random(5);
        try (ParallelStep step = ParallelStep.create(net, BATCH, threads)) {
            for (int i = 0; i < iterations; i++) {
                INDArray xt = rows(random, BATCH, 6);
                INDArray target = rows(random, BATCH, 6);
                int[] steps = new int[BATCH];
                for (int r = 0; r < BATCH; r++) {
                    steps[r] = 1 + random.nextInt(STEPS);
                }
                double scale = 1.0 / (BATCH * 6);
                ParallelStep.LossGradient mse =
                        (shard, offset, out, d) -> SquaredError.lossAndGradientInto(out, target, offset, scale, d);
                double loss;
                if (fused) {
                    loss = step.trainInPlace(xt, steps, mse, adam);
                } else {
                    loss = step.run(xt, steps, mse);
                    adam.stepInPlace(net.parameterView(), step.gradient());
                }
                assertTrue(Double.isFinite(loss) && loss > 0);
            }
        }
        return net.parameters();
    }

    @Test
    void sameSeedSameParametersForEachThreadCount() {
        // common practice, no source: determinism for a fixed thread count
        assertArrayEquals(train(1, 6), train(1, 6), 0f);
        assertArrayEquals(train(2, 6), train(2, 6), 0f);
        assertArrayEquals(train(3, 6), train(3, 6), 0f);
    }

    @Test
    void fusedOptimizerStepEqualsRunThenStep() {
        // common practice, no source: splitting an elementwise update by ranges changes no bit
        for (int threads : new int[] {1, 2, 3}) {
            assertArrayEquals(train(threads, 4, false), train(threads, 4, true), 0f, threads + " threads");
        }
    }

    @Test
    void shardedGradientEqualsOnePass() {
        ReverseNetwork net = ReverseNetwork.create(SHAPE, STEPS, 12);
        Random random = new Random(6);
        INDArray xt = rows(random, BATCH, 6);
        INDArray target = rows(random, BATCH, 6);
        int[] steps = new int[BATCH];
        for (int r = 0; r < BATCH; r++) {
            steps[r] = 1 + random.nextInt(STEPS);
        }
        double scale = 0.5;
        ReverseNetwork.Pass pass = net.newPass(BATCH);
        INDArray out = pass.forward(xt, steps);
        INDArray dOut = Nd4j.create(DataType.FLOAT, BATCH, 6);
        double expectedLoss = SquaredError.lossAndGradientInto(out, target, 0, scale, dOut);
        INDArray expected = Nd4j.create(DataType.FLOAT, net.parameterCount());
        pass.backward(dOut, expected);
        for (int threads : new int[] {1, 2, 4}) {
            try (ParallelStep step = ParallelStep.create(net, BATCH, threads)) {
                int[] seenRows = new int[1];
                double loss = step.run(xt, steps, (shard, offset, o, d) -> {
                    synchronized (seenRows) {
                        seenRows[0] += (int) o.rows();
                    }
                    return SquaredError.lossAndGradientInto(o, target, offset, scale, d);
                });
                assertEquals(BATCH, seenRows[0], "every row is in exactly one shard");
                // common practice, no source: the gradient of a sum is the sum of the shards' gradients
                assertEquals(expectedLoss, loss, SHARDING_TOLERANCE * Math.abs(expectedLoss));
                float[] e = expected.toFloatVector();
                float[] g = step.gradient().toFloatVector();
                for (int i = 0; i < e.length; i++) {
                    assertEquals(e[i], g[i], SHARDING_TOLERANCE * (1 + Math.abs(e[i])), threads + " threads, parameter " + i);
                }
                // a second run overwrites, it does not accumulate
                step.run(xt, steps, (shard, offset, o, d) -> SquaredError.lossAndGradientInto(o, target, offset, scale, d));
                assertArrayEquals(g, step.gradient().toFloatVector(), 0f);
            }
        }
    }

    @Test
    void reportsFailuresAndRefusesBadInput() {
        ReverseNetwork net = ReverseNetwork.create(SHAPE, STEPS, 12);
        INDArray xt = rows(new Random(1), BATCH, 6);
        int[] steps = new int[BATCH];
        java.util.Arrays.fill(steps, 3);
        try (ParallelStep step = ParallelStep.create(net, BATCH, 2)) {
            IllegalStateException e = assertThrows(IllegalStateException.class, () -> step.run(xt, steps, (s, o, out, d) -> {
                if (s == 1) {
                    throw new IllegalStateException("shard one failed");
                }
                return 0;
            }));
            assertEquals("shard one failed", e.getMessage());
            IllegalArgumentException bad = assertThrows(IllegalArgumentException.class,
                    () -> step.run(rows(new Random(1), BATCH - 1, 6), java.util.Arrays.copyOf(steps, BATCH - 1), (s, o, out, d) -> 0));
            assertTrue(bad.getMessage().contains("20 rows") && bad.getMessage().contains("21"), bad.getMessage());
        }
        assertThrows(IllegalArgumentException.class, () -> ParallelStep.create(net, 4, 5));
    }
}
