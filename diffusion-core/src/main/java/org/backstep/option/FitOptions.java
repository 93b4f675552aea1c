package org.backstep.option;


import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

import java.util.Arrays;
import java.util.Set;

/**
 * Every option of a fit, immutable and valid: the constructor is the one validation of the
 * options, through which both {@code org.backstep.Backstep.Builder} and the model file's loader
 * pass, so that a file can hold only options the builder accepts (each within {@link Limits}).
 * Kept in the fitted model's provenance. See {@code org.backstep.Defaults} for each default.
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
 * @param weightDecay the decoupled weight decay lambda, the share of each weight taken off per update, in [0, 1)
 * @param emaDecay the decay of the weights' moving average
 * @param batchSize rows per minibatch
 * @param epochs passes over the training rows; 0 means ceil(trainingSteps / minibatches per epoch)
 * @param trainingSteps the minibatch updates the epoch count aims at when epochs is 0
 * @param checkpointFraction share of rows held out when no validation table is given
 * @param evaluateEvery epochs between checkpoint evaluations; 0 means epochs / evaluations
 * @param evaluations checkpoint evaluations over a run when evaluateEvery is 0
 * @param checkpointDraws draws of x_t per term of the steady checkpoint score (at most {@link BoundOptions#MAX_TERM_DRAWS}, checked by the fit)
 * @param patience evaluations without improvement before stopping; 0 never stops early
 * @param logColumns continuous columns modelled on a log scale
 * @param seed the seed of every random draw
 * @param threads worker threads
 * @param baseline the closed-form part of the reverse model that the network corrects
 * @param coordinates the coordinates the continuous columns are diffused in (standardized or whitened)
 * @param marginals how the real continuous columns are mapped: standardized, normal scores, or chosen at fit time
 */
