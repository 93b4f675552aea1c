package org.backstep;

import org.backstep.option.BoundOptions;
import org.backstep.option.Conditioning;
import org.backstep.option.DenoisingOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.LearningRateSchedule;
import org.backstep.option.DriftOptions;
import org.backstep.option.FlowOptions;
import org.backstep.option.MissingCells;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.ScoreSource;
import org.backstep.option.SurprisalOptions;
import org.backstep.option.ThresholdRule;
import org.backstep.table.Table;

import java.util.List;
import org.backstep.option.Baseline;
import org.backstep.option.ReverseVariance;
import org.backstep.option.ScheduleFamily;
import org.backstep.option.StepSampling;
import org.backstep.option.TrainingLoss;

import org.backstep.option.StepInput;

/**
 * The one place where every default is kept: the options of {@link Backstep.Builder} and of every
 * job of a {@link DiffusionModel} (bound, imputation, denoising, screening, planning). Each option
 * links here; the factories ({@link #imputation()}, {@link #denoising(double...)}, {@link #screening()},
 * {@link #bound()}) return the option values with every default filled in. The defaults fit a small table (hundreds to tens of thousands of rows, up to a few dozen
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
    public static final List<Integer> HIDDEN = List.of(256, 256, 256);
    /** Size of the sinusoidal embedding of t. */
    public static final int EMBEDDING_SIZE = 32;
    /** The embedding of t enters every hidden block. */
    public static final StepInput STEP_INPUT = StepInput.EVERY_BLOCK;
    /** Learned variances, so that the bound is tight (Nichol &amp; Dhariwal 2021, section 3.1). */
    public static final ReverseVariance VARIANCE = ReverseVariance.LEARNED;
    /**
     * {@link Baseline#STANDARD_NORMAL}, paired with {@link #COORDINATES} = WHITENED: a network that
     * adds nothing reproduces the Gaussian fitted on the training rows, and the network corrects it
     * where the data say so. Measured (diffusion-bench/results/whitened-model.txt and
     * diffusion-bench/results/default-whitened.txt; held-out exact bound, nats per record in
     * SOURCES.md's space, 2 fit seeds at the default budget): see {@link #COORDINATES}. Measured
     * alone, in standardized coordinates (diffusion-bench/results/baseline-levers.txt):
     * {@link Baseline#NONE} iris 2.82, breast_cancer 1.08, diabetes without SEX 9.42, 13-dimensional
     * Gaussian data +0.28 nats from the fitted Gaussian; STANDARD_NORMAL 2.87 (a tie within the fit
     * seeds' spread of 0.2), 0.60, 9.25, +0.06; {@link Baseline#FITTED_GAUSSIAN} 2.76, 2.7 (worse:
     * nearly collinear columns, whose exact reverse kernels diagonal kernels cannot follow), 9.23,
     * +0.02.
     */
    public static final Baseline BASELINE = Baseline.STANDARD_NORMAL;
    /**
     * Whitened coordinates ({@link org.backstep.option.Coordinates#WHITENED}), with
     * {@link #BASELINE} = STANDARD_NORMAL. Measured (diffusion-bench/results/whitened-model.txt;
     * default budget, 2 fit seeds, held-out exact bound in nats per record in SOURCES.md's space;
     * the losing candidate, standardized coordinates without a closed-form part, the defaults
     * before, in brackets): breast_cancer -0.33 (1.08; Gaussian mixture 0.59), diabetes without
     * SEX 7.77 (9.42; Gaussian mixture 8.49), 13-dimensional Gaussian data with 1,424 training rows
     * +0.002 nats from the fitted Gaussian (+0.28), imputation RMSE 0.316 and 0.664 (0.358 and
     * 0.672); iris 2.86 (2.82: a tie within the fit seeds' spread of 0.2). Training rows with a gap
     * are trained on (the mean and covariance by EM for the normal with missing values, the gaps
     * drawn afresh from its conditional at every use; see {@link Backstep.Builder#coordinates}).
     * Imputation with {@link Conditioning#KERNEL_PRODUCT} needs a model fitted with
     * {@link org.backstep.option.Coordinates#STANDARDIZED} (asked for at the fit: the imputation
     * refuses it on a whitened model, naming both options). Denoising readings of correlated columns
     * with independent noise per column releases each direction of the noise's eigenbasis at its own
     * level (see DiffusionModel#denoise); on the demo's fleet a whitened fit denoised to 0.70 to 0.72
     * noise sd against 0.65 to 0.69 for a standardized one (3 seeds; 4.02 before the per-direction
     * release; diffusion-bench/results/denoise-whitened.txt). Default
     * fit seconds (2 fit seeds, 2 threads, a machine shared with other helpers at load 15 to 20, so
     * inflated): iris 37, breast_cancer 84, diabetes without SEX 50, digits_binary 102 (unchanged
     * model, 15 s in an earlier run on a lighter load); see diffusion-bench/results/default-whitened.txt.
     */
    public static final org.backstep.option.Coordinates COORDINATES = org.backstep.option.Coordinates.WHITENED;
    /**
     * The maps of the real continuous columns chosen at fit time
     * ({@link org.backstep.option.Marginals#CHOSEN}): the K-fold cross-validated log-likelihood of
     * the zero-network model (the Gaussian of the whitening, in the caller's units with the maps'
     * exact log-Jacobian; {@link org.backstep.table.MarginalCriterion}) scores the standardized maps
     * and the normal scores at bandwidths of {@link org.backstep.table.MarginalCriterion#MULTIPLES}
     * times Silverman's rule; when normal scores win there, one model of each family is trained and
     * the lower bound on the checkpoint rows decides ({@link #MARGINALS_COMPARISON_DRAWS}); on Gaussian
     * columns the criterion keeps standardization (a gain of at most 0.001 nats, below its 0.05). Measured
     * (diffusion-bench/results/marginals.txt; density only, 2 bound seeds, a loaded machine; in brackets
     * the losing candidate {@link org.backstep.option.Marginals#STANDARDIZED}, the defaults before):
     * breast_cancer -2.92 with fit seed 1 (-0.31) and -1.46 with seed 2 (-0.34 in results/quality.txt),
     * normal scores kept at 4 and 8 times Silverman's bandwidth; iris 2.89 and 2.83 and diabetes without
     * SEX 7.70, the standardized maps kept (unchanged). The other losing candidate,
     * {@link org.backstep.option.Marginals#NORMAL_SCORES} always: iris 3.41 (2.89), breast_cancer -2.92.
     * No fixed bandwidth suited every table (the quality benchmark's levers of 1, 2, 4, 8 times
     * Silverman's rule outside the library: breast_cancer -0.36 to -3.47, diabetes 7.88 to 8.49 against
     * 7.74). Cost: two fits when normal scores win the criterion; breast_cancer's fit took 120 s against
     * 35 s for standardized maps in one run at load about 6 (the criterion 20 s, the comparison 9 s).
     * With the default weight decay and the steady checkpoint too (diffusion-bench/results/quality.txt,
     * load 1.5 to 1.9): breast_cancer -3.67 and -2.19 by fit seed in 48.6 and 43.7 s, diabetes two
     * fits in 26 to 27 s (standardized kept), iris 11 to 13 s. Not measured per column (one bandwidth
     * multiple for every column). The README's open-data table (a smaller budget) at the same
     * defaults: iris 2.991, breast_cancer -2.548, diabetes 7.967; an earlier run there, without the
     * decay and the steady checkpoint, kept normal scores on diabetes, which its test rows scored 0.42
     * nats worse (8.664 against 8.247).
     */
    public static final org.backstep.option.Marginals MARGINALS = org.backstep.option.Marginals.CHOSEN;
    /**
     * The draws per term of the exact bound with the control variates at every step
     * ({@code BoundOptions.exact().withTermDraws(K).withLinearization(true)}) on which
     * {@link #MARGINALS} = CHOSEN compares its two models on the checkpoint rows: 4. With 16 such
     * draws the per-record sd was 0.073 / 0.076 / 0.038 nats on iris, breast_cancer and diabetes
     * (diffusion-bench/results/steady-score.txt), so with 4 about twice that, and the mean over 12 to
     * 57 checkpoint rows moves by 0.02 to 0.04 nats, below the gaps it decides (0.1 to 3 nats). Not the
     * allocated steady bound: its profile of each model (64 records of its own) cost ten times the
     * scores of so few rows (breast_cancer's fit took 3.5 times a standardized fit with it, on a loaded machine).
     */
    public static final int MARGINALS_COMPARISON_DRAWS = 4;
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
    /**
     * Decoupled weight decay (Loshchilov &amp; Hutter 2019, algorithm 2 with eta_t = 1): each update
     * takes the share 3e-4 off every weight, so that a weight no gradient holds up ends a default
     * fit (4,000 updates) at (1 - 3e-4)^4000 = 0.30 of where it started. With the defaults'
     * whitened coordinates and {@link Baseline#STANDARD_NORMAL} part a zero network is the Gaussian
     * fitted on the training rows, so the decay shrinks the model toward that Gaussian, and the
     * network keeps only the corrections the data keep asking for (our reading). That is not what
     * decides whether it pays (diffusion-bench/results/decay-part.txt): in standardized coordinates
     * without a part it lowered the held-out bound of the open tables too (iris 2.72 to 2.65, within
     * the bound's noise, breast_cancer 1.08 to -0.66, diabetes without SEX 9.35 to 8.89, mean of fit
     * seeds 1 and 2),
     * and it raised the bound of the demo's invented reefer fleet with or without the part (the
     * demo's standardized fit 0.35 / 0.16 to 1.46 / 1.73 nats per record at seeds 1 / 2; the
     * defaults' 9.91 / 10.07 to 10.33 / 10.52 in original units), whose nearly deterministic
     * columns may need large weights (our untested reading). One default for every fit, chosen on
     * the open tables; {@code weightDecay(0)} where a held-out bound says so.
     *
     * <p>Measured at the defaults of 2026-12-03 (diffusion-bench/results/decay.txt; quality
     * benchmark, SOURCES.md's split, held-out exact bound in nats per record, mean of 3 bound seeds;
     * fit seeds 1 / 2; decay 0 against 1e-4 against 3e-4): iris 2.92 / 2.85, 2.83 / 2.77,
     * 2.82 / 2.65; breast_cancer -0.22 / -0.28, -0.55 / -0.55, -0.85 / -0.98; diabetes without SEX
     * 7.71 / 7.83, 7.62 / 7.86, 7.63 / 7.61; digits_binary 19.20 / 19.42, 18.45 / 18.59,
     * 17.98 / 18.10: 3e-4 lower than no decay in 8 of 8 fits paired by seed (1e-4 in 7 of 8), and
     * digits_binary below issue 11's 18.59. Imputation RMSE (20 draws) within 0.006 of no decay on
     * every table and seed (breast_cancer 0.314 / 0.321 against 0.316 / 0.317), the 90% intervals'
     * coverage within 2 points on breast_cancer and diabetes; the breast_cancer screen's AUROC 0.9575
     * against 0.9586 (seed 1). The 13-D Gaussian (1,424 rows) stays +0.002 nats from the fitted
     * Gaussian (+0.003 without decay); the README's open-data table (256 x 2, 2,000 updates)
     * improved on all three tables (iris 3.013 to 2.994, breast_cancer 1.552 to 1.408, diabetes
     * 8.247 to 8.014); the 2-D Gaussian bound, the T = 10 plan and the slope of Gaussian
     * imputations (1.01), worse with 3e-4 before the flip, moved within their noise. One fit got
     * worse: {@code OpenDataBoundTest}'s iris (64 x 2, step size 1e-2, 6,000 updates of 32 rows)
     * 3.18 to 3.47 over seeds 1 to 3 (1e-4: 3.10), still below one Gaussian's 3.69: the share is
     * per update, so a longer run shrinks more. A decay scaled to the run (a fixed total shrinkage,
     * the product of (1 - lambda) over the planned updates) equals this one at every default fit
     * (each runs exactly 4,000 updates), so these tables cannot tell them apart; on that test it
     * would be 2e-4 (3.31, still worse), so it was not adopted. 1e-3 was too strong at 4,000
     * updates before the flip (diffusion-bench/results/fit-size.txt: iris 3.68, diabetes 7.67).
     */
    public static final double WEIGHT_DECAY = 3e-4;
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
    public static final double CHECKPOINT_FRACTION = 0.1;
    /** The held-out bound is evaluated this many times over a run (every epochs/EVALUATIONS epochs). */
    public static final int EVALUATIONS = 20;
    /**
     * Draws of x_t per term of the trainer's checkpoint score: 4. The kept weights are those with
     * the least steady score on the checkpoint rows (issue 11 item 1): the exact bound, K shifted
     * Sobol draws per term, the control variates (linearized continuous terms, the binary cells'
     * one-flip expansion) on the first tenth of the chain, the same draws at every evaluation (the
     * fit's seed + 1). A fixed plan, not the model's profile: the weights change at every
     * evaluation. The choice compares means over the checkpoint rows, so what matters is the sd of
     * that mean, a record's sd / sqrt(n) over n rows (the rows draw independently), not one record's.
     * Measured (diffusion-bench/results/steady-use.txt, default fits, SOURCES.md's test rows standing
     * in for the checkpoint rows, 3 bound seeds; n = 10% of the training rows):
     * <pre>
     *   table (n)              record sd K = 1 / 2 / 4        sd of the mean over n, K = 1 / 2 / 4
     *   iris (12)              0.247 / 0.130 / 0.106          0.071 / 0.038 / 0.031
     *   breast_cancer (45)     0.865 / 0.506 / 0.320          0.129 / 0.075 / 0.048
     *   diabetes w/o SEX (35)  0.411 / 0.246 / 0.153          0.070 / 0.042 / 0.026
     *   digits_binary (143)    0.900 / 0.615 / 0.408          0.075 / 0.051 / 0.034
     * </pre>
     * K = 4 is the least power of two below issue 11's 0.05 nats on all four (one draw per term:
     * 0.07 to 0.13). Its cost
     * per row and evaluation is 4 T + (T/10)(2 Dc + 1 + D_b) network evaluations (1,010 on
     * breast_cancer's 30 columns, against 710 at K = 1 and 33 for the former 32-step Monte Carlo
     * bound). Against that former choice, 6 seed-paired default fits (iris, breast_cancer, diabetes
     * without SEX; fit seeds 1 and 2; steady-use.txt, section 3) kept weights whose held-out bound
     * was lower by 0.049 nats on average (0, 0, 0, 0.043, 0.090, 0.159: never higher; the same weights
     * in 3 of 6) at 19% more fit CPU time (loaded machine; +5% at K = 1 in steady-score.txt). The figure is
     * an upper bound on the model's negative log-likelihood of the checkpoint rows in expectation
     * over the seed; incomplete checkpoint rows are left out (the bound needs every cell).
     */
    public static final int CHECKPOINT_DRAWS = 4;
    /**
     * Checkpoint evaluations without a lower score before training stops early, keeping the best
     * weights: 5, a quarter of the default {@link #EVALUATIONS}; 0 never stops. Training is
     * deterministic and its step-size schedule depends on the planned updates only, so a stopped run is
     * the full run cut short: it keeps the same weights whenever the full run's best evaluation comes
     * before the stop (the rule "stop after P evaluations without improvement", Prechelt 1998, "Early
     * stopping - but when?"; {@code EarlyStoppingTest}). It can only keep the same weights or worse ones,
     * so it is a saving of time, taken where the steady checkpoint score (sd of its mean 0.03 to 0.05
     * nats) made the curve reliable. Measured (diffusion-bench/results/early-stopping.txt, default fits,
     * fit seeds 1 and 2, the checkpoint score at 40 evaluations): the small tables overfit early and
     * never recover (breast_cancer's best at updates 600 and 800 of 4,000, its score then 57 and 10 nats
     * per record higher at mid-run); the longest run of evaluations without improvement that a later
     * best ended was 2 (iris, fit seed 1, the first evaluations), so 4 and 5 keep the same weights on
     * all 8 fits; patience 4 took breast_cancer's fit from 36 to 17-19 s, iris 8-22 to 5-11 s, diabetes
     * without SEX 22-36 to 16-17 s, digits_binary (best near the end) unchanged. A run whose checkpoint
     * score first rises (a high step size leaving the closed-form part's start) and wanders for longer
     * stops too soon with a short patience: {@code EarlyStoppingTest}'s small, fast-overfitting fixture
     * needs 12 evaluations of 40. Set {@code patience(0)} to train every planned update, and a larger
     * patience with {@code evaluateEvery} or {@code evaluations} above the default.
     */
    public static final int PATIENCE = 5;
    /** The seed. */
    public static final long SEED = 1L;

    /**
     * How many completions {@link DiffusionModel#impute(Table, long)} draws per incomplete record: 20,
     * enough for 90% intervals that cover about 90% when the draws are exact (from 19 draws on, with
     * the interval's ends at type-6 positions; see
     * {@link org.backstep.report.Imputation#expectedCoverage()}) and for a mean whose Monte Carlo
     * error is a quarter of the conditional spread (it adds 1/20 of the conditional variance to the
     * mean's squared error). Measured (issue 11, SOURCES.md's split, 20% of the held-out cells
     * hidden, 2 fits x 2 imputation seeds): diabetes without SEX RMSE 0.677, 0.663 and 0.660
     * standardized units with 20, 100 and 400 draws; breast_cancer 0.275 with 20 and 0.278 with 100
     * (our reading, unchecked: its skewed columns' rare far draws move a 100-draw mean as much as the
     * extra draws steady it). Kept at 20: the
     * cost is proportional to the draws (our choice); {@code withDraws(100)} for the last percent.
     */
    public static final int IMPUTATION_DRAWS = 20;
    /** The central interval of imputed cells: 90% (our choice). */
    public static final double IMPUTATION_LEVEL = 0.9;
    /**
     * Steps of the chain used by {@link DiffusionModel#impute(Table, long)}: at most this many, a
     * strided sub-schedule when T is larger.
     */
    public static final int IMPUTATION_STEPS = 100;
    /**
     * Resampling rounds per step of imputation: 1, plain replacement. Measured: on Gaussian data
     * with exact reverse kernels (the Schur-complement check, 400 records, 100 draws) plain
     * replacement gave a conditional variance 8-10% above the exact one with 90% intervals covering
     * 90%, and 5 resampling rounds on a 50-step chain (Lugmayr et al. 2022) 1-2% above, covering
     * 89-90%; but on the demo's trained reefer model, resampling collapsed the draws of the two
     * strongly tied air temperatures (90% intervals covered 54% of hidden truths, against 82% with
     * plain replacement). Plain replacement is the robust default; its cost on the exact-kernel
     * model is imputed means that follow the observed cells with a slope 0.77 of the exact one,
     * 0.93 with 3 rounds (imputation-methods.txt, see {@link #IMPUTATION_CONDITIONING}). Checked
     * again on the demo's trained model (600 hidden cells, 20 draws, 100 steps): 1, 3 and 5 rounds
     * gave errors of 0.446, 0.362 and 0.353 column sd and 90% coverage of 80%, 57% and 50% (a
     * perfect model's 20-draw intervals covered about 81% with the type-7 ends of then, 90% with
     * today's, {@link org.backstep.report.Imputation#expectedCoverage()});
     * {@link ImputationOptions#withRounds(int)} chooses rounds.
     */
    public static final int IMPUTATION_ROUNDS = 1;
    /**
     * How imputation holds the chain to the observed cells: replacement. Measured on exact-kernel
     * models (no training, T = 1000, 400 records, 100 draws; the table and how to rerun it are in
     * diffusion-core/src/test/resources/org/backstep/imputation-methods.txt). At the same cost (the
     * same estimator evaluations) replacement was closer to the exact conditional than the kernel
     * product in every case measured. On 2-D Gaussian data (x2 given x1, against the Schur
     * complement), 100 steps, no resampling: variance ratio 1.08 against 1.19 (1.10 against 1.21 at
     * 1000 steps), slope of the imputed on the exact means 0.77 against 0.61, per-record mean error
     * 0.17 against 0.29 conditional sd, average mean error -0.002 against -0.017 sd, coverage of the
     * 90% intervals 0.90 for both; with 3 rounds replacement came to 1.02 and 0.045 sd, the kernel
     * product to 1.05 and 0.10 sd. On a continuous column given an observed binary one both were
     * too wide (variance ratio 1.33 against 1.43; slope 0.49 against 0.44), and a binary column
     * given a continuous one had per-record errors of 0.10 against 0.13 in probability. Wall time
     * showed no consistent difference. The kernel product stays available by
     * {@link ImputationOptions#withMethod(Conditioning)}.
     */
    public static final Conditioning IMPUTATION_CONDITIONING = Conditioning.REPLACEMENT;
    /** Steps of the denoising chain below its starting step, at most (as {@link #IMPUTATION_STEPS}). */
    public static final int DENOISING_STEPS = 100;
    /** Posterior draws per reading when denoising: 20 (as {@link #IMPUTATION_DRAWS}). */
    public static final int DENOISING_DRAWS = 20;
    /** The screen flags records past this quantile of the held-out scores: 0.99 (our choice). */
    public static final double SCREENING_QUANTILE = 0.99;
    /**
     * Steps drawn per record in the Monte Carlo bound of {@link #drift()} and of the former default
     * screen, {@code screening().withBound(BoundOptions.sampled(SCREENING_DRAWS))}: 128, capped at T
     * (so T draws at the default T = 100). A screen now scores by the steady bound
     * ({@link #screening()}); this bound stays the drift tests' (which compare two batches' score
     * distributions, where a record's noise averages out) and the cheap screen's: 48 to 139 times
     * less CPU time per record than the steady screen (see {@link #screening()}), with scores that move by 2.5
     * to 40.5 nats per record from seed to seed and AUROCs that moved by up to 0.021 between two seeds.
     */
    public static final int SCREENING_DRAWS = 128;
    /**
     * Draws per cell of the per-column surprisal: 128. Measured on exact normal draws: the figure's
     * rms noise is 0.14, 0.11 and 0.08 nats at the centre with 64, 128 and 256 draws, 0.43, 0.30 and
     * 0.23 at 2 sd ({@code SurprisalEstimatorTest} for 128).
     */
    public static final int SURPRISAL_DRAWS = 128;
    /**
     * Steps of the surprisal's imputation chain, at most: 50. Measured on the 3-D Gaussian oracle
     * (128 draws, 3 rounds, 90 cells): rms error 0.27 nats with 50 steps, 0.31 with 100, at
     * half the cost.
     */
    public static final int SURPRISAL_STEPS = 50;
    /**
     * Resampling rounds per step of the surprisal's imputation: 3. Measured on the 3-D Gaussian
     * oracle (128 draws, 50 steps): rms error 0.27 nats and mean error 0.07 with 3 rounds, 0.47 and
     * 0.19 with 1, where the draws follow the other cells too weakly. Not measured on a trained
     * model, where rounds narrowed imputed intervals (see {@link #IMPUTATION_ROUNDS}): there a
     * figure may come out too high.
     */
    public static final int SURPRISAL_ROUNDS = 3;
    /**
     * The step counts {@link DiffusionModel#planSteps} tries by default, besides T itself: 10, 25,
     * 50, 100 and 250 (those below T), a spread of a decade and a half.
     */
    public static final List<Integer> PLANNER_STEP_COUNTS = List.of(10, 25, 50, 100, 250);
    /**
     * The training plan fits its models in turns: each model trains for 1/PLANNER_ROUNDS of its
     * budget per round, the order rotating from round to round, so that the JIT compiler's warm-up
     * (measured: on the demo's table the first 2,000 or so updates in a fresh JVM ran up to 1.6
     * times slower than later ones) and any busy spell of the machine fall on every model alike.
     */
    public static final int PLANNER_ROUNDS = 20;

    /**
     * The relative tolerance of the probability-flow likelihood's integrator
     * ({@link DiffusionModel#flowLikelihood(Table)}). Measured: see {@link #FLOW_ABSOLUTE_TOLERANCE}.
     */
    public static final double FLOW_RELATIVE_TOLERANCE = 1e-5;
    /**
     * The absolute tolerance of the probability-flow likelihood's integrator (model-space units and
     * nats). Measured on default fits of iris, diabetes (SEX left out) and breast_cancer (held-out
     * records, diffusion-bench/results/flow-likelihood.txt): against tolerances of 1e-8 the
     * per-record figures moved by at most 1.7e-6 and 2.7e-3 nats on the first two, and on
     * breast_cancer by 1.4e4 on a record whose figure is of order 1e8 (the relative tolerance
     * holds); about 700 evaluations per record, one Dormand-Prince step per segment.
     */
    public static final double FLOW_ABSOLUTE_TOLERANCE = 1e-5;

    /**
     * @return the exact bound over all T steps, one draw of x_t per term, what
     *     {@link DiffusionModel#bound(Table, long)} computes. It stays the default of {@code bound}
     *     because the steady bound ({@link #steadyBound()}) costs 6 to 73 times the CPU time
     *     (diffusion-bench/results/steady-use.txt); its noise, 0.4 to 2.4 nats per record on default
     *     fits, averages away in a mean over many records. The screen and the trainer's checkpoint
     *     choice, which rank single records or compare two means, use the steady score.
     */
    public static BoundOptions bound() {
        return BoundOptions.exact();
    }

    /**
     * The most draws of x_t per term, on average, of the steady bound ({@link #steadyBound()}):
     * 256, the cap of its variance target {@link #STEADY_RECORD_SD}. The four tables of issue 11 need
     * 9 to 124 at the target (diffusion-bench/results/steady-use.txt: iris 9, diabetes 13,
     * breast_cancer 49, digits_binary 124); the cap, about twice the most measured, keeps a model
     * whose profile is far noisier from costing more than 256 T draws per record (past it the
     * plan is {@code BoundOptions.steady(256)} and the sd above the target).
     *
     * <p>Measured before the target, as a fixed mean K ({@code BoundOptions.steady(K)}: shifted
     * Sobol points, the control variates, the draws allocated by the model's own profile of its
     * terms, K_t proportional to each term's spread, Neyman allocation, Cochran 1977, section 5.5;
     * the control variates only at the steps where they save more draws than they cost;
     * diffusion-bench/results/steady-score.txt, test rows, per-record sd over 3 bound seeds, CPU
     * against the one-draw bound's in the same run; "uniform": K draws and the control variate at
     * every step; "whitened" is today's default coordinates):
     * <pre>
     *   table                 one draw  uniform K = 64   uniform K = 32   allocated 16    allocated 32    allocated 64
     *   iris                  1.89      0.024 (x28)      -                0.041 (x10)     0.023 (x19)     0.016 (x25)
     *   breast_cancer         5.75      0.036 (x66)      -                0.067 (x31)     0.048 (x35)     0.032 (x57)
     *   diabetes w/o SEX      3.30      0.019 (x42)      -                0.032 (x12)     0.020 (x23)     0.014 (x39)
     *   iris, whitened        0.44      -                0.048 (x13)      0.037 (x4.6)    0.023 (x9.1)    0.016 (x11)
     *   breast, whitened      2.38      -                0.079 (x37)      0.072 (x12)     0.053 (x19)     0.034 (x33)
     *   diabetes, whitened    1.22      -                0.047 (x23)      0.033 (x9.2)    0.024 (x16)     0.014 (x31)
     *   digits_binary         2.15      0.179 (x29, no control variate)   0.102 (x16)     0.071 (x23)     0.052 (x40)
     * </pre>
     * At the same sd the allocation takes 1.2 to 1.8 times less CPU than uniform draws on the
     * standardized fits and 2.5 to 3.1 times less on the whitened ones. No fixed K suits every table:
     * K = 64 left digits_binary at 0.052 (0.055 on all 360 of its test rows) and gave iris and
     * diabetes three times less noise than needed at 4.5 and 4.7 times the draws of the target.
     * Cost per record and step: K_t, plus 2 Dc + 1 + D_b network evaluations where the control
     * variates run; the profile itself, once per model, costs about as much as scoring 20 to 45
     * records at K = 64 (64 records drawn by the model, 4 draws per term, with and without the
     * control variates).
     */
    public static final int STEADY_TERM_DRAWS = 256;

    /**
     * The per-record sd, nats, the steady bound's draws aim at: 0.05, issue 11's figure. The draws
     * follow from the model's own profile of its terms (Neyman allocation with a variance target,
     * Cochran 1977, section 5.5: N = (sum_t s_t)^2 / V draws in all for V = 0.05^2,
     * {@link BoundOptions#steadyWithin}), so a quiet model gets few draws and a noisy one many,
     * instead of a fixed K. The profile's figure is that of independent draws on records the model
     * draws itself; on the test rows of the four tables the shifted Sobol points did better.
     * Measured at the defaults (diffusion-bench/results/steady-use.txt; SOURCES.md's test rows, all
     * of them; per-record sd over 3 bound seeds, rms over the records; draws per record; CPU against
     * the one-draw bound's in the same run, load average 10 to 15, so read the draws too):
     * <pre>
     *   table                  one draw   target 0.05: sd (profile predicts)   draws   CPU     allocated K = 64: sd   CPU
     *   iris                   0.441      0.043 (0.050)                        926     x5.8    0.016                  x26
     *   breast_cancer          2.382      0.039 (0.050)                        4,909   x58     0.034                  x62
     *   diabetes w/o SEX       1.219      0.038 (0.050)                        1,342   x17     0.014                  x67
     *   digits_binary          2.132      0.043 (0.050)                        12,386  x73     0.055                  x43
     * </pre>
     * Every table below 0.05, measured at 0.76 to 0.86 times the predicted figure. The score is still
     * an upper bound on the model's negative log-likelihood in expectation over the seed (each
     * term's mean over its draws is unbiased whatever the draws; the control variates have known
     * means); for one seed it is a number that moves by about 0.04 nats from seed to seed.
     */
    public static final double STEADY_RECORD_SD = 0.05;

    /**
     * @return the steady exact bound: draws allocated by the model's profile to a predicted
     *     per-record sd of {@link #STEADY_RECORD_SD}, at most {@link #STEADY_TERM_DRAWS} per term
     *     on average (an upper bound on the negative log-likelihood in expectation over the seed,
     *     with a measured seed-to-seed sd of 0.038 to 0.043 nats per record on iris, breast_cancer,
     *     diabetes and digits_binary)
     */
    public static BoundOptions steadyBound() {
        return BoundOptions.steadyWithin(STEADY_RECORD_SD, STEADY_TERM_DRAWS);
    }

    /**
     * A screen scores by the bound (the steady bound, {@link #steadyBound()}, with common random numbers), not
     * by the flow likelihood ({@link ScreeningOptions#withFlow}). Measured
     * (diffusion-bench/results/flow-likelihood.txt, default fits, held-out rows of SOURCES.md's
     * split): as an anomaly score on breast_cancer (benign normal) the flow ranked worse, AUROC
     * 0.941 against 0.962 for one exact bound and 0.969 for the mean of 5; it costs 150 to 360
     * times the CPU time of an exact bound; and on diabetes and breast_cancer it gives a few
     * held-out records figures far above their bound (the flow amplifies the network's errors off
     * the training data). The flow's figure is deterministic, the bound's (with common random
     * numbers) a fixed function of the record and the seed.
     */
    public static final ScoreSource SCREENING_SCORE = ScoreSource.BOUND;

    /** @return the integrator tolerances {@link #FLOW_RELATIVE_TOLERANCE} and {@link #FLOW_ABSOLUTE_TOLERANCE} */
    public static FlowOptions flow() {
        return FlowOptions.of(FLOW_RELATIVE_TOLERANCE, FLOW_ABSOLUTE_TOLERANCE);
    }

    /**
     * @return {@link #IMPUTATION_DRAWS} draws, a {@link #IMPUTATION_LEVEL} interval, at most
     *     {@link #IMPUTATION_STEPS} steps, {@link #IMPUTATION_ROUNDS} round, by
     *     {@link #IMPUTATION_CONDITIONING}
     */
    public static ImputationOptions imputation() {
        return new ImputationOptions(IMPUTATION_DRAWS, IMPUTATION_LEVEL, IMPUTATION_STEPS, IMPUTATION_ROUNDS,
                IMPUTATION_CONDITIONING);
    }

    /**
     * @param noiseSd the noise standard deviation of each column in original units
     * @return {@link #DENOISING_DRAWS} draws on at most {@link #DENOISING_STEPS} steps
     */
    public static DenoisingOptions denoising(double... noiseSd) {
        return new DenoisingOptions(noiseSd, DENOISING_DRAWS, DENOISING_STEPS);
    }

    /**
     * The screen scores each record by the steady bound ({@link #steadyBound()}), its threshold
     * the {@link #SCREENING_QUANTILE} of the same score on the held-out records (issue 11 item 1:
     * scores, flags and ranks that do not move with the seed beyond the bound's sd of about 0.04
     * nats per record). Measured against the former default, the Monte Carlo bound of
     * {@link #SCREENING_DRAWS} drawn steps, on SOURCES.md's anomaly protocol in one run
     * (diffusion-bench/results/steady-use.txt: a default fit on the normal training rows, fit seed 1;
     * screen seeds 100 and 101; CPU per screen, the steady screen's including the model's profile
     * once, load average 10 to 21):
     * <pre>
     *   table (normal)              128 draws: AUROC, record sd, CPU        steady: AUROC, record sd, CPU
     *   breast_cancer (benign)      0.9598 / 0.9593, 40.5, 1.0 ms/record     0.9586 / 0.9585, 0.028, 47.6 ms/record (x48)
     *   digits_binary (0-8)         0.7999 / 0.8209, 2.53, 1.2 ms/record     0.8172 / 0.8160, 0.035, 167 ms/record (x139)
     * </pre>
     * The trade: the same ranks within the 128-draw screen's own seed spread, at 48 to 139 times its CPU
     * time per record (12,386 draws per record and the 64 binary columns' flip expansions on
     * digits_binary; the demo's screen was not timed again). For large batches where that cost matters more than the seed, the former
     * screen stays: {@code screening().withBound(BoundOptions.sampled(SCREENING_DRAWS))}.
     *
     * @return flags past the {@link #SCREENING_QUANTILE} of the held-out scores by the steady bound
     *     ({@link #steadyBound()}), refuses missing cells, and gives the flagged records the
     *     per-column figures of {@link #surprisal()}
     */
    public static ScreeningOptions screening() {
        return new ScreeningOptions(ThresholdRule.quantile(SCREENING_QUANTILE), steadyBound(),
                MissingCells.refuse(), surprisal(), SCREENING_SCORE, flow());
    }

    /** @return {@link #SURPRISAL_DRAWS} draws per cell on at most {@link #SURPRISAL_STEPS} steps, {@link #SURPRISAL_ROUNDS} rounds */
    public static SurprisalOptions surprisal() {
        return new SurprisalOptions(SURPRISAL_DRAWS, SURPRISAL_STEPS, SURPRISAL_ROUNDS);
    }

    /** @return scores by the Monte Carlo bound of {@link #SCREENING_DRAWS} draws, as the former default screen's; refuses missing cells */
    public static DriftOptions drift() {
        return new DriftOptions(BoundOptions.sampled(SCREENING_DRAWS), MissingCells.refuse());
    }

    /** @return min(2, available processors): two cores is the machine Backstep is tuned for */
    public static int threads() {
        return Math.max(1, Math.min(2, Runtime.getRuntime().availableProcessors()));
    }
}
