package org.backstep;

import org.backstep.internal.plan.StepPlanner;
import org.backstep.internal.train.MarginalChoice;
import org.backstep.internal.train.Trainer;
import org.backstep.option.FitOptions;
import org.backstep.option.LearningRateSchedule;
import org.backstep.option.Marginals;
import org.backstep.option.Limits;
import org.backstep.option.Baseline;
import org.backstep.option.ReverseVariance;
import org.backstep.option.ScheduleFamily;
import org.backstep.option.StepSampling;
import org.backstep.option.TrainingBudget;
import org.backstep.option.TrainingLoss;
import org.backstep.report.TrainingPlan;
import org.backstep.training.TrainingListener;

import org.backstep.option.StepInput;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.function.BooleanSupplier;

/**
 * The front door of Backstep: one fluent builder that configures a diffusion model of a table and
 * fits it.
 *
 * <pre>{@code
 * DiffusionModel model = Backstep.builder()
 *         .steps(1000)
 *         .hidden(256, 256, 256)
 *         .seed(7)
 *         .listener(progress -> bar.stepTo(progress.step()))
 *         .fit(table);
 * }</pre>
 *
 * <p>The model: continuous columns diffuse with Gaussian noise and are reversed by Gaussian kernels
 * whose mean comes from a predicted epsilon (Ho, Jain &amp; Abbeel 2020, eq. 11) and whose variance
 * is fixed or learned (Nichol &amp; Dhariwal 2021, eq. 15); binary columns diffuse by binomial
 * diffusion and are reversed by the closed-form posterior averaged over a predicted P(x_0 = 1)
 * (Sohl-Dickstein et al. 2015). One network sees a whole record at one t.
 *
 * <p>Caution: a fitted model's likelihood scores rank records; they are not calibrated
 * probabilities of a fault. Imputed, denoised and synthetic values are not measurements, and
 * synthetic rows can reproduce training rows. For safety-, health- or compliance-critical
 * decisions, defer to local regulations and qualified review.
 *
 * <p>One file of more than 400 lines because the builder is one contract: every option with its
 * default and the one validation of all of them.
 */
public final class Backstep {

    private Backstep() {
    }

    /** @return a builder with every option at its {@link Defaults default} */
    public static Builder builder() {
        return new Builder();
    }

    /**
     * Collects options; {@link #fit(Table)} validates all of them before any work, then trains and
     * returns an immutable {@link DiffusionModel}. The builder itself is not the product and may be
     * reused.
     */
    public static final class Builder {
        private int steps = Defaults.STEPS;
        private ScheduleFamily continuousFamily = Defaults.CONTINUOUS_SCHEDULE;
        private ScheduleFamily binaryFamily = Defaults.BINARY_SCHEDULE;
        private NoiseSchedule continuousSchedule;
        private NoiseSchedule binarySchedule;
        private int[] hidden = Defaults.HIDDEN.stream().mapToInt(Integer::intValue).toArray();
        private int embeddingSize = Defaults.EMBEDDING_SIZE;
        private StepInput stepInput = Defaults.STEP_INPUT;
        private ReverseVariance variance = Defaults.VARIANCE;
        private Baseline baseline = Defaults.BASELINE;
        private org.backstep.option.Coordinates coordinates = Defaults.COORDINATES;
        private Marginals marginals = Defaults.MARGINALS;
        private TrainingLoss loss = Defaults.LOSS;
        private double hybridWeight = Defaults.HYBRID_WEIGHT;
        private StepSampling stepSampling = Defaults.STEP_SAMPLING;
        private double learningRate = Defaults.LEARNING_RATE;
        private LearningRateSchedule learningRateSchedule = Defaults.LEARNING_RATE_SCHEDULE;
        private double adamBeta1 = Defaults.ADAM_BETA1;
        private double adamBeta2 = Defaults.ADAM_BETA2;
        private double adamEpsilon = Defaults.ADAM_EPSILON;
        private double weightDecay = Defaults.WEIGHT_DECAY;
        private double emaDecay = Defaults.EMA_DECAY;
        private int batchSize = Defaults.BATCH_SIZE;
        private int epochs = 0;
        private int trainingSteps = Defaults.TRAINING_STEPS;
        private int evaluations = Defaults.EVALUATIONS;
        private double checkpointFraction = Defaults.CHECKPOINT_FRACTION;
        private int evaluateEvery = 0;
        private int checkpointDraws = Defaults.CHECKPOINT_DRAWS;
        private int patience = Defaults.PATIENCE;
        private Set<String> logColumns = new LinkedHashSet<>();
        private long seed = Defaults.SEED;
        private int threads = Defaults.threads();
        private TrainingListener listener = TrainingListener.NONE;
        private BooleanSupplier stopRequested = () -> false;

