package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to run the reverse chain: the sampler, the number of steps (a strided sub-schedule of the
 * training schedule when fewer than T; Nichol &amp; Dhariwal 2021, section 4) and eta for the
 * implicit sampler (Song, Meng &amp; Ermon 2021, eq. 16).
 *
 * @param kind the sampler
 * @param steps steps of the chain, 1..T; 0 means all T
 * @param eta the implicit sampler's eta in [0, 1] (0 deterministic, 1 ancestral-like); ignored by the ancestral sampler
 */
public record SamplingPlan(SamplerKind kind, int steps, double eta) {

    /** Validates. */
    public SamplingPlan {
        Require.notNull("kind", kind);
        Require.atLeast("steps", steps, 0);
        Require.inClosed("eta", eta, 0.0, 1.0);
    }

    /** @return ancestral sampling through all T steps (Ho et al. 2020, algorithm 2) */
    public static SamplingPlan ancestral() {
        return new SamplingPlan(SamplerKind.ANCESTRAL, 0, 0.0);
    }

    /**
     * @param steps steps of the strided chain, 1..T
     * @return ancestral sampling through a strided sub-schedule
     */
    public static SamplingPlan ancestral(int steps) {
        Require.atLeast("steps", steps, 1);
        return new SamplingPlan(SamplerKind.ANCESTRAL, steps, 0.0);
    }

    /**
     * @param steps steps of the strided chain, 1..T
     * @param eta in [0, 1]; 0 is deterministic given x_T
     * @return implicit sampling (Song, Meng &amp; Ermon 2021)
     */
    public static SamplingPlan implicit(int steps, double eta) {
        Require.atLeast("steps", steps, 1);
        return new SamplingPlan(SamplerKind.IMPLICIT, steps, eta);
    }
}
