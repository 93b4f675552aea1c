package org.backstep.internal.net;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/** The scaled squared error and its gradient on a worked example. */
class SquaredErrorTest {

    /** Exact small numbers in float32 and double. */
    private static final double EXACT = 1e-12;

    @Test
    void workedExampleWithRowOffset() {
        INDArray output = Nd4j.createFromArray(new float[][] {{1, 2}, {3, 4}});
        INDArray target = Nd4j.createFromArray(new float[][] {{9, 9}, {1, 1}, {2, 2}});
        INDArray d = Nd4j.create(DataType.FLOAT, 2, 2);
        double loss = SquaredError.lossAndGradientInto(output, target, 1, 0.5, d);
        // differences (0, 1; 1, 2): loss = 0.5 (0 + 1 + 1 + 4) = 3, gradient = 2 * 0.5 * difference (by hand)
        assertEquals(3.0, loss, EXACT);
        assertArrayEquals(new float[] {0, 1, 1, 2}, d.reshape(4).toFloatVector(), 0f);
    }

    @Test
    void refusesMismatchedShapes() {
        INDArray output = Nd4j.create(DataType.FLOAT, 2, 2);
        assertThrows(IllegalArgumentException.class, () -> SquaredError.lossAndGradientInto(output,
                Nd4j.create(DataType.FLOAT, 2, 2), 1, 1.0, Nd4j.create(DataType.FLOAT, 2, 2)));
        assertThrows(IllegalArgumentException.class, () -> SquaredError.lossAndGradientInto(output,
                Nd4j.create(DataType.FLOAT, 2, 2), 0, 1.0, Nd4j.create(DataType.FLOAT, 2, 3)));
    }
}
