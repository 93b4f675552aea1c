package org.backstep.option;

/**
 * The objective of training. Binary columns always contribute their bound terms.
 */
public enum TrainingLoss {
    /** The simple loss E |epsilon - epsilon-hat|^2 (Ho et al. 2020, eq. 14). */
    SIMPLE,
    /** The variational bound, one step drawn per row: T L_{t-1} (Ho et al. 2020, eq. 5). */
    BOUND,
    /**
     * L_simple + lambda L_vlb with lambda = 0.001, the bound part reaching only the learned
     * variances (Nichol &amp; Dhariwal 2021, section 3.1). Requires {@link ReverseVariance#LEARNED}.
     */
    HYBRID
}
