package org.backstep.internal.chain;

import org.backstep.option.Baseline;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The closed-form part of the estimator ({@link Baseline}): the exact noise prediction E[eps | x_t]
 * (and, with learned variances, a v) of a distribution fitted on the training rows, to which the
 * network adds its correction. Two forms: {@link GaussianBaseline} (one Gaussian: linear in x_t) and
 * {@link MixtureBaseline} (a Gaussian mixture: not linear). It reads the first Dc (continuous) cells
 * of each model-space row x_t and writes the first Dc (and, learned, the next Dc) outputs.
 */
public interface ClosedFormPart {

    /** @return the kind of part */
    Baseline kind();

    /** @return Dc, the continuous cells the part reads and writes */
    int continuousColumns();

    /** @return doubles of scratch that {@link #addToRowInPlace} needs */
    int scratchSize();

    /**
     * Adds the closed form to one row of the network's output, in place.
     *
     * @param xt the row x_t, its continuous cells from {@code xo} (not modified)
     * @param step the training-schedule step t of the row, 1..T
     * @param out the network's output row, from {@code oo}: epsilon-hat at [oo, oo + dc), v at
     *     [oo + dc, oo + 2 dc) when {@code learned} (modified)
     * @param scratch at least {@link #scratchSize()} doubles, overwritten
     */
    void addToRowInPlace(float[] xt, int xo, int step, float[] out, int oo, boolean learned, double[] scratch);

    /**
     * Adds the closed form to every row of an output block, in place.
     *
     * @param xt rows x d (not modified)
     * @param steps the training-schedule step of each row
     * @param out rows x outputs (modified)
     */
    default void addInPlace(float[] xt, int d, int[] steps, float[] out, int outputs, int rows, boolean learned) {
        double[] scratch = new double[scratchSize()];
        for (int r = 0; r < rows; r++) {
            addToRowInPlace(xt, r * d, steps[r], out, r * outputs, learned, scratch);
        }
    }

    /**
     * Adds the trace of the part's Jacobian, tr(d eps-hat / d x_t) over the continuous cells, to each
     * row's entry (the flow likelihood's divergence, Song et al. 2021, eq. 39).
     *
     * @param x rows x d model-space rows (not modified)
     * @param step the training-schedule step t
     * @param trace one value per row (modified)
     */
    void addTracesInPlace(float[] x, int d, int rows, int step, double[] trace);

    /**
     * @return the part as one Gaussian when it is one (linear in x_t, with a closed-form expectation
     *     of its bound terms: the exact bound's control variate), or null
     */
    GaussianBaseline linear();

    /**
     * The part of {@code kind} for these training rows, or null for {@link Baseline#NONE} or when no
     * continuous column is diffused.
     *
     * @param x0 n rows of d model-space cells, continuous first (not modified)
     * @param schedule the training schedule of the continuous columns
     * @param seed the seed of a mixture's EM starts
     */
    static ClosedFormPart fit(Baseline kind, float[] x0, int n, int d, int dc, NoiseSchedule schedule, long seed) {
        Require.notNull("kind", kind);
        if (kind == Baseline.FITTED_MIXTURE) {
            return dc == 0 ? null : MixtureBaseline.fit(x0, n, d, dc, schedule, seed);
        }
        return GaussianBaseline.fit(kind, x0, n, d, dc, schedule);
    }
}
