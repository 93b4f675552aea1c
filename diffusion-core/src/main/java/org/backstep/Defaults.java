package org.backstep;

import org.backstep.option.LearningRateSchedule;
import org.backstep.option.ReverseVariance;
import org.backstep.option.ScheduleFamily;
import org.backstep.option.StepSampling;
import org.backstep.option.TrainingLoss;

import org.backstep.net.TimeConditioning;

/**
 * The one place where every default of {@link Backstep.Builder} is kept. Each builder option links
 * here. The defaults fit a small table (hundreds to tens of thousands of rows, up to a few dozen
 * columns) on two cores without tuning.
 */
public final class Defaults {

    private Defaults() {
    }

    /**
     * T, the number of diffusion steps of both kinds of column. Measured on 2-D Gaussian data
     * (4,000 training rows, hidden 64 x 2, 100 epochs, bound loss, 4,000 held-out rows): the
     * held-out bound was 0.07 nats per record above the exact negative log-likelihood with T = 100
     * and 0.15 with T = 1000 (0.09 with importance-sampled t), because with a CPU's training budget
     * each of 1,000 steps is learned less well; T = 100 also makes exact bounds ten times cheaper.
     */
    public static final int STEPS = 100;
    /**
     * Continuous columns use the linear schedule of Ho et al. 2020 (rescaled by 1000/T). Measured:
     * with the cosine schedule (Nichol &amp; Dhariwal 2021) the last beta is clipped at 0.999, so
     * sqrt(alpha_T) = 0.03 and the reverse mean (x_t - beta_t/sqrt(1 - alpha-bar_t) eps-hat)/sqrt(alpha_t)
     * multiplies a network's epsilon error by about 30 there; on 2-D Gaussian data (T = 100, bound
     * loss) the held-out bound came out 0.47 nats above the exact NLL with the cosine schedule and
     * 0.07 with the linear one (1.85 against 0.15 at T = 1000 with the hybrid loss). The cosine schedule stays
     * available by {@link Backstep.Builder#continuousSchedule(ScheduleFamily)}.
     */
    public static final ScheduleFamily CONTINUOUS_SCHEDULE = ScheduleFamily.LINEAR;
    /** Binary columns use the binomial schedule (Sohl-Dickstein et al. 2015). */
    public static final ScheduleFamily BINARY_SCHEDULE = ScheduleFamily.BINOMIAL;
    /** Hidden widths of the estimator. */
    public static final int[] HIDDEN = {256, 256, 256};
    /** Size of the sinusoidal embedding of t. */
    public static final int EMBEDDING_SIZE = 32;
    /** The embedding of t enters every hidden block. */
    public static final TimeConditioning CONDITIONING = TimeConditioning.EVERY_BLOCK;
    /** Learned variances, so that the bound is tight (Nichol &amp; Dhariwal 2021, section 3.1). */
    public static final ReverseVariance VARIANCE = ReverseVariance.LEARNED;
    /**
     * The variational bound itself. Measured on 2-D Gaussian data (T = 100, hidden 64 x 2,
     * 100 epochs, 4,000 held-out rows, standard error about 0.03): the held-out bound was 0.07
     * nats above the exact negative log-likelihood with the bound loss, 0.08 with the hybrid loss
     * (Nichol &amp; Dhariwal 2021) and 0.12 with the simple loss and fixed variances. A likelihood
     * library defaults to the tightest; {@link TrainingLoss#HYBRID} is as good within noise.
     */
    public static final TrainingLoss LOSS = TrainingLoss.BOUND;
    /** lambda of the hybrid loss (Nichol &amp; Dhariwal 2021, section 3.1). */
    public static final double HYBRID_WEIGHT = 0.001;
    /** t uniform. */
    public static final StepSampling STEP_SAMPLING = StepSampling.UNIFORM;
    /**
     * Adam's step size (at the start of the cosine schedule). Measured on the demo's reefer table
     * (3,468 complete training rows, 7 columns, hidden 256 x 3, 300 epochs, held-out bound in nats
     * per record, model space, lower is better): constant 2e-3: -1.07; cosine from 1e-3: -0.43;
     * from 2e-3: -1.31; from 3e-3: -1.51 and -1.49 (two seeds).
     */
    public static final double LEARNING_RATE = 3e-3;
    /** Cosine annealing of the step size over the planned steps. */
    public static final LearningRateSchedule LEARNING_RATE_SCHEDULE = LearningRateSchedule.COSINE;
    /** Adam's beta_1 (Kingma &amp; Ba 2015). */
    public static final double ADAM_BETA1 = 0.9;
    /** Adam's beta_2 (Kingma &amp; Ba 2015). */
    public static final double ADAM_BETA2 = 0.999;
    /** Adam's epsilon (Kingma &amp; Ba 2015). */
    public static final double ADAM_EPSILON = 1e-8;
    /** Decoupled weight decay (Loshchilov &amp; Hutter 2019); off. */
    public static final double WEIGHT_DECAY = 0.0;
    /**
     * Decay of the exponential moving average of the weights; during warm-up the decay of update n
     * is min(EMA_DECAY, (1 + n)/(10 + n)), so that a short run's average is not mostly the random
     * starting weights (common practice, no source).
     */
    public static final double EMA_DECAY = 0.995;
    /** Rows per minibatch (fewer when the table is smaller). */
    public static final int BATCH_SIZE = 256;
    /** Minibatch steps the default epoch count aims at: epochs = ceil(TRAINING_STEPS / batches per epoch). */
    public static final int TRAINING_STEPS = 4000;
    /** Share of rows drawn for validation when no validation table is given. */
    public static final double VALIDATION_FRACTION = 0.1;
    /** The held-out bound is evaluated this many times over a run (every epochs/EVALUATIONS epochs). */
    public static final int EVALUATIONS = 20;
    /** Steps drawn per record for the Monte Carlo held-out bound during training. */
    public static final int VALIDATION_DRAWS = 32;
    /** Evaluations without improvement before early stopping; 0 turns it off. */
    public static final int PATIENCE = 0;
    /** The seed. */
    public static final long SEED = 1L;

    /** @return min(2, available processors): two cores is the machine Backstep is tuned for */
    public static int threads() {
        return Math.max(1, Math.min(2, Runtime.getRuntime().availableProcessors()));
    }
}
