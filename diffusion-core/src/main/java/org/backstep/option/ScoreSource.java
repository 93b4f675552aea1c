package org.backstep.option;

/**
 * What a screen scores each record by (see {@link ScreeningOptions}).
 */
public enum ScoreSource {
    /**
     * The negative variational bound (Ho et al. 2020, eq. 5) by {@link ScreeningOptions#bound()}, with
     * common random numbers: a fixed function of the record and the seed, an upper bound on the
     * chain's negative log-likelihood.
     */
    BOUND,
    /**
     * The exact negative log-likelihood of the probability-flow ODE (Song et al. 2021, section 4.3)
     * by {@link ScreeningOptions#flow()}: no draws, the same figure for the same record whatever the
     * seed, at about 150 to 200 times the cost of an exact bound; continuous columns only.
     */
    FLOW
}