        private Builder() {
        }

        /** T, the diffusion steps of both kinds of column; default {@link Defaults#STEPS}. @param steps T @return this */
        public Builder steps(int steps) {
            this.steps = steps;
            return this;
        }

        /** The schedule family of continuous columns; default {@link Defaults#CONTINUOUS_SCHEDULE}. @param family the family @return this */
        public Builder continuousSchedule(ScheduleFamily family) {
            Require.notNull("family", family);
            this.continuousFamily = family;
            this.continuousSchedule = null;
            return this;
        }

        /** An explicit schedule for continuous columns; its T overrides {@link #steps(int)}. @param schedule the schedule @return this */
        public Builder continuousSchedule(NoiseSchedule schedule) {
            Require.notNull("schedule", schedule);
            this.continuousSchedule = schedule;
            return this;
        }

        /** The schedule family of binary columns; default {@link Defaults#BINARY_SCHEDULE}. @param family the family @return this */
        public Builder binarySchedule(ScheduleFamily family) {
            Require.notNull("family", family);
            this.binaryFamily = family;
            this.binarySchedule = null;
            return this;
        }

        /** An explicit schedule for binary columns, with the continuous schedule's T. @param schedule the schedule @return this */
        public Builder binarySchedule(NoiseSchedule schedule) {
            Require.notNull("schedule", schedule);
            this.binarySchedule = schedule;
            return this;
        }

        /** Hidden widths of the estimator; default {@link Defaults#HIDDEN}. @param widths one per hidden layer @return this */
        public Builder hidden(int... widths) {
            Require.notNull("widths", widths);
            this.hidden = widths.clone();
            return this;
        }

        /** The embedding of t; defaults {@link Defaults#EMBEDDING_SIZE} and {@link Defaults#CONDITIONING}. @param size even size @param where where it enters @return this */
        public Builder timeEmbedding(int size, StepInput where) {
            this.embeddingSize = size;
            Require.notNull("where", where);
            this.stepInput = where;
            return this;
        }

        /** The reverse variance; default {@link Defaults#VARIANCE}. @param variance the choice @return this */
        public Builder variance(ReverseVariance variance) {
            Require.notNull("variance", variance);
            this.variance = variance;
            return this;
        }

        /**
         * The closed-form part of the reverse model that the network corrects (see {@link Baseline});
         * default {@link Defaults#BASELINE}.
         *
         * @param baseline the choice
         * @return this
         */
        public Builder baseline(Baseline baseline) {
            Require.notNull("baseline", baseline);
            this.baseline = baseline;
            return this;
        }

        /**
         * The coordinates the continuous columns are diffused in (see
         * {@link org.backstep.option.Coordinates}); default {@link Defaults#COORDINATES}.
         * {@link org.backstep.option.Coordinates#WHITENED} runs the chain in z = W (y - m),
         * W = Sigma^(-1/2) of the training rows' (shrunk) covariance (Kessy, Lewis &amp; Strimmer
         * 2018), with log |det W| added to every bound so figures stay in the standardized space;
         * training rows with a gap are trained on (m and Sigma by EM for the normal with missing
         * values, Little &amp; Rubin 2002, section 11.2.1; each gap drawn afresh from that Gaussian's
         * conditional at every use). Best paired with {@link Baseline#STANDARD_NORMAL}, whose zero
         * network is then the Gaussian fitted on the training rows (the default pair). Fit with
         * {@link org.backstep.option.Coordinates#STANDARDIZED} to impute by
         * {@link org.backstep.option.Conditioning#KERNEL_PRODUCT} (refused by a whitened model);
         * denoising works in either (see {@link DiffusionModel#denoise}).
         *
         * @param coordinates the choice
         * @return this
         */
        public Builder coordinates(org.backstep.option.Coordinates coordinates) {
            Require.notNull("coordinates", coordinates);
            this.coordinates = coordinates;
            return this;
        }

