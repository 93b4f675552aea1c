package org.backstep.option;


import org.backstep.schedule.NoiseSchedule;

import java.util.Arrays;
import java.util.Set;

/**
 * Every option of a fit, immutable, as {@code org.backstep.Backstep.Builder} validated it; kept in the fitted
 * model's provenance. See {@code org.backstep.Defaults} for each default.
 *
 * @param continuousSchedule the schedule of the continuous columns (T steps)
 * @param binarySchedule the schedule of the binary columns (the same T)
 * @param hidden the hidden widths of the estimator
 * @param embeddingSize the size of the sinusoidal embedding of t
 * @param stepInput where the embedding of the step enters the network
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
 * @param epochs passes over the training rows; 0 means ceil(trainingSteps / minibatches per epoch)
 * @param trainingSteps the minibatch updates the epoch count aims at when epochs is 0
 * @param checkpointFraction share of rows held out when no validation table is given
 * @param evaluateEvery epochs between checkpoint evaluations; 0 means epochs / evaluations
 * @param evaluations checkpoint evaluations over a run when evaluateEvery is 0
 * @param checkpointDraws steps drawn per record in the held-out Monte Carlo bound
 * @param patience evaluations without improvement before stopping; 0 never stops early
 * @param logColumns continuous columns modelled on a log scale
 * @param seed the seed of every random draw
 * @param threads worker threads
 */
public record FitOptions(NoiseSchedule continuousSchedule, NoiseSchedule binarySchedule, int[] hidden,
                         int embeddingSize, StepInput stepInput, ReverseVariance variance,
                         TrainingLoss loss, double hybridWeight, StepSampling stepSampling,
                         double learningRate, LearningRateSchedule learningRateSchedule, double adamBeta1, double adamBeta2, double adamEpsilon,
                         double weightDecay, double emaDecay, int batchSize, int epochs, int trainingSteps,
                         double checkpointFraction, int evaluateEvery, int evaluations, int checkpointDraws, int patience,
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

    /** Compares every component by value (the hidden widths element by element). */
    @Override
    public boolean equals(Object o) {
        return o instanceof FitOptions f && continuousSchedule.equals(f.continuousSchedule)
                && binarySchedule.equals(f.binarySchedule) && Arrays.equals(hidden, f.hidden)
                && embeddingSize == f.embeddingSize && stepInput == f.stepInput && variance == f.variance
                && loss == f.loss && Double.compare(hybridWeight, f.hybridWeight) == 0
                && stepSampling == f.stepSampling && Double.compare(learningRate, f.learningRate) == 0
                && learningRateSchedule == f.learningRateSchedule && Double.compare(adamBeta1, f.adamBeta1) == 0
                && Double.compare(adamBeta2, f.adamBeta2) == 0 && Double.compare(adamEpsilon, f.adamEpsilon) == 0
                && Double.compare(weightDecay, f.weightDecay) == 0 && Double.compare(emaDecay, f.emaDecay) == 0
                && batchSize == f.batchSize && epochs == f.epochs && trainingSteps == f.trainingSteps
                && Double.compare(checkpointFraction, f.checkpointFraction) == 0 && evaluateEvery == f.evaluateEvery
                && evaluations == f.evaluations && checkpointDraws == f.checkpointDraws && patience == f.patience
                && logColumns.equals(f.logColumns) && seed == f.seed && threads == f.threads;
    }

    @Override
    public int hashCode() {
        return java.util.Objects.hash(continuousSchedule, binarySchedule, Arrays.hashCode(hidden), embeddingSize,
                stepInput, variance, loss, hybridWeight, stepSampling, learningRate, learningRateSchedule, adamBeta1,
                adamBeta2, adamEpsilon, weightDecay, emaDecay, batchSize, epochs, trainingSteps, checkpointFraction,
                evaluateEvery, evaluations, checkpointDraws, patience, logColumns, seed, threads);
    }

    @Override
    public String toString() {
        return "FitOptions[continuousSchedule=" + continuousSchedule + ", binarySchedule=" + binarySchedule
                + ", hidden=" + Arrays.toString(hidden) + ", embeddingSize=" + embeddingSize
                + ", stepInput=" + stepInput + ", variance=" + variance + ", loss=" + loss
                + ", hybridWeight=" + hybridWeight + ", stepSampling=" + stepSampling
                + ", learningRate=" + learningRate + ", learningRateSchedule=" + learningRateSchedule + ", adamBeta1=" + adamBeta1 + ", adamBeta2=" + adamBeta2
                + ", adamEpsilon=" + adamEpsilon + ", weightDecay=" + weightDecay + ", emaDecay=" + emaDecay
                + ", batchSize=" + batchSize + ", epochs=" + epochs + ", trainingSteps=" + trainingSteps + ", checkpointFraction=" + checkpointFraction
                + ", evaluateEvery=" + evaluateEvery + ", evaluations=" + evaluations + ", checkpointDraws=" + checkpointDraws
                + ", patience=" + patience + ", logColumns=" + new java.util.TreeSet<>(logColumns)
                + ", seed=" + seed + ", threads=" + threads + "]";
    }
}
