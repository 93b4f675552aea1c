package org.backstep.option;

/**
 * Where the sinusoidal embedding of the diffusion step enters the {@link ReverseNetwork}.
 */
public enum StepInput {
    /** The embedding is concatenated to the network input only: the first layer sees {@code [x_t, emb(t)]}. */
    INPUT,
    /**
     * The embedding is concatenated to the input of every hidden (Linear + SiLU) block: the first
     * block sees {@code [x_t, emb(t)]} and block {@code l > 1} sees {@code [h_(l-1), emb(t)]}. The
     * output Linear sees {@code h_L} only.
     */
    EVERY_BLOCK
}
