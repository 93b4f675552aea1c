package org.backstep.internal.net;

import org.backstep.option.StepInput;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.Random;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/** Construction, inference, round trips and refusals of {@link ReverseNetwork}. */
class ReverseNetworkTest {

    /** Float32 rounding of sin/cos of arguments up to T = 1000. */
    private static final double EMBEDDING_TOLERANCE = 1e-6;
    /** Different row blocking inside sgemm may reorder float sums. */
    private static final double CHUNKING_TOLERANCE = 1e-5;
    /** Sample variance of 65536 uniform weights against its expectation, relative. */
    private static final double VARIANCE_TOLERANCE = 0.03;

    private static final NetworkShape SMALL = new NetworkShape(5, new int[] {16, 12}, 4, 6, StepInput.EVERY_BLOCK);

    private static INDArray randomRows(int rows, int columns, long seed) {
        Random random = new Random(seed);
        float[] values = new float[rows * columns];
        for (int i = 0; i < values.length; i++) {
            values[i] = (float) random.nextGaussian();
        }
        return Nd4j.createFromArray(values).reshape(rows, columns);
    }

    /** The elements of x in row-major order. */
    static float[] flat(INDArray x) {
        return x.dup('c').reshape(x.length()).toFloatVector();
    }

    private static int[] randomSteps(int rows, int steps, long seed) {
        Random random = new Random(seed);
        int[] result = new int[rows];
        for (int i = 0; i < rows; i++) {
            result[i] = 1 + random.nextInt(steps);
        }
        return result;
    }

    @Test
    void embeddingFollowsVaswaniSection35() {
        ReverseNetwork net = ReverseNetwork.create(new NetworkShape(2, new int[] {3}, 2, 8, StepInput.INPUT), 1000, 1);
        for (int t : new int[] {1, 2, 17, 500, 1000}) {
            float[] e = net.stepEmbedding(t);
            for (int i = 0; i < 4; i++) {
                // PE(pos, 2i) = sin(pos / 10000^(2i/d)), PE(pos, 2i+1) = cos(pos / 10000^(2i/d)): Vaswani et al. 2017, section 3.5
                double angle = t / Math.pow(10000, 2.0 * i / 8);
                assertEquals(Math.sin(angle), e[2 * i], EMBEDDING_TOLERANCE, "sin component " + i + " at t=" + t);
                assertEquals(Math.cos(angle), e[2 * i + 1], EMBEDDING_TOLERANCE, "cos component " + i + " at t=" + t);
            }
        }
    }

