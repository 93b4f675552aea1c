package org.backstep.internal.train;

import org.backstep.internal.chain.BoundEvaluator;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.ModelRange;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.AdamOptimizer;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ParallelStep;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.internal.net.WeightAverage;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.TrainingBudget;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.EpochRecord;
import org.backstep.training.Provenance;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import java.util.SplittableRandom;
import java.util.function.BooleanSupplier;

/**
 * One fit as a run of minibatch updates (Ho et al. 2020, algorithm 1) with Adam, a moving average
 * of the weights and a bound on the checkpoint rows every few epochs; the loss is
 * {@link LossGradient}'s, t is drawn by {@link StepSampler}, the rows come from
 * {@link TrainingRows}. However it ends (the last epoch, a budget, a stop request, early stopping),
 * the averaged weights are evaluated on the checkpoint rows once more, and the weights with the
 * best checkpoint bound so far are kept. Training rows with a gap are trained on with their missing
 * cells filled, and {@link GapFilling#REFILLS} times over the run (at epoch ends) the missing cells
 * are drawn again from the averaged weights (stochastic EM, see {@link GapFilling}); without gaps
 * nothing of this runs, and the updates are those of a run that never heard of gaps.
 *
 * <p>A run can pause between updates and resume, so that several fits can share a machine in
 * turns (the training planner interleaves its models this way, so that a busy spell or the JIT
 * compiler's warm-up falls on every model alike). Pausing does not change the result: the
 * updates, draws and evaluations are the same as in one go.
 */
