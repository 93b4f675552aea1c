package org.backstep.posterior;

import java.util.Arrays;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;
import org.nd4j.linalg.indexing.BooleanIndexing;
import org.nd4j.linalg.indexing.conditions.Conditions;
import org.nd4j.linalg.ops.transforms.Transforms;

/**
 * Checks and small helpers shared by the batched forms: a batch is a rank-2 float32 or float64
 * array with one record per row, and a step array holds one step per row.
 */
final class Rows {

    private Rows() {
    }

    /** @return the shape as text, e.g. "[4, 3]" */
    static String shape(INDArray a) {
        return Arrays.toString(a.shape());
    }

    /**
     * Checks that {@code a} is a non-empty rank-2 float32 or float64 array.
     *
     * @param name the parameter's name, for the message
     * @param a the array (not modified)
     * @throws IllegalArgumentException naming the parameter, its shape or type, and what was expected
     */
    static void requireBatch(String name, INDArray a) {
        if (a == null) {
            throw new IllegalArgumentException(name + " is null; expected a rows x columns array");
        }
        if (a.rank() != 2 || a.rows() < 1 || a.columns() < 1) {
            throw new IllegalArgumentException(name + " has shape " + shape(a)
                    + "; expected a rows x columns matrix with at least one row and one column");
        }
        DataType type = a.dataType();
        if (type != DataType.FLOAT && type != DataType.DOUBLE) {
            throw new IllegalArgumentException(name + " has data type " + type + "; expected FLOAT or DOUBLE");
        }
    }

    /**
     * Checks that {@code b} is a batch with the shape and type of the batch {@code a}.
     *
     * @throws IllegalArgumentException carrying both shapes (or both types)
     */
    static void requireSameShape(String nameA, INDArray a, String nameB, INDArray b) {
        requireBatch(nameB, b);
        if (!Arrays.equals(a.shape(), b.shape())) {
            throw new IllegalArgumentException(nameA + " has shape " + shape(a) + " but " + nameB
                    + " has shape " + shape(b) + "; expected the same shape");
        }
        requireSameType(nameA, a, nameB, b);
    }

    /** @throws IllegalArgumentException if the two arrays differ in data type, naming both */
    static void requireSameType(String nameA, INDArray a, String nameB, INDArray b) {
        if (a.dataType() != b.dataType()) {
            throw new IllegalArgumentException(nameA + " has data type " + a.dataType() + " but " + nameB
                    + " has " + b.dataType() + "; expected the same data type");
        }
    }

    /**
     * Checks that a log-variance is either a column (rows x 1, one value per row) or has the full
     * shape of {@code mean}.
     *
     * @return true if it is a column to broadcast along the row, false if it has the full shape
     */
    static boolean requireColumnOrFull(String meanName, INDArray mean, String name, INDArray logVar) {
        requireBatch(name, logVar);
        requireSameType(meanName, mean, name, logVar);
        if (logVar.rows() == mean.rows() && logVar.columns() == 1) {
            return true;
        }
        if (Arrays.equals(logVar.shape(), mean.shape())) {
            return false;
        }
        throw new IllegalArgumentException(name + " has shape " + shape(logVar) + " but " + meanName
                + " has shape " + shape(mean) + "; expected [" + mean.rows() + ", 1] or " + shape(mean));
    }

    /**
     * Checks one step per row, each in {@code lo..steps}.
     *
     * @param t the steps (not modified)
     * @param rows the number of rows of the batch
     * @param batchName the batch's name, for the message
     * @param lo the smallest allowed step (1, or 0 where the marginal at t = 0 is meant)
     * @param steps T
     */
    static void requireSteps(int[] t, long rows, String batchName, int lo, int steps) {
        if (t == null) {
            throw new IllegalArgumentException("t is null; expected one step per row of " + batchName);
        }
        if (t.length != rows) {
            throw new IllegalArgumentException("t has " + t.length + " entries but " + batchName + " has "
                    + rows + " rows; expected one step per row");
        }
        for (int i = 0; i < t.length; i++) {
            if (t[i] < lo || t[i] > steps) {
                throw new IllegalArgumentException("t[" + i + "] is " + t[i] + "; expected a step from "
                        + lo + " to " + steps);
            }
        }
    }

    /**
     * A rows x 1 column holding {@code perStep[t[i]]} in row i.
     *
     * @param perStep a per-step table indexed by step (not modified)
     * @param t one step per row (not modified), already checked
     * @param type the data type of the column
     * @return a new column vector
     */
    static INDArray column(double[] perStep, int[] t, DataType type) {
        double[] values = new double[t.length];
        for (int i = 0; i < t.length; i++) {
            values[i] = perStep[t[i]];
        }
        return Nd4j.create(values, new long[] {t.length, 1}, type);
    }

    /**
     * Checks that every entry of a batch lies in [0, 1] (a probability), refusing NaN.
     *
     * @throws IllegalArgumentException naming the parameter and the offending extreme
     */
    static void requireProbabilities(String name, INDArray a) {
        boolean nan = hasNaN(a);
        double lo = a.minNumber().doubleValue();
        double hi = a.maxNumber().doubleValue();
        if (nan || !(lo >= 0.0 && hi <= 1.0)) {
            throw new IllegalArgumentException(name + " holds values from " + lo + " to " + hi
                    + (nan ? " and NaN" : "") + "; expected probabilities in [0, 1]");
        }
    }

    /**
     * Checks that every entry of a batch is exactly 0 or 1 (|x - 1/2| = 1/2 everywhere).
     *
     * @throws IllegalArgumentException naming the parameter
     */
    static void requireBits(String name, INDArray a) {
        INDArray distance = Transforms.abs(a.sub(0.5), false);
        double lo = distance.minNumber().doubleValue();
        double hi = distance.maxNumber().doubleValue();
        if (lo != 0.5 || hi != 0.5 || hasNaN(a)) {
            throw new IllegalArgumentException(name + " holds a value other than 0 or 1"
                    + " (|x - 1/2| ranges from " + lo + " to " + hi + "); expected bits 0 and 1");
        }
    }

    private static boolean hasNaN(INDArray a) {
        return BooleanIndexing.or(a, Conditions.isNan());
    }
}
