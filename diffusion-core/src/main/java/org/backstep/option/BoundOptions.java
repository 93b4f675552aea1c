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
 * <p><b>The noise of the exact bound.</b> Each term L_{t-1} = E_q[...] is an expectation over
 * x_t ~ q(x_t | x_0); one draw per term makes a record's bound move from seed to seed (measured on
 * default fits: 2 to 6 nats per record on iris, breast_cancer and diabetes,
 * diffusion-bench/results/score-variance.txt). Two settings of the exact bound shrink that noise
 * and keep its expectation, so the figure stays an upper bound on the model's negative
 * log-likelihood in expectation over the seed:
 * <ul>
 *   <li>{@code termDraws} K: each term is the mean over K draws of x_t; K &gt; 1 draws the first K
 *       points of the Sobol sequence shifted by a uniform random vector mod 1 per record and term
 *       (randomized quasi-Monte Carlo; Cranley &amp; Patterson 1976; L'Ecuyer &amp; Lemieux 2002),
 *       which measured below independent and antithetic draws of the same count on every table;</li>
 *   <li>{@code linearized}: each continuous term takes a control variate, the same term under the
 *       network linearized around the noiseless point by secants over one noise standard deviation,
 *       whose expectation over x_t is closed-form: L - Q + E[Q]; the discrete cells' terms take
 *       their expansion in the binary cells' flips to first order (exact when at most one binary
 *       cell of x_t differs from x_0's, its mean closed-form); together they cost 2 Dc + 1 + D_b
 *       network evaluations per record and step on top of the K draws (Dc continuous, D_b binary
 *       columns), and remove most of the noise near the data, where the bound's noise lives.</li>
 * </ul>
 * {@link #steady(int)} turns both on, and allocates the draws ({@code allocated}): the draws of
 * step t and whether step t takes the control variate follow a profile of the model's own terms
 * (each term's spread over its draws, with and without the control variate, measured once per
 * model on records the model draws itself from a fixed seed, so never on the records scored): K_t
 * proportional to the term's spread (Neyman allocation; Cochran 1977, "Sampling Techniques",
 * section 5.5), and the control variate only at the steps where it saves more draws than it costs,
 * at the noise of K draws per term with the control variate everywhere. With K = 1 and no
 * linearization the draws are the historical ones (same seed, same bits).
 *
 * <p><b>A variance target.</b> {@link #steadyWithin(double, int)} sets {@code recordSd} s: instead
 * of the noise of K draws, the allocation aims at a predicted per-record variance V = s^2, and the
 * draws follow from the profile: K_t = sqrt(lambda) s_t with sqrt(lambda) = sum_t s_t / V, so that
 * sum_t s_t^2 / K_t = V and N = sum_t K_t = (sum_t s_t)^2 / V (Neyman allocation with a variance
 * target; Cochran 1977, section 5.5, derived in the profile's comment). A quiet model gets few draws, a noisy one many, up
 * to K draws per term on average ({@code termDraws} becomes the cap); past the cap the plan is that of
 * {@code steady(K)} and its noise above s. The profile's spread is that of independent draws on
 * records the model draws itself; with shifted Sobol points the measured sd on the test rows of four
 * open tables was 0.76 to 0.86 times the target (diffusion-bench/results/steady-use.txt), a margin
 * measured, not guaranteed.
 *
 * <p>The defaults are {@code org.backstep.Defaults#bound()}.
 *
 * @param sampled false for the exact bound, true for the Monte Carlo estimate
 * @param steps exact only: steps of the strided chain, 1..T; 0 means all T steps
 * @param draws Monte Carlo only: K, from 1 to {@link Limits#MAX_DRAWS} (0 for the exact bound)
 * @param termDraws exact only: draws of x_t per term, 1 to {@link #MAX_TERM_DRAWS} (1 for the Monte Carlo bound)
 * @param linearized exact only: whether the terms take the control variates (linearized continuous
 *     terms, the binary cells' one-flip expansion)
 * @param allocated exact only: whether the draws per term (with termDraws their mean) and the steps that
 *     take the control variate follow the model's profile of its terms (needs linearized)
 * @param recordSd allocated only: the per-record sd, nats, the allocation aims at (termDraws then caps the
 *     mean draws per term); 0 for none (the noise of termDraws draws per term)
 */
public record BoundOptions(boolean sampled, int steps, int draws, int termDraws, boolean linearized,
                           boolean allocated, double recordSd) {

    /** The most draws of x_t per term of an exact bound. */
    public static final int MAX_TERM_DRAWS = 4096;

    /**
     * Validates: an exact bound has no draws; a sampled one has draws, runs on the full chain, and
     * draws once per term without the control variate or allocation; an allocated bound is linearized.
     */
    public BoundOptions {
        Require.atLeast("steps", steps, 0);
        if (termDraws < 1 || termDraws > MAX_TERM_DRAWS) {
            throw new IllegalArgumentException("termDraws is " + termDraws + "; it must be from 1 to " + MAX_TERM_DRAWS);
        }
        if (sampled) {
            Limits.checkDraws("draws", draws);
            if (steps != 0) {
                throw new IllegalArgumentException("steps is " + steps
                        + "; the Monte Carlo bound runs on the full chain (steps 0)");
            }
            if (termDraws != 1 || linearized || allocated) {
                throw new IllegalArgumentException("termDraws is " + termDraws + ", linearized " + linearized
                        + " and allocated " + allocated + "; the Monte Carlo bound draws once per drawn step"
                        + " (termDraws 1, linearized false, allocated false)");
            }
        } else if (draws != 0) {
            throw new IllegalArgumentException("draws is " + draws + "; the exact bound draws no steps (draws 0)");
        }
        if (allocated && !linearized) {
            throw new IllegalArgumentException("allocated is true and linearized false; the allocation chooses the"
                    + " steps of the linearized control variate, so it needs linearized true");
        }
        if (!(recordSd >= 0.0) || !Double.isFinite(recordSd)) {
            throw new IllegalArgumentException("recordSd is " + recordSd + "; it must be finite and at least 0"
                    + " (0 for no target)");
        }
        if (recordSd > 0.0 && !allocated) {
            throw new IllegalArgumentException("recordSd is " + recordSd + " and allocated false; a variance target"
                    + " sets the draws of an allocated bound, so it needs allocated true");
        }
    }

    /**
     * The options before the variance target (recordSd 0).
     *
     * @param sampled see the record
     * @param steps see the record
     * @param draws see the record
     * @param termDraws see the record
     * @param linearized see the record
     * @param allocated see the record
     */
    public BoundOptions(boolean sampled, int steps, int draws, int termDraws, boolean linearized, boolean allocated) {
        this(sampled, steps, draws, termDraws, linearized, allocated, 0.0);
    }

    /** @return the exact bound over all T steps of the model, one draw of x_t per term */
    public static BoundOptions exact() {
        return new BoundOptions(false, 0, 0, 1, false, false);
    }

    /**
     * @param termDraws K, the mean draws of x_t per term (shifted Sobol points), from 1 to
     *     {@link #MAX_TERM_DRAWS}
     * @return the exact bound over all T steps with the linearized control variate and the draws
     *     allocated by the model's profile, at the noise of K draws per term with the control
     *     variate at every step (see the class comment)
     */
    public static BoundOptions steady(int termDraws) {
        return new BoundOptions(false, 0, 0, termDraws, true, true, 0.0);
    }

    /**
     * @param recordSd s, the per-record sd in nats the allocation aims at, above 0 (finite)
     * @param mostTermDraws the cap: at most this many draws per term on average, from 1 to
     *     {@link #MAX_TERM_DRAWS}
     * @return the steady bound whose draws reach the predicted variance s^2 of the model's profile,
     *     N = (sum_t s_t)^2 / s^2 draws in all (see the class comment), at most {@code mostTermDraws} T
     * @throws IllegalArgumentException naming recordSd or mostTermDraws when out of range
     */
    public static BoundOptions steadyWithin(double recordSd, int mostTermDraws) {
        if (!(recordSd > 0.0) || !Double.isFinite(recordSd)) {
            throw new IllegalArgumentException("recordSd is " + recordSd + "; it must be finite and above 0");
        }
        Require.inRange("mostTermDraws", mostTermDraws, 1, MAX_TERM_DRAWS);
        return new BoundOptions(false, 0, 0, mostTermDraws, true, true, recordSd);
    }

    /**
     * @param value K, draws of x_t per term (their mean when allocated), from 1 to {@link #MAX_TERM_DRAWS}
     * @return a copy of this exact bound with K draws per term
     */
    public BoundOptions withTermDraws(int value) {
        return new BoundOptions(sampled, steps, draws, value, linearized, allocated, recordSd);
    }

    /**
     * @param value whether the continuous terms take the linearized control variate (false also
     *     turns the allocation and its variance target off)
     * @return a copy of this exact bound with it
     */
    public BoundOptions withLinearization(boolean value) {
        return new BoundOptions(sampled, steps, draws, termDraws, value, allocated && value, allocated && value ? recordSd : 0.0);
    }

    /**
     * @param value whether the draws per term and the linearized steps follow the model's profile
     *     (true needs the linearization); false draws K at every step, linearized at every step, and
     *     drops the variance target
     * @return a copy of this exact bound with it
     */
    public BoundOptions withAllocation(boolean value) {
        return new BoundOptions(sampled, steps, draws, termDraws, linearized, value, value ? recordSd : 0.0);
    }

    /**
     * @param steps steps of the strided chain, at least 1 (at most T, checked by the model)
     * @return the exact bound of the strided chain of {@code steps} steps
     */
    public static BoundOptions exactStrided(int steps) {
        Require.atLeast("steps", steps, 1);
        return new BoundOptions(false, steps, 0, 1, false, false);
    }

    /**
     * @param draws K, the steps drawn per record, from 1 to {@link Limits#MAX_DRAWS}
     * @return the Monte Carlo estimate with K draws
     */
    public static BoundOptions sampled(int draws) {
        Limits.checkDraws("draws", draws);
        return new BoundOptions(true, 0, draws, 1, false, false);
    }
}
