package org.backstep.option;

import org.backstep.Backstep;
import org.backstep.Defaults;

import org.backstep.net.TimeConditioning;
import org.backstep.schedule.NoiseSchedule;

import java.util.Arrays;
import java.util.Set;

/**
 * Every option of a fit, immutable, as {@link Backstep.Builder} validated it; kept in the fitted
 * model's provenance. See {@link Defaults} for each default.
 *
 * @param continuousSchedule the schedule of the continuous columns (T steps)
 * @param binarySchedule the schedule of the binary columns (the same T)
 * @param hidden the hidden widths of the estimator
 * @param embeddingSize the size of the sinusoidal embedding of t
 * @param conditioning where the embedding enters the network
 * @param variance the reverse variance of continuous columns
 * @param loss the training objective
 * @param hybridWeight lambda of the hybrid loss
 * @param stepSampling how t is drawn in training
 * @param learningRate Adam's step size
 * @param learningRateSchedule how the step size changes over training
 * @param adamBeta1 Adam's beta_1
 * @param adamBeta2 Adam's beta_2
 * @param adamEpsilon Adam's epsilon
 * @param weightDecay the decoupled weight decay
 * @param emaDecay the decay of the weights' moving average
 * @param batchSize rows per minibatch
 * @param epochs passes over the training rows; 0 means the default rule of {@link Defaults#TRAINING_STEPS}
 * @param validationFraction share of rows held out when no validation table is given
 * @param evaluateEvery epochs between held-out evaluations; 0 means epochs / {@link Defaults#EVALUATIONS}
 * @param validationDraws steps drawn per record in the held-out Monte Carlo bound
 * @param patience evaluations without improvement before stopping; 0 never stops early
 * @param logColumns continuous columns modelled on a log scale
 * @param seed the seed of every random draw
 * @param threads worker threads
 */
public record FitOptions(NoiseSchedule continuousSchedule, NoiseSchedule binarySchedule, int[] hidden,
                         int embeddingSize, TimeConditioning conditioning, ReverseVariance variance,
                         TrainingLoss loss, double hybridWeight, StepSampling stepSampling,
                         double learningRate, LearningRateSchedule learningRateSchedule, double adamBeta1, double adamBeta2, double adamEpsilon,
                         double weightDecay, double emaDecay, int batchSize, int epochs,
                         double validationFraction, int evaluateEvery, int validationDraws, int patience,
                         Set<String> logColumns, long seed, int threads) {

    /** Copies the arrays and sets. */
    public FitOptions {
        hidden = hidden.clone();
        logColumns = Set.copyOf(logColumns);
    }

    /** @return a copy of the hidden widths */
    @Override
    public int[] hidden() {
        return hidden.clone();
    }

    /** @return T */
    public int steps() {
        return continuousSchedule.steps();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof FitOptions f && toString().equals(f.toString())
                && continuousSchedule.equals(f.continuousSchedule) && binarySchedule.equals(f.binarySchedule);
    }

    @Override
    public int hashCode() {
        return toString().hashCode();
    }

    @Override
    public String toString() {
        return "FitOptions[continuousSchedule=" + continuousSchedule + ", binarySchedule=" + binarySchedule
                + ", hidden=" + Arrays.toString(hidden) + ", embeddingSize=" + embeddingSize
                + ", conditioning=" + conditioning + ", variance=" + variance + ", loss=" + loss
                + ", hybridWeight=" + hybridWeight + ", stepSampling=" + stepSampling
                + ", learningRate=" + learningRate + ", learningRateSchedule=" + learningRateSchedule + ", adamBeta1=" + adamBeta1 + ", adamBeta2=" + adamBeta2
                + ", adamEpsilon=" + adamEpsilon + ", weightDecay=" + weightDecay + ", emaDecay=" + emaDecay
                + ", batchSize=" + batchSize + ", epochs=" + epochs + ", validationFraction=" + validationFraction
                + ", evaluateEvery=" + evaluateEvery + ", validationDraws=" + validationDraws
                + ", patience=" + patience + ", logColumns=" + new java.util.TreeSet<>(logColumns)
                + ", seed=" + seed + ", threads=" + threads + "]";
    }
}