        /**
         * How the real continuous columns are mapped into the model space (see {@link Marginals});
         * default {@link Defaults#MARGINALS}. {@link Marginals#STANDARDIZED} standardizes each
         * column; {@link Marginals#NORMAL_SCORES} maps it to the normal scores of its kernel-smoothed
         * distribution function (a Gaussian copula, Liu, Lafferty &amp; Wasserman 2009), the
         * bandwidth chosen by the cross-validated likelihood of the closed-form part;
         * {@link Marginals#CHOSEN} scores both families by that criterion and, when normal scores
         * win it, trains one model of each and keeps the one with the lower mean exact bound on the
         * complete checkpoint rows ({@link Defaults#MARGINALS_COMPARISON_DRAWS} draws per term, the
         * control variates at every step): 3.4 times a standardized fit on breast_cancer (two fits and
         * the criterion; diffusion-bench/results/marginals.txt), one fit and the criterion when the
         * criterion keeps the standardized maps. Columns named by {@link #logColumns(String...)}
         * stay log-standardized, integer, binary and categorical columns are untouched, and
         * {@link #fit(Table, TableTransform)} uses the transforms it is given. Denoising needs
         * standardized maps: fit with {@link Marginals#STANDARDIZED} to denoise.
         *
         * @param marginals the choice
         * @return this
         */
        public Builder marginals(Marginals marginals) {
            Require.notNull("marginals", marginals);
            this.marginals = marginals;
            return this;
        }

        /** The training objective; default {@link Defaults#LOSS}. @param loss the choice @return this */
        public Builder loss(TrainingLoss loss) {
            Require.notNull("loss", loss);
            this.loss = loss;
            return this;
        }

        /** lambda of the hybrid loss; default {@link Defaults#HYBRID_WEIGHT}. @param lambda above 0 @return this */
        public Builder hybridWeight(double lambda) {
            this.hybridWeight = lambda;
            return this;
        }

        /** How t is drawn; default {@link Defaults#STEP_SAMPLING}. @param sampling the choice @return this */
        public Builder stepSampling(StepSampling sampling) {
            Require.notNull("sampling", sampling);
            this.stepSampling = sampling;
            return this;
        }

        /** Adam's step size; default {@link Defaults#LEARNING_RATE}. @param rate above 0 @return this */
        public Builder learningRate(double rate) {
            this.learningRate = rate;
            return this;
        }

        /** How the step size changes over training; default {@link Defaults#LEARNING_RATE_SCHEDULE}. @param schedule the schedule @return this */
        public Builder learningRateSchedule(LearningRateSchedule schedule) {
            Require.notNull("schedule", schedule);
            this.learningRateSchedule = schedule;
            return this;
        }

        /** Adam's moments; defaults {@link Defaults#ADAM_BETA1}, {@link Defaults#ADAM_BETA2}, {@link Defaults#ADAM_EPSILON}. @param beta1 in [0, 1) @param beta2 in [0, 1) @param epsilon above 0 @return this */
        public Builder adam(double beta1, double beta2, double epsilon) {
            this.adamBeta1 = beta1;
            this.adamBeta2 = beta2;
            this.adamEpsilon = epsilon;
            return this;
        }

        /** Decoupled weight decay (AdamW, Loshchilov &amp; Hutter 2019, algorithm 2 with eta_t = 1: each update takes the share lambda off every weight); default {@link Defaults#WEIGHT_DECAY}. @param decay lambda, in [0, 1) @return this */
        public Builder weightDecay(double decay) {
            this.weightDecay = decay;
            return this;
        }

        /** Decay of the weights' moving average; default {@link Defaults#EMA_DECAY}. @param decay in [0, 1) @return this */
        public Builder emaDecay(double decay) {
            this.emaDecay = decay;
            return this;
        }

        /** Rows per minibatch; default {@link Defaults#BATCH_SIZE}. @param rows at least 1 @return this */
        public Builder batchSize(int rows) {
            this.batchSize = rows;
            return this;
        }

        /** Passes over the training rows; default from {@link Defaults#TRAINING_STEPS}. @param epochs at least 1 @return this */
        public Builder epochs(int epochs) {
            this.epochs = epochs;
            return this;
        }

        /** Share of rows set aside as checkpoint rows (on which the kept weights are chosen) when none are given; default {@link Defaults#CHECKPOINT_FRACTION}. @param fraction in [0, 0.9] @return this */
        public Builder checkpointFraction(double fraction) {
            this.checkpointFraction = fraction;
            return this;
        }

