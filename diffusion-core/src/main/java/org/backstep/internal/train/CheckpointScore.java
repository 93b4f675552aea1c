package org.backstep.internal.train;

/**
 * What the trainer chooses the kept weights by, on the checkpoint rows (the mean per row, nats, in
 * the standardized space); every evaluation of a run draws the same numbers (the seed is the fit's
 * seed + 1), so that two evaluations differ by their weights, not their draws (common random
 * numbers).
 */
public enum CheckpointScore {
    /**
     * The Monte Carlo bound: L_T and L_0 exactly, {@code checkpointDraws} steps drawn from 2..T
     * ({@link org.backstep.internal.chain.BoundEvaluator#monteCarlo}); checkpointDraws + 1 network
     * evaluations per row.
     */
    SAMPLED,
    /**
     * The exact bound, one draw of x_t per term, with the control variates of the steady bound
     * (the linearized continuous terms, the binary cells' one-flip expansion) on the first tenth
     * of the chain, where 84 to 96% of a record's noise lies (diffusion-bench/results/score-variance.txt:
     * the share of t &lt;= 10 of T = 100 on iris, breast_cancer, diabetes and digits_binary);
     * T + (T/10)(2 Dc + 1 + D_b) network evaluations per row.
     */
    STEADY
}
