package org.backstep.option;

import org.backstep.schedule.Require;

import java.util.Arrays;

/**
 * How to clean readings observed with additive Gaussian noise of known standard deviation: the
 * noise of each column in original units, the number of posterior draws, and the most steps of the
 * reverse chain (see {@code org.backstep.DiffusionModel#denoise} for the method and its source).
 *
 * <p>Start from {@code org.backstep.Defaults#denoising(double...)}:
 * {@code Defaults.denoising(0.5, 0.5, 0, 0).withDraws(50)}.
 *
 * @param noiseSd the noise standard deviation of each column in original units, in the table's
 *     column order: above 0 and finite for every diffused continuous column (checked by the model,
 *     which knows the columns), other entries ignored; copied in and out
 * @param draws k, from 1 to {@link Limits#MAX_DRAWS}
 * @param steps the most steps of the chain, at least 1
 */
public record DenoisingOptions(double[] noiseSd, int draws, int steps) {

    /** Validates and copies the array. */
    public DenoisingOptions {
        Require.notNull("noiseSd", noiseSd);
        Require.atLeast("number of noiseSd entries", noiseSd.length, 1);
        noiseSd = noiseSd.clone();
        Limits.checkDraws("draws", draws);
        Require.atLeast("steps", steps, 1);
    }

    /** @return a copy of the per-column noise standard deviations */
    @Override
    public double[] noiseSd() {
        return noiseSd.clone();
    }

    /** @param value k, from 1 to {@link Limits#MAX_DRAWS} @return a copy with this many draws */
    public DenoisingOptions withDraws(int value) {
        return new DenoisingOptions(noiseSd, value, steps);
    }

    /** @param value at least 1 @return a copy with at most this many chain steps */
    public DenoisingOptions withSteps(int value) {
        return new DenoisingOptions(noiseSd, draws, value);
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof DenoisingOptions other && Arrays.equals(noiseSd, other.noiseSd)
                && draws == other.draws && steps == other.steps;
    }

    @Override
    public int hashCode() {
        return 31 * (31 * Arrays.hashCode(noiseSd) + draws) + steps;
    }

    @Override
    public String toString() {
        return "DenoisingOptions[noiseSd=" + Arrays.toString(noiseSd) + ", draws=" + draws + ", steps=" + steps + "]";
    }
}