        /** Epochs between held-out evaluations; default epochs / {@link Defaults#EVALUATIONS}. @param epochs at least 1 @return this */
        public Builder evaluateEvery(int epochs) {
            this.evaluateEvery = epochs;
            return this;
        }

        /**
         * The minibatch updates the default epoch count aims at, epochs = ceil(trainingSteps /
         * minibatches per epoch), used when {@link #epochs(int)} is not set; default
         * {@link Defaults#TRAINING_STEPS}.
         *
         * @param updates at least 1
         * @return this
         */
        public Builder trainingSteps(int updates) {
            this.trainingSteps = updates;
            return this;
        }

        /**
         * How many times the checkpoint bound is evaluated over a run when
         * {@link #evaluateEvery(int)} is not set; default {@link Defaults#EVALUATIONS}.
         *
         * @param count at least 1
         * @return this
         */
        public Builder evaluations(int count) {
            this.evaluations = count;
            return this;
        }

        /** Draws of x_t per term of the steady checkpoint score the kept weights are chosen by; default {@link Defaults#CHECKPOINT_DRAWS}. @param draws 1 to BoundOptions.MAX_TERM_DRAWS (checked by the fit) @return this */
        public Builder checkpointDraws(int draws) {
            this.checkpointDraws = draws;
            return this;
        }

        /**
         * Checkpoint evaluations without a lower score before training stops early, keeping the best
         * weights; default {@link Defaults#PATIENCE} (5, a quarter of the default evaluations; its
         * Javadoc has the measurement); 0 trains every planned update. Counted in evaluations, so set it
         * with {@link #evaluateEvery(int)} or {@link #evaluations(int)}.
         *
         * @param evaluations at least 0
         * @return this
         */
        public Builder patience(int evaluations) {
            this.patience = evaluations;
            return this;
        }

        /** Continuous columns to model on a log scale (strictly positive, skewed); default none. @param names column names @return this */
        public Builder logColumns(String... names) {
            Require.notNull("names", names);
            for (int i = 0; i < names.length; i++) {
                Require.notNull("names[" + i + "]", names[i]);
            }
            this.logColumns = new LinkedHashSet<>(java.util.Arrays.asList(names));
            return this;
        }

        /** The seed of every random draw; default {@link Defaults#SEED}. @param seed any value @return this */
        public Builder seed(long seed) {
            this.seed = seed;
            return this;
        }

        /** Worker threads; default {@link Defaults#threads()}. Results are bit-identical for a fixed count. @param threads at least 1 @return this */
        public Builder threads(int threads) {
            this.threads = threads;
            return this;
        }

        /** Where progress goes; default none. @param listener the listener @return this */
        public Builder listener(TrainingListener listener) {
            Require.notNull("listener", listener);
            this.listener = listener;
            return this;
        }

        /**
         * A stop request polled after every minibatch step, for cancelling from another thread;
         * training then ends early and returns the model so far (the averaged weights are evaluated
         * on the checkpoint rows once more, and the best weights so far are kept), with the stop
         * noted in its provenance. Default never.
         *
         * @param stopRequested true when training should stop
         * @return this
         */
        public Builder stopWhen(BooleanSupplier stopRequested) {
            Require.notNull("stopRequested", stopRequested);
            this.stopRequested = stopRequested;
            return this;
        }

        /**
         * Validates every option, without training.
         *
         * @return the options a fit would use
         * @throws IllegalArgumentException naming the first bad option
         */
        public FitOptions options() {
            return options(steps);
        }

        private FitOptions options(int steps) {
            // T first, before a schedule of T betas is built; every other option is checked by
            // FitOptions, the one validation that the model file's loader shares
            Require.inRange("steps", steps, 1, Limits.MAX_STEPS);
            Require.notNull("continuousSchedule", continuousFamily);
            Require.notNull("binarySchedule", binaryFamily);
            NoiseSchedule cont = continuousSchedule != null ? continuousSchedule : continuousFamily.schedule(steps);
            Require.inRange("steps of continuousSchedule", cont.steps(), 1, Limits.MAX_STEPS);
            NoiseSchedule bin = binarySchedule != null ? binarySchedule : binaryFamily.schedule(cont.steps());
            Require.notNull("listener", listener);
            Require.notNull("stopWhen", stopRequested);
            return new FitOptions(cont, bin, hidden, embeddingSize, stepInput, variance, loss, hybridWeight,
                    stepSampling, learningRate, learningRateSchedule, adamBeta1, adamBeta2, adamEpsilon, weightDecay, emaDecay,
                    batchSize, epochs, trainingSteps, checkpointFraction, evaluateEvery, evaluations, checkpointDraws, patience,
                    logColumns, seed, threads, baseline, coordinates, marginals);
        }