public record FitOptions(NoiseSchedule continuousSchedule, NoiseSchedule binarySchedule, int[] hidden,
                         int embeddingSize, StepInput stepInput, ReverseVariance variance,
                         TrainingLoss loss, double hybridWeight, StepSampling stepSampling,
                         double learningRate, LearningRateSchedule learningRateSchedule, double adamBeta1, double adamBeta2, double adamEpsilon,
                         double weightDecay, double emaDecay, int batchSize, int epochs, int trainingSteps,
                         double checkpointFraction, int evaluateEvery, int evaluations, int checkpointDraws, int patience,
                         Set<String> logColumns, long seed, int threads, Baseline baseline,
                         Coordinates coordinates, Marginals marginals) {

    /**
     * Validates every option and copies the arrays and sets.
     *
     * @throws IllegalArgumentException naming the first bad option, its value and what was expected
     */
    public FitOptions {
        Require.notNull("continuousSchedule", continuousSchedule);
        Require.notNull("binarySchedule", binarySchedule);
        checkSchedule("continuousSchedule", continuousSchedule);
        checkSchedule("binarySchedule", binarySchedule);
        if (binarySchedule.steps() != continuousSchedule.steps()) {
            throw new IllegalArgumentException("binarySchedule has " + binarySchedule.steps() + " steps and continuousSchedule "
                    + continuousSchedule.steps() + "; both kinds are diffused at the same t, so T must agree");
        }
        if (continuousSchedule.beta(continuousSchedule.steps()) >= 1.0) {
            throw new IllegalArgumentException("continuousSchedule's last beta is 1; a Gaussian chain needs every beta "
                    + "below 1 (a beta of 1 is for the binomial schedule of binary columns)");
        }
        Require.notNull("hidden", hidden);
        hidden = hidden.clone();
        Require.inRange("number of hidden layers", hidden.length, 1, Limits.MAX_HIDDEN_LAYERS);
        for (int i = 0; i < hidden.length; i++) {
            Require.inRange("hidden[" + i + "]", hidden[i], 1, Limits.MAX_HIDDEN_WIDTH);
        }
        Require.inRange("embeddingSize", embeddingSize, 2, Limits.MAX_EMBEDDING_SIZE);
        if (embeddingSize % 2 != 0) {
            throw new IllegalArgumentException("embeddingSize is " + embeddingSize + "; expected an even number");
        }
        long table = (long) continuousSchedule.steps() * embeddingSize;
        if (table > Limits.MAX_PARAMETERS) {
            throw new IllegalArgumentException("steps x embeddingSize is " + continuousSchedule.steps() + " x " + embeddingSize
                    + " = " + table + " values of the step embedding table; the limit is " + Limits.MAX_PARAMETERS
                    + " (Limits.MAX_PARAMETERS)");
        }
        Require.notNull("stepInput", stepInput);
        Require.notNull("variance", variance);
        Require.notNull("loss", loss);
        if (loss == TrainingLoss.HYBRID && variance != ReverseVariance.LEARNED) {
            throw new IllegalArgumentException("loss is HYBRID but variance is " + variance
                    + "; the hybrid loss trains learned variances (choose variance LEARNED or loss SIMPLE)");
        }
        if (loss == TrainingLoss.SIMPLE && variance == ReverseVariance.LEARNED) {
            throw new IllegalArgumentException("loss is SIMPLE but variance is LEARNED; the simple loss does not train "
                    + "variances (choose loss HYBRID or BOUND, or a fixed variance)");
        }
        Require.positive("hybridWeight", hybridWeight);
        Require.notNull("stepSampling", stepSampling);
        Require.positive("learningRate", learningRate);
        Require.notNull("learningRateSchedule", learningRateSchedule);
        checkMoment("adam beta1", adamBeta1);
        checkMoment("adam beta2", adamBeta2);
        Require.positive("adam epsilon", adamEpsilon);
        checkMoment("weightDecay", weightDecay);   // a share of each weight taken per update (AdamW): below 1
        checkMoment("emaDecay", emaDecay);
        Require.atLeast("batchSize", batchSize, 1);
        Require.atLeast("trainingSteps", trainingSteps, 1);
        Require.atLeast("evaluations", evaluations, 1);
        if (epochs != 0) {
            Require.atLeast("epochs", epochs, 1);
        }
        Require.inClosed("checkpointFraction", checkpointFraction, 0.0, 0.9);
        if (evaluateEvery != 0) {
            Require.atLeast("evaluateEvery", evaluateEvery, 1);
        }
        Limits.checkDraws("checkpointDraws", checkpointDraws);
        Require.atLeast("patience", patience, 0);
        Require.notNull("logColumns", logColumns);
        for (String name : logColumns) {
            if (name == null || name.isBlank()) {
                throw new IllegalArgumentException("logColumns holds " + (name == null ? "null" : "a blank name")
                        + "; expected column names");
            }
        }
        logColumns = Set.copyOf(logColumns);
        Require.inRange("threads", threads, 1, Limits.MAX_THREADS);
        Require.notNull("baseline", baseline);
        Require.notNull("coordinates", coordinates);
        Require.notNull("marginals", marginals);
    }

    /** A training schedule: full (not strided), T within the limit, every beta at least {@link Limits#MIN_BETA}. */
    private static void checkSchedule(String name, NoiseSchedule s) {
        if (s.isStrided()) {
            throw new IllegalArgumentException(name + " is strided; train on a full schedule and stride it for sampling");
        }
        Require.inRange("steps of " + name, s.steps(), 1, Limits.MAX_STEPS);
        for (int t = 1; t <= s.steps(); t++) {
            if (!(s.beta(t) >= Limits.MIN_BETA)) {
                throw new IllegalArgumentException(name + " beta at step " + t + " is " + s.beta(t)
                        + "; expected at least " + Limits.MIN_BETA + " (Limits.MIN_BETA)");
            }
        }
    }

    private static void checkMoment(String name, double value) {
        if (!(value >= 0.0 && value < 1.0)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a number in [0, 1)");
        }
    }

    /** @return a copy of the hidden widths */
    @Override
    public int[] hidden() {
        return hidden.clone();
    }

    /**
     * @param marginals the maps of the real continuous columns
     * @return these options with {@code marginals} in place of theirs
     */
    public FitOptions withMarginals(Marginals marginals) {
        return new FitOptions(continuousSchedule, binarySchedule, hidden, embeddingSize, stepInput, variance, loss,
                hybridWeight, stepSampling, learningRate, learningRateSchedule, adamBeta1, adamBeta2, adamEpsilon,
                weightDecay, emaDecay, batchSize, epochs, trainingSteps, checkpointFraction, evaluateEvery, evaluations,
                checkpointDraws, patience, logColumns, seed, threads, baseline, coordinates, marginals);
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
                && logColumns.equals(f.logColumns) && seed == f.seed && threads == f.threads
                && baseline == f.baseline && coordinates == f.coordinates && marginals == f.marginals;
    }

    @Override
    public int hashCode() {
        return java.util.Objects.hash(continuousSchedule, binarySchedule, Arrays.hashCode(hidden), embeddingSize,
                stepInput, variance, loss, hybridWeight, stepSampling, learningRate, learningRateSchedule, adamBeta1,
                adamBeta2, adamEpsilon, weightDecay, emaDecay, batchSize, epochs, trainingSteps, checkpointFraction,
                evaluateEvery, evaluations, checkpointDraws, patience, logColumns, seed, threads, baseline,
                coordinates, marginals);
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
                + ", seed=" + seed + ", threads=" + threads + ", baseline=" + baseline
                + ", coordinates=" + coordinates + ", marginals=" + marginals + "]";
    }
}
