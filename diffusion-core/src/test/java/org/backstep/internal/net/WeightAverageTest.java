package org.backstep.internal.net;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.factory.Nd4j;

/** The exponential moving average of the weights. */
class WeightAverageTest {

    /** Float32 rounding of values of order 1. */
    private static final float AVERAGE_TOLERANCE = 1e-6f;

    @Test
    void followsTheRecurrence() {
        WeightAverage average = WeightAverage.of(Nd4j.createFromArray(1f, 2f, -4f), 0.9);
        // avg = decay avg + (1 - decay) theta, values by hand:
        average.updateInPlace(Nd4j.createFromArray(3f, -2f, 6f));
        assertArrayEquals(new float[] {1.2f, 1.6f, -3.0f}, average.average(), AVERAGE_TOLERANCE);
        average.updateInPlace(Nd4j.createFromArray(0f, 0f, 0f));
        assertArrayEquals(new float[] {1.08f, 1.44f, -2.7f}, average.average(), AVERAGE_TOLERANCE);
    }

    @Test
    void aStepDecayOverridesTheConfiguredOne() {
        WeightAverage average = WeightAverage.of(Nd4j.createFromArray(1f, 2f), 0.9);
        // avg = d avg + (1 - d) theta with d = 0.1 for this update, values by hand: 0.1 + 2.7 = 2.8, 0.2 - 0.9 = -0.7
        average.updateInPlace(Nd4j.createFromArray(3f, -1f), 0.1);
        assertArrayEquals(new float[] {2.8f, -0.7f}, average.average(), AVERAGE_TOLERANCE);
        assertThrows(IllegalArgumentException.class, () -> average.updateInPlace(Nd4j.createFromArray(3f, -1f), 1.0));
    }

    @Test
    void longVectorsUseEveryChunk() {
        int n = 10_000;
        float[] start = new float[n];
        float[] next = new float[n];
        for (int i = 0; i < n; i++) {
            start[i] = i;
            next[i] = -i;
        }
        WeightAverage average = WeightAverage.of(Nd4j.createFromArray(start), 0.75);
        average.updateInPlace(Nd4j.createFromArray(next));
        float[] expected = new float[n];
        for (int i = 0; i < n; i++) {
            expected[i] = 0.5f * i; // 0.75 i + 0.25 (-i), by hand
        }
        assertArrayEquals(expected, average.average(), 1e-3f);
    }

    @Test
    void refusesBadArguments() {
        assertThrows(IllegalArgumentException.class, () -> WeightAverage.of(Nd4j.createFromArray(1f), 1.0));
        WeightAverage average = WeightAverage.of(Nd4j.createFromArray(1f, 2f), 0.5);
        assertThrows(IllegalArgumentException.class, () -> average.updateInPlace(Nd4j.createFromArray(1f, 2f, 3f)));
    }
}