    @Test
    void parameterCountAndLayout() {
        // (5 + 6 + 1) * 16 + (16 + 6 + 1) * 12 + (12 + 1) * 4: the layout documented in ReverseNetwork
        assertEquals(192 + 276 + 52, SMALL.parameterCount());
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 9);
        assertEquals(520, net.parameterCount());
        float[] p = net.parameters();
        // bias rows are the last row of each weight matrix and start at zero
        for (int c = 0; c < 16; c++) {
            assertEquals(0f, p[11 * 16 + c]);
        }
        for (int c = 0; c < 12; c++) {
            assertEquals(0f, p[192 + 22 * 12 + c]);
        }
        for (int c = 0; c < 4; c++) {
            assertEquals(0f, p[192 + 276 + 12 * 4 + c]);
        }
    }

    @Test
    void heInitializationHasTheDocumentedSpread() {
        NetworkShape shape = new NetworkShape(224, new int[] {256}, 8, 32, StepInput.INPUT);
        float[] p = ReverseNetwork.create(shape, 10, 5).parameters();
        int fanIn = 224 + 32;
        double bound = Math.sqrt(6.0 / fanIn);
        double sumSquares = 0;
        for (int i = 0; i < fanIn * 256; i++) {
            assertTrue(Math.abs(p[i]) <= bound, "weight " + i + " within the He bound");
            sumSquares += p[i] * (double) p[i];
        }
        // He et al. 2015, eq. 10: Var[w] = 2 / fanIn
        assertEquals(2.0 / fanIn, sumSquares / (fanIn * 256), VARIANCE_TOLERANCE * 2.0 / fanIn);
    }

    @Test
    void sameSeedSameParameters() {
        float[] a = ReverseNetwork.create(SMALL, 50, 42).parameters();
        float[] b = ReverseNetwork.create(SMALL, 50, 42).parameters();
        float[] c = ReverseNetwork.create(SMALL, 50, 43).parameters();
        assertArrayEquals(a, b, 0f); // common practice, no source: determinism from the seed
        assertFalse(Arrays.equals(a, c));
    }

    @Test
    void predictEqualsPassForward() {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 3);
        INDArray xt = randomRows(20, 5, 1);
        int[] steps = randomSteps(20, 50, 2);
        INDArray fromPass = net.newPass(20).forward(xt, steps).dup();
        INDArray fromPredict = net.predict(xt, steps);
        // common practice, no source: the same code path gives the same bits
        assertArrayEquals(flat(fromPass), flat(fromPredict), 0f);
        assertArrayEquals(new long[] {20, 4}, fromPredict.shape());
    }

    @Test
    void predictChunksLargeBatchesAndWritesAnyLayout() {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 3);
        int rows = 2 * ReverseNetwork.PREDICT_ROWS + 37;
        INDArray xt = randomRows(rows, 5, 4);
        int[] steps = randomSteps(rows, 50, 5);
        float[] fromPass = flat(net.newPass(rows).forward(xt, steps));
        float[] chunked = flat(net.predict(xt, steps));
        assertArrayEquals(fromPass, chunked, (float) CHUNKING_TOLERANCE);
        INDArray columnMajor = Nd4j.create(DataType.FLOAT, new long[] {rows, 4}, 'f');
        net.predict(xt.dup('f'), steps, columnMajor);
        assertArrayEquals(chunked, flat(columnMajor), 0f);
        INDArray doubles = xt.castTo(DataType.DOUBLE);
        assertArrayEquals(chunked, flat(net.predict(doubles, steps)), 0f);
    }

    @Test
    void predictIsThreadSafe() throws InterruptedException {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 3);
        INDArray xt = randomRows(300, 5, 6);
        int[] steps = randomSteps(300, 50, 7);
        float[] expected = flat(net.predict(xt, steps));
        float[][] results = new float[4][];
        Thread[] threads = new Thread[4];
        for (int i = 0; i < 4; i++) {
            int index = i;
            threads[i] = new Thread(() -> {
                float[] last = null;
                for (int k = 0; k < 20; k++) {
                    last = flat(net.predict(xt, steps));
                }
                results[index] = last;
            });
            threads[i].start();
        }
        for (Thread t : threads) {
            t.join();
        }
        for (float[] r : results) {
            assertArrayEquals(expected, r, 0f);
        }
    }

    @Test
    void fromParametersRoundTrip() {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 8);
        ReverseNetwork copy = ReverseNetwork.fromParameters(SMALL, 50, net.parameters());
        assertArrayEquals(net.parameters(), copy.parameters(), 0f);
        assertEquals(SMALL, copy.shape());
        assertEquals(50, copy.steps());
        INDArray xt = randomRows(9, 5, 10);
        int[] steps = randomSteps(9, 50, 11);
        assertArrayEquals(flat(net.predict(xt, steps)), flat(copy.predict(xt, steps)), 0f);
        // the copy is independent of the array it came from and of the original's live vector
        net.parameterView().addi(1f);
        assertFalse(Arrays.equals(net.parameters(), copy.parameters()));
    }

    @Test
    void parameterViewIsLive() {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 8);
        INDArray xt = randomRows(3, 5, 12);
        int[] steps = {1, 2, 3};
        float[] before = flat(net.predict(xt, steps));
        net.parameterView().muli(0f);
        float[] after = flat(net.predict(xt, steps));
        assertFalse(Arrays.equals(before, after));
        assertArrayEquals(new float[12], after, 0f); // all weights and biases zero give zero output
    }

    @Test
    void refusesBadInputNamingShapes() {
        ReverseNetwork net = ReverseNetwork.create(SMALL, 50, 1);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> net.predict(randomRows(4, 7, 1), new int[] {1, 2, 3, 4}));
        assertTrue(e.getMessage().contains("[4, 7]") && e.getMessage().contains("5"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> net.predict(randomRows(4, 5, 1), new int[] {1, 2, 3}));
        assertTrue(e.getMessage().contains("length 3") && e.getMessage().contains("[4, 5]"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> net.predict(randomRows(3, 5, 1), new int[] {1, 0, 3}));
        assertTrue(e.getMessage().contains("steps[1] is 0") && e.getMessage().contains("1 to 50"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> net.predict(randomRows(3, 5, 1), new int[] {1, 51, 3}));
        assertTrue(e.getMessage().contains("steps[1] is 51"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class,
                () -> net.predict(randomRows(3, 5, 1), new int[] {1, 2, 3}, Nd4j.create(DataType.FLOAT, 3, 5)));
        assertTrue(e.getMessage().contains("[3, 5]") && e.getMessage().contains("[3, 4]"), e.getMessage());

        ReverseNetwork.Pass pass = net.newPass(3);
        assertThrows(IllegalStateException.class,
                () -> pass.backward(Nd4j.create(DataType.FLOAT, 3, 4), Nd4j.create(DataType.FLOAT, 520)));
        e = assertThrows(IllegalArgumentException.class, () -> pass.forward(randomRows(4, 5, 1), new int[] {1, 2, 3, 4}));
        assertTrue(e.getMessage().contains("[4, 5]") && e.getMessage().contains("[3, 5]"), e.getMessage());
        pass.forward(randomRows(3, 5, 1), new int[] {1, 2, 3});
        e = assertThrows(IllegalArgumentException.class,
                () -> pass.backward(Nd4j.create(DataType.FLOAT, 3, 5), Nd4j.create(DataType.FLOAT, 520)));
        assertTrue(e.getMessage().contains("[3, 5]") && e.getMessage().contains("[3, 4]"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class,
                () -> pass.backward(Nd4j.create(DataType.FLOAT, 3, 4), Nd4j.create(DataType.FLOAT, 519)));
        assertTrue(e.getMessage().contains("[519]") && e.getMessage().contains("520"), e.getMessage());

        e = assertThrows(IllegalArgumentException.class, () -> ReverseNetwork.fromParameters(SMALL, 50, new float[7]));
        assertTrue(e.getMessage().contains("length 7") && e.getMessage().contains("520"), e.getMessage());
        float[] nan = new float[520];
        nan[3] = Float.NaN;
        e = assertThrows(IllegalArgumentException.class, () -> ReverseNetwork.fromParameters(SMALL, 50, nan));
        assertTrue(e.getMessage().contains("parameters[3] is NaN"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> ReverseNetwork.create(SMALL, 0, 1));
    }

    @Test
    void shapeIsValidatedAndCopied() {
        int[] hidden = {8, 8};
        NetworkShape shape = new NetworkShape(3, hidden, 2, 4, StepInput.INPUT);
        hidden[0] = 99;
        assertArrayEquals(new int[] {8, 8}, shape.hidden());
        shape.hidden()[1] = 99;
        assertArrayEquals(new int[] {8, 8}, shape.hidden());
        assertEquals(new NetworkShape(3, new int[] {8, 8}, 2, 4, StepInput.INPUT), shape);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> new NetworkShape(3, new int[] {8}, 2, 5, StepInput.INPUT));
        assertTrue(e.getMessage().contains("embeddingSize is 5"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class,
                () -> new NetworkShape(3, new int[] {8, 0}, 2, 4, StepInput.INPUT));
        assertTrue(e.getMessage().contains("hidden[1] is 0"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> new NetworkShape(0, new int[] {8}, 2, 4, StepInput.INPUT));
        assertThrows(IllegalArgumentException.class, () -> new NetworkShape(3, new int[] {8}, 2, 4, null));
    }
}
