package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to estimate, for a record x and each of its columns j, the conditional surprisal
 * -log p(x_j | x_-j) (nats, model space): {@code draws} draws of cell j given the other cells, by
 * imputation on a strided chain of at most {@code steps} steps with {@code rounds} resampling
 * rounds per step (replacement, Lugmayr et al. 2022, algorithm 1), then a density estimate at the
 * observed value; see {@code org.backstep.report.Surprisal} for the estimator and its bias.
 * Cost: columns x draws x min(steps, T) x rounds network evaluations per record.
 *
 * <p>Start from {@code org.backstep.Defaults#surprisal()}. In a screen, {@code draws} 0 computes
 * no surprisal.
 *
 * @param draws draws per cell, at least 0 (0: none; otherwise at least {@link #FEWEST_DRAWS})
 * @param steps the most steps of the chain, at least 1 (the model's T if smaller)
 * @param rounds resampling rounds per step, at least 1
 */
public record SurprisalOptions(int draws, int steps, int rounds) {

    /**
     * The fewest draws a density estimate is made from: 16, below which a kernel density estimate
     * of one cell is mostly noise (common practice, no source).
     */
    public static final int FEWEST_DRAWS = 16;

    /** Validates every field; the message names the field. */
    public SurprisalOptions {
        Require.atLeast("draws", draws, 0);
        if (draws > 0) {
            Require.atLeast("draws", draws, FEWEST_DRAWS);
        }
        Require.atLeast("steps", steps, 1);
        Require.atLeast("rounds", rounds, 1);
    }

    /** @return no surprisal (in a screen: the flagged records get no per-column figures) */
    public static SurprisalOptions none() {
        return new SurprisalOptions(0, 1, 1);
    }

    /** @param value 0 or at least {@link #FEWEST_DRAWS} @return a copy with this many draws per cell */
    public SurprisalOptions withDraws(int value) {
        return new SurprisalOptions(value, steps, rounds);
    }

    /** @param value at least 1 @return a copy with at most this many chain steps */
    public SurprisalOptions withSteps(int value) {
        return new SurprisalOptions(draws, value, rounds);
    }

    /** @param value at least 1 @return a copy with this many resampling rounds per step */
    public SurprisalOptions withRounds(int value) {
        return new SurprisalOptions(draws, steps, value);
    }
}
