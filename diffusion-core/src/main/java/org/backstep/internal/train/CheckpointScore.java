package org.backstep.internal.train;

import org.backstep.internal.chain.TermDraws;

/**
 * What the trainer chooses the kept weights by, on the checkpoint rows (the mean per row, nats, in
 * the standardized space); every evaluation of a run draws the same numbers (the seed is the fit's
 * seed + 1), so that two evaluations differ by their weights, not their draws (common random
 * numbers).
 */
public enum CheckpointScore {
    /**
     * The Monte Carlo bound (the default before issue 11 item 1; kept for the measurement,
     * diffusion-bench's CheckpointChoice): L_T and L_0 exactly, {@code checkpointDraws} steps drawn from 2..T
     * ({@link org.backstep.internal.chain.BoundEvaluator#monteCarlo}); checkpointDraws + 1 network
     * evaluations per row.
     */
    SAMPLED,
    /**
     * The default: the exact bound, K = {@code checkpointDraws} draws of x_t per term (shifted Sobol
     * points when K &gt; 1, one independent draw when K = 1), with the control variates of the steady
     * bound (the linearized continuous terms, the binary cells' one-flip expansion) on the first
     * tenth of the chain, where 84 to 96% of a record's noise lies
     * (diffusion-bench/results/score-variance.txt: the share of t &lt;= 10 of T = 100 on iris,
     * breast_cancer, diabetes and digits_binary); K T + (T/10)(2 Dc + 1 + D_b) network evaluations
     * per row. A fixed plan, not the model's profile ({@code BoundOptions#steady}): the weights change
     * at every evaluation, and a profile per evaluation would cost more than the evaluation.
     */
    STEADY;

    /**
     * @param k draws per term, at least 1
     * @param steps the chain's steps T
     * @return the draws of {@link #STEADY}: K per term, the control variates on steps 1..max(1, T/10)
     */
    static TermDraws steadyDraws(int k, int steps) {
        return TermDraws.perTerm(k, steps).linearizedUpTo(Math.max(1, steps / 10));
    }
}