        /**
         * Validates every option, draws the checkpoint rows {@link #checkpointFraction(double)}
         * (seeded), and fits.
         *
         * @param training the table to model; rows with a missing cell are trained on, their missing
         *     cells filled by stochastic EM (drawn from the model given the row's observed cells, and
         *     never a target of the loss; the provenance's notes say how many rows and cells); a row
         *     with no observed cell, or with a cell beyond the model space's range, is left out with a
         *     note; checkpoint rows with a missing cell are not used, since a bound needs every cell
         *     (when none of them is complete, they are trained on instead)
         * @return the fitted model
         * @throws IllegalArgumentException naming the first bad option or the table's problem
         */
        public DiffusionModel fit(Table training) {
            FitOptions options = options();
            Require.notNull("training", training);
            return DiffusionModel.of(MarginalChoice.fit(options, training, null, listener, stopRequested,
                    Defaults.MARGINALS_COMPARISON_DRAWS).parts());
        }

        /**
         * Validates every option and fits on the training rows with column transforms given, not
         * fitted on those rows: for a table too large for one JVM, the transforms come from
         * statistics over all of its rows ({@link TableTransform#fromStatistics}) and the network is
         * trained on a sample of them. Everything else is as {@link #fit(Table)} (checkpoint rows
         * drawn from {@code training}, rows with gaps trained on, unscorable rows left out with a
         * note); the provenance notes that the transforms were given. No maps are chosen: the
         * {@link #marginals(Marginals)} option is not used, the given transforms are.
         *
         * @param training the rows to train on, with the transform's column names and kinds;
         *     categorical cells are matched to the transform's labels by text
         * @param transform the column transforms, e.g. from {@link TableTransform#fromStatistics};
         *     its log-scale columns must be the builder's {@link #logColumns(String...)}
         * @return the fitted model
         * @throws IllegalArgumentException naming the first bad option, a column whose name or kind
         *     differs from the transform's, a log column on one side only, a label the transform
         *     does not know, or the table's problem
         */
        public DiffusionModel fit(Table training, TableTransform transform) {
            FitOptions options = options();
            Require.notNull("training", training);
            Require.notNull("transform", transform);
            if (!training.names().equals(transform.names()) || !training.kinds().equals(transform.kinds())) {
                throw new IllegalArgumentException("training has columns " + training.names() + " " + training.kinds()
                        + "; the transform has " + transform.names() + " " + transform.kinds());
            }
            Set<String> logScale = new LinkedHashSet<>();
            for (int c = 0; c < transform.names().size(); c++) {
                if (transform.transform(c).kind() == ColumnTransform.Kind.LOG_STANDARDIZE) {
                    logScale.add(transform.names().get(c));
                }
            }
            Set<String> asked = new LinkedHashSet<>(options.logColumns());
            asked.removeIf(name -> transform.names().contains(name)
                    && transform.transform(transform.names().indexOf(name)).kind() == ColumnTransform.Kind.CONSTANT);
            if (!logScale.equals(asked)) {
                throw new IllegalArgumentException("logColumns is " + options.logColumns() + " but the transform models "
                        + logScale + " on the log scale; expected the same columns (a constant column has no scale)");
            }
            return DiffusionModel.of(Trainer.fit(options, training, null, transform, listener, stopRequested, null).parts());
        }

        /**
         * Validates every option and fits, evaluating the held-out bound on the given rows.
         *
         * @param training the table to model (rows with a missing cell are trained on, as in {@link #fit(Table)})
         * @param checkpointRows rows with the same columns on which the kept weights are chosen (not trained on)
         * @return the fitted model
         * @throws IllegalArgumentException naming the first bad option or the tables' problem
         */
        public DiffusionModel fit(Table training, Table checkpointRows) {
            FitOptions options = options();
            Require.notNull("training", training);
            Require.notNull("checkpointRows", checkpointRows);
            return DiffusionModel.of(MarginalChoice.fit(options, training, checkpointRows, listener,
                    stopRequested, Defaults.MARGINALS_COMPARISON_DRAWS).parts());
        }