public final class TrainingRun implements AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(TrainingRun.class);

    private final FitOptions options;
    private final Table table;
    private final TrainingListener listener;
    private final BooleanSupplier stop;
    private final long started = System.nanoTime();
    private final List<String> notes = new ArrayList<>();
    private final TableTransform transform;
    private final int dc;
    private final int db;
    private final int d;
    private final int steps;
    private final float[] x0;
    private final int n;
    private final float[] xv;
    private final int nv;
    private final NetworkShape shape;
    private final ReverseNetwork net;
    private final Chain chain;
    private final ClosedFormPart baseline;   // null without a closed-form part
    private final org.backstep.table.Whitening whitening;   // null in standardized coordinates
    private final boolean learned;
    private final int batch;
    private final int batchesPerEpoch;
    private final long budgetUpdates;
    private final long budgetNanos;
    private final boolean timed;
    private final int epochs;
    private final int evaluateEvery;
    private final long totalSteps;
    private final AdamOptimizer adam;
    private final WeightAverage ema;
    private final SplittableRandom rng;
    private final StepSampler sampler;
    private final LossGradient terms;
    private final INDArray xtArray;
    private final float[] xb;
    private final float[] xt;
    private final float[] encoded;     // batch x inputs, the one-hot input when there are categorical columns
    private final float[] eps;
    private final int[] k;
    private final int[] src;
    private final double[] weight;
    private final int[] perm;
    private final ParallelStep parallel;
    private final GapFilling gaps;           // null when every training row is complete
    private final GaussianGaps gaussianGaps; // whitened fits: rows missing a whitened cell, else null
    private final boolean[] filled;          // n x d: true where a training cell is filled, null without gaps
    private final boolean[] filledBatch;     // batch x d, the minibatch's rows of filled
    private final long refillInterval;       // updates, or update nanoseconds when timed, between refills
    private final Table checkpointTable;     // the complete checkpoint rows in the caller's units, or null

    private final List<EpochRecord> history = new ArrayList<>();
    private float[] bestWeights;
    private double bestBound = Double.POSITIVE_INFINITY;
    private OptionalDouble lastBound = OptionalDouble.empty();
    private int sinceBest;
    private long step;
    private String stopReason;
    /** True once patience ended the run: its last progress report ends the plan there. */
    private boolean stoppedEarly;
    private long updateNanos;          // time spent on updates only: what a wall-clock budget counts
    private long nextEvaluation;
    private int epoch = 1;
    private int b;                     // the next minibatch of the epoch
    private double lossSum;
    private boolean finished;
    private long nextRefill;
    private int refills;
    private boolean closed;
    private CheckpointScore checkpointScore = CheckpointScore.STEADY;

    /**
     * Prepares the rows ({@link TrainingRows}) and the network; trains nothing yet.
     *
     * @param options validated options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @param listener hears the progress
     * @param stop asked after every update whether to stop
     * @param budget null to train for the options' epochs; else a fixed number of updates or a
     *     wall-clock time of updates, which replaces the epochs
     */
    public TrainingRun(FitOptions options, Table table, Table checkpointRows, TrainingListener listener,
                       BooleanSupplier stop, TrainingBudget budget) {
        this(options, table, checkpointRows, null, listener, stop, budget);
    }

    /**
     * Prepares the rows with the given column transforms instead of fitting them on the table.
     *
     * @param options validated options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @param givenTransform the column transforms, with the table's names and kinds, or null to fit them
     * @param listener hears the progress
     * @param stop asked after every update whether to stop
     * @param budget as {@link #TrainingRun(FitOptions, Table, Table, TrainingListener, BooleanSupplier, TrainingBudget)}
     */
    public TrainingRun(FitOptions options, Table table, Table checkpointRows, TableTransform givenTransform,
                       TrainingListener listener, BooleanSupplier stop, TrainingBudget budget) {
        if (options.checkpointDraws() > org.backstep.option.BoundOptions.MAX_TERM_DRAWS) {
            throw new IllegalArgumentException("checkpointDraws is " + options.checkpointDraws() + "; the checkpoint"
                    + " score draws x_t at most " + org.backstep.option.BoundOptions.MAX_TERM_DRAWS + " times per term");
        }
        this.options = options;
        this.table = table;
        this.listener = listener;
        this.stop = stop;
        TrainingRows prepared = new TrainingRows(options, table, checkpointRows, givenTransform);
        notes.addAll(prepared.notes);
        checkpointTable = prepared.checkpointTable;
        transform = prepared.transform;
        dc = prepared.dc;
        db = prepared.db;
        x0 = prepared.x0;
        n = prepared.n;
        xv = prepared.checkpoint;
        nv = prepared.checkpointCount;
        gaps = prepared.gaps;
        gaussianGaps = prepared.gaussianGaps;
        whitening = prepared.whitening;
        d = prepared.width();
        steps = options.steps();
        int outputs = Chain.outputsOf(options.variance(), transform);
        shape = new NetworkShape(Chain.inputsOf(transform), options.hidden(), outputs, options.embeddingSize(),
                options.stepInput());
        baseline = ClosedFormPart.fit(options.baseline(), x0, n, d, dc, options.continuousSchedule(), options.seed());
        if (baseline instanceof org.backstep.internal.chain.MixtureBaseline mb) {
            String note = "Gaussian mixture part: " + mb.mixture().components() + " component(s) chosen by BIC "
                    + java.util.Arrays.toString(mb.bic());
            notes.add(note);
            LOG.info(note);
        }
        learned = options.variance() == ReverseVariance.LEARNED;
        net = ReverseNetwork.create(shape, steps, options.seed(), baseline != null);
        chain = chainOver(net);

        batch = Math.min(options.batchSize(), n);
        batchesPerEpoch = n / batch;
        budgetUpdates = budget == null ? 0 : budget.updates().orElse(0);
        budgetNanos = budget == null ? 0 : budget.wallClock().map(java.time.Duration::toNanos).orElse(0L);
        timed = budgetNanos > 0;
        if (budgetUpdates > 0) {
            epochs = (int) Math.min(Integer.MAX_VALUE, (budgetUpdates + batchesPerEpoch - 1) / batchesPerEpoch);
        } else if (timed) {
            epochs = Integer.MAX_VALUE;      // until the time is spent
        } else {
            epochs = options.epochs() > 0 ? options.epochs()
                    : (int) Math.ceil((double) options.trainingSteps() / batchesPerEpoch);
        }
        // held-out evaluations: every evaluateEvery epochs, or (timed, by default) every 1/EVALUATIONS of the time
        evaluateEvery = options.evaluateEvery() > 0 ? options.evaluateEvery()
                : timed ? 0 : Math.max(1, epochs / options.evaluations());
        totalSteps = budgetUpdates > 0 ? budgetUpdates : timed ? 0 : (long) epochs * batchesPerEpoch;
        nextEvaluation = timed ? budgetNanos / options.evaluations() : 0;
        refillInterval = Math.max(1, (timed ? budgetNanos : totalSteps) / (GapFilling.REFILLS + 1));
        nextRefill = refillInterval;
        if (timed) {
            LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, for {} in minibatches of {}",
                    n, dc, db, steps, budget, batch);
        } else {
            LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, {} epochs of {} minibatches of {}"
                    + " ({} updates)", n, dc, db, steps, epochs, batchesPerEpoch, batch, totalSteps);
        }

        if (gaps != null) {
            LOG.info("{} of the {} training rows have a missing cell ({} cells), filled by stochastic EM",
                    gaps.rowCount(), n, gaps.cellCount());
        }

        adam = AdamOptimizer.create(net.parameterCount(), options.learningRate(), options.adamBeta1(),
                options.adamBeta2(), options.adamEpsilon(), options.weightDecay());
        ema = WeightAverage.of(net.parameterView(), options.emaDecay());
        rng = new SplittableRandom(options.seed());
        sampler = new StepSampler(steps, options.stepSampling());
        terms = new LossGradient(chain, options, batch, baseline);
        xtArray = Nd4j.create(DataType.FLOAT, batch, chain.inputs());
        encoded = chain.inputs() == d ? null : new float[batch * chain.inputs()];
        xb = new float[batch * d];
        xt = new float[batch * d];
        eps = new float[batch * Math.max(1, dc)];
        k = new int[batch];
        src = new int[batch];
        weight = new double[batch];
        perm = TrainingRows.identity(n);
        filled = gaps == null ? null : gaps.filledCells(n);
        if (filled != null && whitening != null) {
            // a whitened cell of a row with a gap is part observed, part drawn: trained on (see TrainingRows)
            int[] mixed = Chain.whitenedColumns(transform);
            for (int r = 0; r < n; r++) {
                for (int j : mixed) {
                    filled[r * d + j] = false;
                }
            }
        }
        filledBatch = filled == null ? null : new boolean[batch * d];
        parallel = ParallelStep.create(net, batch, options.threads());
    }

    /** @return the complete checkpoint rows in the caller's units, or null when there are none */
    Table checkpointTable() {
        return checkpointTable;
    }

    /** @return whether any column is mapped by its normal scores */
    boolean normalScores() {
        for (org.backstep.table.ColumnTransform t : transform.transforms()) {
            if (t.kind() == org.backstep.table.ColumnTransform.Kind.NORMAL_SCORES) {
                return true;
            }
        }
        return false;
    }

    /** @return true once the run stopped early by patience (its plan ended at {@link #updates()}) */
    public boolean stoppedEarly() {
        return stoppedEarly;
    }

    /** @return updates done so far */
    public long updates() {
        return step;
    }

    /** @return nanoseconds spent on updates so far */
    public long updateNanos() {
        return updateNanos;
    }

    /**
     * Trains until training ends or until the pause point: for a wall-clock budget, once the
     * time spent on updates reaches {@code until} nanoseconds; otherwise once the updates done
     * reach {@code until}. A pause falls between two updates, never inside an epoch's
     * bookkeeping.
     *
     * @param until the pause point, in the budget's unit (Long.MAX_VALUE: train to the end)
     */
    public void advance(long until) {
        while (!finished && (timed ? updateNanos : step) < until) {
            long t0 = System.nanoTime();
            if (b == 0) {
                TrainingRows.shuffle(perm, rng);
                lossSum = 0.0;
            }
            for (int r = 0; r < batch; r++) {
                System.arraycopy(x0, perm[b * batch + r] * d, xb, r * d, d);
                if (gaussianGaps != null && gaussianGaps.has(perm[b * batch + r])) {
                    gaussianGaps.drawWhitenedInPlace(perm[b * batch + r], xb, r * d, rng);
                }
                if (filled != null) {
                    System.arraycopy(filled, perm[b * batch + r] * d, filledBatch, r * d, d);
                }
                k[r] = sampler.draw(rng);
                src[r] = chain.source(k[r]);
                weight[r] = sampler.weight(k[r]);
            }
            chain.diffuse(xb, batch, k, xt, eps, rng);
            if (encoded == null) {
                xtArray.data().setData(xt);
            } else {
                chain.encodeInput(xt, batch, encoded);
                xtArray.data().setData(encoded);
            }
            terms.prepare(xb, xt, eps, k, weight, filledBatch);
            double rate = timed
                    ? options.learningRateSchedule().rate(options.learningRate(), updateNanos, budgetNanos)
                    : options.learningRateSchedule().rate(options.learningRate(), step, totalSteps);
            double loss = parallel.trainInPlace(xtArray, src, terms, adam, rate);
            ema.updateInPlace(net.parameterView(), Math.min(options.emaDecay(), (1.0 + step) / (10.0 + step)));
            sampler.record(k, terms.rowBound, batch);
            if (!Double.isFinite(loss)) {
                throw new IllegalStateException("the training loss became " + loss + " at epoch " + epoch
                        + ", step " + (step + 1) + "; lower the learning rate (now " + options.learningRate() + ")");
            }
            lossSum += loss;
            step++;
            b++;
            updateNanos += System.nanoTime() - t0;
            if (stop.getAsBoolean()) {
                stopReason = "stopped on request at epoch " + epoch + ", step " + step;
            } else if (budgetUpdates > 0 && step >= budgetUpdates) {
                stopReason = "trained to the budget of " + budgetUpdates + " updates";
            } else if (timed && updateNanos >= budgetNanos) {
                stopReason = String.format(java.util.Locale.ROOT,
                        "spent the wall-clock budget of %.1f s: %d updates in %.1f s", budgetNanos / 1e9, step,
                        updateNanos / 1e9);
            }
            if (stopReason != null || b == batchesPerEpoch) {
                endEpoch();
            } else if (batchesPerEpoch >= 10 && b % (batchesPerEpoch / 10) == 0) {
                listener.onProgress(progress(lossSum / b));
            }
        }
    }

    /**
     * Sets what the kept weights are chosen by (the default {@link CheckpointScore#STEADY}); before
     * the first update only.
     *
     * @param score not null
     */
    public void scoreCheckpointsBy(CheckpointScore score) {
        if (score == null) {
            throw new IllegalArgumentException("score is null; expected a value");
        }
        if (step > 0) {
            throw new IllegalStateException("the run has made " + step + " updates; set the checkpoint score before the first");
        }
        checkpointScore = score;
    }

    /** The bookkeeping at the end of an epoch, or of a cut epoch when training ends inside one. */
    private void endEpoch() {
        boolean last = stopReason != null || epoch == epochs;
        double epochLoss = lossSum / b;
        OptionalDouble bound = OptionalDouble.empty();
        boolean due = evaluateEvery > 0 ? epoch % evaluateEvery == 0 : updateNanos >= nextEvaluation;
        if (xv != null && (due || last)) {
            float[] avg = ema.average();
            ReverseNetwork averaged = ReverseNetwork.fromParameters(shape, steps, avg);
            Chain evalChain = chainOver(averaged);
            BoundEvaluator.Result res = checkpointScore == CheckpointScore.SAMPLED
                    ? BoundEvaluator.monteCarlo(evalChain, xv, nv, options.checkpointDraws(), options.seed() + 1,
                            options.threads())
                    : BoundEvaluator.exact(evalChain, xv, nv, options.seed() + 1, null,
                            CheckpointScore.steadyDraws(options.checkpointDraws(), steps), options.threads());
            // minus log|det W| of a whitened chain: the history's bound is in the standardized space too
            double mean = (BoundEvaluator.sum(res.continuous) + BoundEvaluator.sum(res.binary)) / nv
                    - evalChain.logDeterminant();
            bound = OptionalDouble.of(mean);
            lastBound = bound;
            if (bestWeights == null || mean < bestBound || Double.isNaN(bestBound)) {
                bestBound = mean;
                bestWeights = avg;
                sinceBest = 0;
            } else {
                sinceBest++;
            }
            while (timed && nextEvaluation <= updateNanos) {
                nextEvaluation += Math.max(1, budgetNanos / options.evaluations());
            }
        }
        history.add(new EpochRecord(epoch, epochLoss, bound, Trainer.seconds(started)));
        if (!last && options.patience() > 0 && sinceBest >= options.patience()) {
            stopReason = "stopped early at epoch " + epoch + ": no better held-out bound in "
                    + options.patience() + " evaluations";
            last = true;
            stoppedEarly = true;
        }
        listener.onProgress(progress(epochLoss));
        if (gaps != null && !last && (timed ? updateNanos : step) >= nextRefill) {
            refillGaps();
            while (nextRefill <= (timed ? updateNanos : step)) {
                nextRefill += refillInterval;
            }
        }
        finished = last;
        epoch++;
        b = 0;
    }

    /**
     * The stochastic E step of {@link GapFilling}: the missing cells of the training rows drawn
     * again from the averaged weights' conditional distribution given each row's observed cells.
     */
    private void refillGaps() {
        ReverseNetwork averaged = ReverseNetwork.fromParameters(shape, steps, ema.average());
        Chain averagedChain = chainOver(averaged);
        gaps.refillInPlace(x0, averagedChain, options.threads(), options.seed(), refills, whitening,
                whitening == null ? null : Chain.whitenedColumns(transform));
        refills++;
    }

    private TrainingProgress progress(double loss) {
        double secs = Trainer.seconds(started);
        double rate = step * (double) batch / Math.max(secs, 1e-9);
        if (stoppedEarly) {
            // the plan ends here, whatever the budget: a progress bar completes (the listener's contract)
            return new TrainingProgress(epoch, epoch, step, step, loss, lastBound, rate, 0.0);
        }
        if (timed) {
            // planned totals are unknown: estimated from the pace so far
            long estimated = Math.max(step, Math.round(step * (double) budgetNanos / Math.max(1L, updateNanos)));
            int estimatedEpochs = (int) Math.min(Integer.MAX_VALUE, Math.max(epoch,
                    (estimated + batchesPerEpoch - 1) / batchesPerEpoch));
            return new TrainingProgress(epoch, estimatedEpochs, step, estimated, loss, lastBound, rate,
                    Math.max(0.0, (budgetNanos - updateNanos) / 1e9));
        }
        double left = step == 0 ? Double.NaN : secs * (totalSteps - step) / step;
        return new TrainingProgress(epoch, epochs, step, totalSteps, loss, lastBound, rate, Math.max(0.0, left));
    }

    /**
     * The fitted model: the averaged weights with the best held-out bound, or the final average
     * when there are no validation rows. Closes the run.
     */
    public Trainer.Fitted finish() {
        if (!finished) {
            throw new IllegalStateException("the run has not finished; advance it first");
        }
        close();
        float[] finalWeights = bestWeights != null ? bestWeights : ema.average();
        if (bestWeights != null) {
            notes.add("kept the averaged weights with the best held-out bound, " + bestBound + " nats per record");
        }
        if (gaps != null) {
            notes.add("the missing cells of the " + gaps.rowCount() + " training rows with a gap were drawn from the"
                    + " model " + refills + " times");
        }
        if (stopReason != null) {
            notes.add(stopReason);
            LOG.info(stopReason);
        }
        ReverseNetwork fitted = ReverseNetwork.fromParameters(shape, steps, finalWeights);
        Provenance provenance = Provenance.ofFit(table.rows(), table.sha256(), n, nv,
                gaps == null ? 0 : gaps.rowCount(), gaps == null ? 0 : gaps.cellCount(), gaps == null ? 0 : refills,
                Trainer.seconds(started),
                history, notes);
        return new Trainer.Fitted(ModelParts.ofNetwork(options, transform, fitted, baseline, provenance,
                ModelRange.of(x0, n, d, dc), whitening), step,
                step / (double) batchesPerEpoch, updateNanos / 1e9);
    }

    /** The training chain over the given weights, with the run's closed-form part (if any). */
    private Chain chainOver(ReverseNetwork weights) {
        return Chain.of(options, transform, new NetworkEstimator(weights, baseline, learned), whitening);
    }

    /** Releases the worker threads; idempotent. */
    @Override
    public void close() {
        if (!closed) {
            closed = true;
            parallel.close();
        }
    }
}
