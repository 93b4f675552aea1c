package org.backstep.internal.net;

import org.backstep.option.Limits;
import org.backstep.option.StepInput;
import java.util.Arrays;

import org.backstep.schedule.Require;

/**
 * The architecture of a {@link ReverseNetwork}: {@code inputs} columns of x_t, hidden widths
 * h_1..h_L (each a Linear layer followed by SiLU), {@code outputs} columns out of the final Linear
 * layer (no activation), the even size E of the sinusoidal step embedding, and where that embedding
 * enters ({@link StepInput}).
 *
 * <p>Layer j (1-based, j = 1..L+1, the last one being the output layer) maps
 * {@code [previous units, embedding if it enters here, 1]} to its units; see
 * {@link ReverseNetwork} for the parameter layout. {@code hidden} may be empty (a single Linear
 * layer).
 *
 * @param inputs columns of x_t, at least 1
 * @param hidden hidden widths h_1..h_L, each at least 1 (copied in and out)
 * @param outputs columns of the output, at least 1
 * @param embeddingSize E, even and at least 2
 * @param stepInput where the step embedding enters
 */
public record NetworkShape(int inputs, int[] hidden, int outputs, int embeddingSize, StepInput stepInput) {

    /** Validates every field and copies {@code hidden}. */
    public NetworkShape {
        Require.atLeast("inputs", inputs, 1);
        Require.notNull("hidden", hidden);
        hidden = hidden.clone();
        for (int l = 0; l < hidden.length; l++) {
            Require.atLeast("hidden[" + l + "]", hidden[l], 1);
        }
        Require.atLeast("outputs", outputs, 1);
        if (embeddingSize < 2 || embeddingSize % 2 != 0) {
            throw new IllegalArgumentException(
                    "embeddingSize is " + embeddingSize + "; expected an even number of at least 2");
        }
        Require.notNull("stepInput", stepInput);
        long count = parameterCount(inputs, hidden, outputs, embeddingSize, stepInput);
        if (count > Limits.MAX_PARAMETERS) {
            throw new IllegalArgumentException("the network " + Arrays.toString(hidden) + " over " + inputs + " inputs and "
                    + outputs + " outputs has " + count + " parameters; the limit is " + Limits.MAX_PARAMETERS
                    + " (Limits.MAX_PARAMETERS)");
        }
    }

    /** @return a copy of the hidden widths h_1..h_L */
    @Override
    public int[] hidden() {
        return hidden.clone();
    }

    /** @return the number of Linear layers, L + 1 */
    public int layerCount() {
        return hidden.length + 1;
    }

    /**
     * The units that feed layer {@code j} (0-based): x_t's columns for j = 0, else h_j.
     *
     * @param j layer index, 0..L
     * @return the number of units of the previous layer (or of x_t)
     */
    int unitsIn(int j) {
        return j == 0 ? inputs : hidden[j - 1];
    }

    /** @return the units that layer j (0-based) produces: h_(j+1), or {@code outputs} for the last */
    int unitsOut(int j) {
        return j == hidden.length ? outputs : hidden[j];
    }

    /** @return E if the embedding is concatenated to the input of layer j (0-based), else 0 */
    int embeddingIn(int j) {
        if (j == 0) {
            return embeddingSize;
        }
        return stepInput == StepInput.EVERY_BLOCK && j < hidden.length ? embeddingSize : 0;
    }

    /** @return rows of layer j's weight matrix: units in + embedding in + 1 (the bias row) */
    int weightRows(int j) {
        return unitsIn(j) + embeddingIn(j) + 1;
    }

    /**
     * The number of parameters: {@code sum_j (unitsIn_j + embeddingIn_j + 1) * unitsOut_j}.
     *
     * @return the parameter count
     */
    public long parameterCount() {
        return parameterCount(inputs, hidden, outputs, embeddingSize, stepInput);
    }

    /** The count in long arithmetic, before the record exists (each term is below 2^63: ints times ints). */
    private static long parameterCount(int inputs, int[] hidden, int outputs, int embeddingSize, StepInput stepInput) {
        long total = 0;
        for (int j = 0; j <= hidden.length; j++) {
            long in = j == 0 ? inputs : hidden[j - 1];
            long embedding = j == 0 || (stepInput == StepInput.EVERY_BLOCK && j < hidden.length) ? embeddingSize : 0;
            long out = j == hidden.length ? outputs : hidden[j];
            total += (in + embedding + 1) * out;
        }
        return total;
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof NetworkShape s && s.inputs == inputs && Arrays.equals(s.hidden, hidden)
                && s.outputs == outputs && s.embeddingSize == embeddingSize && s.stepInput == stepInput;
    }

    @Override
    public int hashCode() {
        return ((inputs * 31 + Arrays.hashCode(hidden)) * 31 + outputs) * 31 * 31
                + embeddingSize * 31 + stepInput.hashCode();
    }

    @Override
    public String toString() {
        return "NetworkShape[inputs=" + inputs + ", hidden=" + Arrays.toString(hidden) + ", outputs=" + outputs
                + ", embeddingSize=" + embeddingSize + ", stepInput=" + stepInput + "]";
    }
}
