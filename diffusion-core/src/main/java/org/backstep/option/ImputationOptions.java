package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to impute missing cells: k draws from the model's conditional distribution given the
 * observed cells, their mean and a central interval of the given coverage, on a strided chain of
 * at most {@code steps} steps with {@code rounds} resampling rounds per step, the observed cells
 * held by {@code method} (see {@link Conditioning} for both methods, their sources and how they
 * were measured). Cost: draws x min(steps, T) x rounds network evaluations per incomplete record.
 *
 * <p>Start from {@code org.backstep.Defaults#imputation()} and change what you need:
 * {@code Defaults.imputation().withDraws(50)}.
 *
 * <p>An interval from k draws covers about {@code level} of the truth when the draws are exact and
 * k &gt;= (1 + level)/(1 - level) (19 at level 0.9), and about (k - 1)/(k + 1) with fewer draws (see
 * {@code org.backstep.report.Imputation#expectedCoverage()}).
 *
 * @param draws k, from 1 to {@link Limits#MAX_DRAWS}
 * @param level the central interval's coverage, in (0, 1)
 * @param steps the most steps of the chain, at least 1 (the model's T if smaller)
 * @param rounds resampling rounds per step, at least 1 (1 is no resampling)
 * @param method how the chain is held to the observed cells
 */
public record ImputationOptions(int draws, double level, int steps, int rounds, Conditioning method) {

    /** Validates every field; the message names the field. */
    public ImputationOptions {
        Limits.checkDraws("draws", draws);
        Require.inOpen("level", level, 0.0, 1.0);
        Require.atLeast("steps", steps, 1);
        Require.atLeast("rounds", rounds, 1);
        Require.notNull("method", method);
    }

    /** @param value k, from 1 to {@link Limits#MAX_DRAWS} @return a copy with this many draws */
    public ImputationOptions withDraws(int value) {
        return new ImputationOptions(value, level, steps, rounds, method);
    }

    /** @param value in (0, 1) @return a copy with this interval coverage */
    public ImputationOptions withLevel(double value) {
        return new ImputationOptions(draws, value, steps, rounds, method);
    }

    /** @param value at least 1 @return a copy with at most this many chain steps */
    public ImputationOptions withSteps(int value) {
        return new ImputationOptions(draws, level, value, rounds, method);
    }

    /** @param value at least 1 @return a copy with this many resampling rounds per step */
    public ImputationOptions withRounds(int value) {
        return new ImputationOptions(draws, level, steps, value, method);
    }

    /** @param value not null @return a copy with this conditioning method */
    public ImputationOptions withMethod(Conditioning value) {
        return new ImputationOptions(draws, level, steps, rounds, value);
    }
}
