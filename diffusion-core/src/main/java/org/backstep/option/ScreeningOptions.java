package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * How to screen records: each record's score is, by {@code source}, its bound in nats, model space
 * (by {@code bound}, with common random numbers: every record is diffused with the same noise, see
 * {@code org.backstep.report.AnomalyScreen}), or its exact negative log-likelihood under the
 * probability-flow ODE (by {@code flow}; Song et al. 2021, section 4.3; no draws, continuous
 * columns only, far costlier); a record is flagged when its score is above the
 * threshold that {@code threshold} sets from the held-out records' scores, the same score of the
 * held-out records (the same seed, so the same draws). The default bound is the steady bound
 * ({@link BoundOptions#steadyWithin}, {@code org.backstep.Defaults#steadyBound()}: its draws of
 * x_t allocated by the model's own profile to a per-record sd of about 0.04 nats, so that scores,
 * flags and ranks hardly move with the seed). {@code withBound} takes any other, e.g. the former
 * default, a Monte Carlo bound of {@code Defaults#SCREENING_DRAWS} drawn steps (at most T), many
 * times cheaper with scores that move by nats from seed to seed (measured in
 * diffusion-bench/results/steady-use.txt; see {@code org.backstep.Defaults#screening()}). Missing
 * cells are refused or imputed by {@code missing}; the flagged records get
 * per-column surprisal figures by {@code surprisal} (none when its draws are 0).
 *
 * <p>Start from {@code org.backstep.Defaults#screening()}.
 *
 * @param threshold where the threshold goes
 * @param bound how each score is computed
 * @param missing what to do with a missing cell
 * @param surprisal the per-column figures of the flagged records
 * @param source what each record is scored by: the bound or the flow likelihood
 * @param flow the integrator's tolerances when scoring by the flow likelihood
 */
public record ScreeningOptions(ThresholdRule threshold, BoundOptions bound, MissingCells missing,
                               SurprisalOptions surprisal, ScoreSource source, FlowOptions flow) {

    /** Validates. */
    public ScreeningOptions {
        Require.notNull("threshold", threshold);
        Require.notNull("bound", bound);
        Require.notNull("missing", missing);
        Require.notNull("surprisal", surprisal);
        Require.notNull("source", source);
        Require.notNull("flow", flow);
    }

    /** @param value not null @return a copy with this threshold rule */
    public ScreeningOptions withThreshold(ThresholdRule value) {
        return new ScreeningOptions(value, bound, missing, surprisal, source, flow);
    }

    /** @param value in (0, 1) @return a copy with the threshold at this quantile of the held-out scores */
    public ScreeningOptions withQuantile(double value) {
        return withThreshold(ThresholdRule.quantile(value));
    }

    /** @param value in (0, 1) @return a copy with the threshold set for this expected false-positive rate */
    public ScreeningOptions withFalsePositiveRate(double value) {
        return withThreshold(ThresholdRule.falsePositiveRate(value));
    }

    /** @param value not null @return a copy scoring by this bound */
    public ScreeningOptions withBound(BoundOptions value) {
        return new ScreeningOptions(threshold, value, missing, surprisal, ScoreSource.BOUND, flow);
    }

    /**
     * @param value the integrator's tolerances, not null
     * @return a copy scoring by the exact likelihood of the probability-flow ODE with these tolerances
     */
    public ScreeningOptions withFlow(FlowOptions value) {
        return new ScreeningOptions(threshold, bound, missing, surprisal, ScoreSource.FLOW, value);
    }

    /** @param value not null @return a copy with this treatment of missing cells */
    public ScreeningOptions withMissing(MissingCells value) {
        return new ScreeningOptions(threshold, bound, value, surprisal, source, flow);
    }

    /** @param value not null @return a copy with these surprisal settings */
    public ScreeningOptions withSurprisal(SurprisalOptions value) {
        return new ScreeningOptions(threshold, bound, missing, value, source, flow);
    }
}
