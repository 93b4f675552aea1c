package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to evaluate the negative variational bound of a record (Ho et al. 2020, eq. 5;
 * Sohl-Dickstein et al. 2015, eq. 14),
 * <pre>
 *   L = L_T + sum_{t=2..T} L_{t-1} + L_0,
 * </pre>
 * either exactly (every term, one draw of x_t per term: T network evaluations per record), on the
 * full chain or on a strided chain of fewer steps (a different, usually looser bound of the same
 * model; Nichol &amp; Dhariwal 2021, section 4), or by Monte Carlo: L_T and L_0 exactly and K steps
 * drawn uniformly from 2..T, L ~ L_T + L_0 + ((T - 1)/K) sum_k L_{t_k - 1}, an unbiased estimate
 * with a standard error (K + 1 evaluations per record).
 *
 * <p>The defaults are {@code org.backstep.Defaults#bound()}.
 *
 * @param sampled false for the exact bound, true for the Monte Carlo estimate
 * @param steps exact only: steps of the strided chain, 1..T; 0 means all T steps
 * @param draws Monte Carlo only: K, from 1 to {@link Limits#MAX_DRAWS} (0 for the exact bound)
 */
public record BoundOptions(boolean sampled, int steps, int draws) {

    /** Validates: an exact bound has no draws; a sampled one has draws and runs on the full chain. */
    public BoundOptions {
        Require.atLeast("steps", steps, 0);
        if (sampled) {
            Limits.checkDraws("draws", draws);
            if (steps != 0) {
                throw new IllegalArgumentException("steps is " + steps
                        + "; the Monte Carlo bound runs on the full chain (steps 0)");
            }
        } else if (draws != 0) {
            throw new IllegalArgumentException("draws is " + draws + "; the exact bound draws no steps (draws 0)");
        }
    }

    /** @return the exact bound over all T steps of the model */
    public static BoundOptions exact() {
        return new BoundOptions(false, 0, 0);
    }

    /**
     * @param steps steps of the strided chain, at least 1 (at most T, checked by the model)
     * @return the exact bound of the strided chain of {@code steps} steps
     */
    public static BoundOptions exactStrided(int steps) {
        Require.atLeast("steps", steps, 1);
        return new BoundOptions(false, steps, 0);
    }

    /**
     * @param draws K, the steps drawn per record, from 1 to {@link Limits#MAX_DRAWS}
     * @return the Monte Carlo estimate with K draws
     */
    public static BoundOptions sampled(int draws) {
        Limits.checkDraws("draws", draws);
        return new BoundOptions(true, 0, draws);
    }
}