        /**
         * Fits one model per number of diffusion steps T, each with every other option of this
         * builder and the same budget of training, and evaluates each on held-out rows: the
         * updates and time its training took, its held-out bound in nats per dimension (over all T
         * terms, with a standard error), the quality of its samples (energy distance with a
         * permutation p-value, largest per-column Kolmogorov-Smirnov statistic) and the cost of
         * sampling at its T; recommends the smallest T whose bound lies within {@code tolerance} of
         * the best. See {@link TrainingPlan} for the formulas.
         *
         * <p>How each model is fitted: as {@link #fit(Table)} does, with checkpoint rows of
         * {@link #checkpointFraction(double)} drawn from {@code training} (the same rows for every
         * T) to keep the best averaged weights; the budget replaces {@link #epochs(int)}. The
         * held-out rows are used only for the report (at most 1,000 complete rows, spread evenly).
         * The models train in turns, each for 1/20 of its budget per round with the order rotating,
         * so that the JIT compiler's warm-up and any busy spell of the machine fall on every model
         * alike (all of them are held in memory at once). The {@link #listener(TrainingListener)
         * listener} hears the whole plan: {@code step} and {@code totalSteps} count the updates of
         * all models together (for a wall-clock budget the total is estimated from the pace so far),
         * {@code secondsLeft} the plan's training time left; the other fields are those of the model
         * that reported.
         *
         * <p>Determinism: with {@link TrainingBudget#updates(int)} the same seed and thread count give
         * the same table except its timing columns; with {@link TrainingBudget#wallClock} the number
         * of updates depends on the machine's speed and load, and every figure with it. Tests and
         * CI should use an update budget.
         *
         * <p>Cost: the training budget times the number of T values, plus for each model an exact
         * bound (T network evaluations per held-out row) and one sampling run (the same).
         *
         * @param training the table to model (rows with a missing cell are trained on, as in {@link #fit(Table)})
         * @param heldOut rows not trained on, with the training table's columns; at least 2 complete rows
         * @param budget the training each model gets
         * @param tolerance in nats per dimension, at least 0
         * @param stepCounts the values of T, each at least 2, distinct, in any order
         * @return the table of findings and the recommended T
         * @throws IllegalArgumentException naming the first bad argument or option, before any training
         * @throws java.util.concurrent.CancellationException if {@link #stopWhen(BooleanSupplier)} asked to stop
         */
        public TrainingPlan planTraining(Table training, Table heldOut, TrainingBudget budget, double tolerance,
                                         int... stepCounts) {
            Require.notNull("training", training);
            Require.notNull("heldOut", heldOut);
            Require.notNull("budget", budget);
            Require.nonNegative("tolerance", tolerance);
            Require.notNull("stepCounts", stepCounts);
            Require.atLeast("number of stepCounts", stepCounts.length, 1);
            for (int i = 0; i < stepCounts.length; i++) {
                Require.atLeast("stepCounts[" + i + "]", stepCounts[i], 2);
            }
            int[] ts = stepCounts.clone();
            java.util.Arrays.sort(ts);
            for (int i = 1; i < ts.length; i++) {
                if (ts[i] == ts[i - 1]) {
                    throw new IllegalArgumentException("stepCounts lists T = " + ts[i] + " twice; expected distinct values");
                }
            }
            if (continuousSchedule != null || binarySchedule != null) {
                throw new IllegalArgumentException((continuousSchedule != null ? "continuousSchedule" : "binarySchedule")
                        + " is an explicit schedule of fixed T; planTraining varies T, so choose a schedule family");
            }
            List<FitOptions> perSteps = new java.util.ArrayList<>();
            for (int t : ts) {
                perSteps.add(options(t));
            }
            Trainer.checkSameLayout(training, heldOut, "heldOut");
            Require.atLeast("complete rows of heldOut", heldOut.completeRows().rows(), 2);
            for (String name : logColumns) {
                if (!training.names().contains(name)) {
                    throw new IllegalArgumentException("logColumns names '" + name
                            + "', which is not a column of training " + training.names());
                }
            }
            return StepPlanner.planTraining(perSteps, training, heldOut, budget, Defaults.PLANNER_ROUNDS, tolerance,
                    listener, stopRequested);
        }
    }
}
