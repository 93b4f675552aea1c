package org.backstep;

import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepSampling;
import org.backstep.option.TrainingLoss;
import org.backstep.option.TrainingBudget;
import org.backstep.training.EpochRecord;
import org.backstep.training.Provenance;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;

import org.backstep.net.AdamOptimizer;
import org.backstep.net.NetworkShape;
import org.backstep.net.ParallelStep;
import org.backstep.net.ReverseNetwork;
import org.backstep.net.WeightAverage;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
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
 * Minibatch training of the estimator (Ho et al. 2020, algorithm 1) with Adam, a moving average of
 * the weights, the simple, bound or hybrid loss, uniform or importance-sampled t, and a held-out
 * bound every few epochs.
 *
 * <p>The loss of one row at step t is the mean over its D modelled cells of
 * <pre>
 *   continuous cell, SIMPLE:  (eps-hat - eps)^2                               (Ho et al. 2020, eq. 14)
 *   continuous cell, BOUND:   T L_{t-1}  (Gaussian KL, or decoder NLL at t = 1) (eq. 5)
 *   continuous cell, HYBRID:  (eps-hat - eps)^2 + lambda T L_{t-1}, the bound part
 *                             reaching only v                               (Nichol &amp; Dhariwal 2021, sec. 3.1)
 *   binary cell:              T L_{t-1}  (Bernoulli KL, or cross-entropy at t = 1)
 * </pre>
 * times 1/(T p_t) under importance sampling, averaged over the minibatch.
 *
 * <p>Training runs for the options' epochs, or to a {@link TrainingBudget} of updates or of
 * wall-clock time. However it ends (the last epoch, a budget, a stop request, early stopping), the
 * averaged weights are evaluated on the validation rows once more, and the weights with the best
 * held-out bound so far are kept.
 */
final class Trainer {

    private static final Logger LOG = LoggerFactory.getLogger(Trainer.class);

    /** Importance sampling keeps this many recent bound terms per step (Nichol &amp; Dhariwal 2021, sec. 3.3). */
    static final int IMPORTANCE_HISTORY = 10;
    /** Share of uniform probability mixed into the importance distribution (our choice). */
    static final double IMPORTANCE_UNIFORM_SHARE = 0.01;

    private Trainer() {
    }

    static DiffusionModel fit(FitOptions options, Table table, Table validation, TrainingListener listener,
                              BooleanSupplier stop) {
        return run(options, table, validation, listener, stop, null).model();
    }

    /**
     * A fitted model and what its training spent.
     *
     * @param model the model
     * @param updates minibatch updates done
     * @param epochs updates over minibatches per epoch (the last epoch may be cut short)
     * @param updateSeconds wall time spent on updates, without the held-out evaluations during training
     */
    record Fitted(DiffusionModel model, long updates, double epochs, double updateSeconds) {
    }

    /**
     * Fits, for the builder's epochs or to a budget, in one go.
     *
     * @param budget null to train for the options' epochs; otherwise a fixed number of updates or
     *     a wall-clock time of updates, which replaces the epochs (see {@link TrainingBudget})
     */
    static Fitted run(FitOptions options, Table table, Table validation, TrainingListener listener,
                      BooleanSupplier stop, TrainingBudget budget) {
        try (Run run = new Run(options, table, validation, listener, stop, budget)) {
            run.advance(Long.MAX_VALUE);
            return run.finish();
        }
    }

    /**
     * One fit that can pause between updates and resume, so that several fits can share a machine
     * in turns (the training planner interleaves its models this way, so that a busy spell or the
     * JIT compiler's warm-up falls on every model alike). Pausing does not change the result: the
     * updates, draws and evaluations are the same as in one go.
     */
    static final class Run implements AutoCloseable {
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
        private final LossTerms terms;
        private final INDArray xtArray;
        private final float[] xb;
        private final float[] xt;
        private final float[] eps;
        private final int[] k;
        private final int[] src;
        private final double[] weight;
        private final int[] perm;
        private final ParallelStep parallel;

        private final List<EpochRecord> history = new ArrayList<>();
        private float[] bestWeights;
        private double bestBound = Double.POSITIVE_INFINITY;
        private OptionalDouble lastBound = OptionalDouble.empty();
        private int sinceBest;
        private long step;
        private String stopReason;
        private long updateNanos;          // time spent on updates only: what a wall-clock budget counts
        private long nextEvaluation;
        private int epoch = 1;
        private int b;                     // the next minibatch of the epoch
        private double lossSum;
        private boolean finished;
        private boolean closed;

        Run(FitOptions options, Table table, Table validation, TrainingListener listener, BooleanSupplier stop,
            TrainingBudget budget) {
            this.options = options;
            this.table = table;
            this.listener = listener;
            this.stop = stop;
            for (String name : options.logColumns()) {
                if (!table.names().contains(name)) {
                    throw new IllegalArgumentException("logColumns names '" + name + "', which is not a column of the table "
                            + table.names());
                }
                int c = table.indexOf(name);
                if (table.kind(c) != ColumnKind.CONTINUOUS) {
                    throw new IllegalArgumentException("logColumns names '" + name + "', which is binary; only continuous columns take a log scale");
                }
            }
            Table train = table;
            Table held = validation;
            if (held == null && options.validationFraction() > 0.0 && table.rows() >= 2) {
                int[][] split = split(table.rows(), options.validationFraction(), options.seed());
                train = table.selectRows(split[0]);
                held = table.selectRows(split[1]);
                notes.add("validation: " + split[1].length + " rows drawn at random (fraction "
                        + options.validationFraction() + ", seed " + options.seed() + ")");
            } else if (held != null) {
                checkSameLayout(table, held, "validation");
                notes.add("validation: " + held.rows() + " rows given by the caller");
            }
            Table complete = train.completeRows();
            if (complete.rows() < train.rows()) {
                notes.add((train.rows() - complete.rows()) + " training rows with a missing cell were left out");
            }
            if (complete.rows() < 2) {
                throw new IllegalArgumentException("training has " + complete.rows()
                        + " complete rows; expected at least 2 rows without a missing cell");
            }
            transform = TableTransform.fit(complete, options.logColumns());
            notes.addAll(transform.notes());
            dc = transform.modelledContinuous().length;
            db = transform.modelledBinary().length;
            if (dc + db == 0) {
                throw new IllegalArgumentException("the table has no column to diffuse: every column is constant");
            }
            x0 = toFloat(transform.toModelSpace(complete));
            n = complete.rows();
            float[] heldRows = null;
            int heldCount = 0;
            if (held != null) {
                Table heldComplete = held.completeRows();
                heldCount = heldComplete.rows();
                if (heldCount > 0) {
                    heldRows = toFloat(transform.toModelSpace(heldComplete));
                }
            }
            xv = heldRows;
            nv = heldCount;
            d = dc + db;
            steps = options.steps();
            int outputs = dc * (options.variance() == ReverseVariance.LEARNED ? 2 : 1) + db;
            shape = new NetworkShape(d, options.hidden(), outputs, options.embeddingSize(), options.conditioning());
            net = ReverseNetwork.create(shape, steps, options.seed());
            chain = new Chain(options.continuousSchedule(), options.binarySchedule(), dc, db,
                    options.variance(), new NetworkEstimator(net));

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
                        : (int) Math.ceil((double) Defaults.TRAINING_STEPS / batchesPerEpoch);
            }
            // held-out evaluations: every evaluateEvery epochs, or (timed, by default) every 1/EVALUATIONS of the time
            evaluateEvery = options.evaluateEvery() > 0 ? options.evaluateEvery()
                    : timed ? 0 : Math.max(1, epochs / Defaults.EVALUATIONS);
            totalSteps = budgetUpdates > 0 ? budgetUpdates : timed ? 0 : (long) epochs * batchesPerEpoch;
            nextEvaluation = timed ? budgetNanos / Defaults.EVALUATIONS : 0;
            if (timed) {
                LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, for {} in minibatches of {}",
                        n, dc, db, steps, budget, batch);
            } else {
                LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, {} epochs of {} minibatches of {}"
                        + " ({} updates)", n, dc, db, steps, epochs, batchesPerEpoch, batch, totalSteps);
            }

            adam = AdamOptimizer.create(net.parameterCount(), options.learningRate(), options.adamBeta1(),
                    options.adamBeta2(), options.adamEpsilon(), options.weightDecay());
            ema = WeightAverage.of(net.parameterView(), options.emaDecay());
            rng = new SplittableRandom(options.seed());
            sampler = new StepSampler(steps, options.stepSampling());
            terms = new LossTerms(chain, options, batch);
            xtArray = Nd4j.create(DataType.FLOAT, batch, d);
            xb = new float[batch * d];
            xt = new float[batch * d];
            eps = new float[batch * Math.max(1, dc)];
            k = new int[batch];
            src = new int[batch];
            weight = new double[batch];
            perm = identity(n);
            parallel = ParallelStep.create(net, batch, options.threads());
        }

        /** @return updates done so far */
        long updates() {
            return step;
        }

        /** @return nanoseconds spent on updates so far */
        long updateNanos() {
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
        void advance(long until) {
            while (!finished && (timed ? updateNanos : step) < until) {
                long t0 = System.nanoTime();
                if (b == 0) {
                    shuffle(perm, rng);
                    lossSum = 0.0;
                }
                for (int r = 0; r < batch; r++) {
                    System.arraycopy(x0, perm[b * batch + r] * d, xb, r * d, d);
                    k[r] = sampler.draw(rng);
                    src[r] = chain.source[k[r]];
                    weight[r] = sampler.weight(k[r]);
                }
                chain.diffuse(xb, batch, k, xt, eps, rng);
                xtArray.data().setData(xt);
                terms.prepare(xb, xt, eps, k, weight);
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

        /** The bookkeeping at the end of an epoch, or of a cut epoch when training ends inside one. */
        private void endEpoch() {
            boolean last = stopReason != null || epoch == epochs;
            double epochLoss = lossSum / b;
            OptionalDouble bound = OptionalDouble.empty();
            boolean due = evaluateEvery > 0 ? epoch % evaluateEvery == 0 : updateNanos >= nextEvaluation;
            if (xv != null && (due || last)) {
                float[] avg = ema.average();
                ReverseNetwork averaged = ReverseNetwork.fromParameters(shape, steps, avg);
                Chain evalChain = new Chain(options.continuousSchedule(), options.binarySchedule(), dc, db,
                        options.variance(), new NetworkEstimator(averaged));
                BoundEvaluator.Result res = BoundEvaluator.monteCarlo(evalChain, xv, nv, options.validationDraws(),
                        options.seed() + 1, options.threads());
                double mean = (BoundEvaluator.sum(res.continuous) + BoundEvaluator.sum(res.binary)) / nv;
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
                    nextEvaluation += Math.max(1, budgetNanos / Defaults.EVALUATIONS);
                }
            }
            history.add(new EpochRecord(epoch, epochLoss, bound, seconds(started)));
            listener.onProgress(progress(epochLoss));
            if (!last && options.patience() > 0 && sinceBest >= options.patience()) {
                stopReason = "stopped early at epoch " + epoch + ": no better held-out bound in "
                        + options.patience() + " evaluations";
                last = true;
            }
            finished = last;
            epoch++;
            b = 0;
        }

        private TrainingProgress progress(double loss) {
            double secs = seconds(started);
            double rate = step * (double) batch / Math.max(secs, 1e-9);
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
        Fitted finish() {
            if (!finished) {
                throw new IllegalStateException("the run has not finished; advance it first");
            }
            close();
            float[] finalWeights = bestWeights != null ? bestWeights : ema.average();
            if (bestWeights != null) {
                notes.add("kept the averaged weights with the best held-out bound, " + bestBound + " nats per record");
            }
            if (stopReason != null) {
                notes.add(stopReason);
                LOG.info(stopReason);
            }
            ReverseNetwork fitted = ReverseNetwork.fromParameters(shape, steps, finalWeights);
            Provenance provenance = provenance(table, n, nv, seconds(started), history, notes);
            DiffusionModel model = new DiffusionModel(options, transform, fitted, new NetworkEstimator(fitted), provenance);
            return new Fitted(model, step, step / (double) batchesPerEpoch, updateNanos / 1e9);
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

    static double seconds(long started) {
        return (System.nanoTime() - started) / 1e9;
    }

    static int[][] split(int rows, double fraction, long seed) {
        int held = Math.max(1, Math.min(rows - 1, (int) Math.round(rows * fraction)));
        int[] perm = identity(rows);
        shuffle(perm, new SplittableRandom(seed ^ 0x5DEECE66DL));
        int[] heldRows = java.util.Arrays.copyOf(perm, held);
        int[] trainRows = java.util.Arrays.copyOfRange(perm, held, rows);
        java.util.Arrays.sort(heldRows);
        java.util.Arrays.sort(trainRows);
        return new int[][] {trainRows, heldRows};
    }

    /** Refuses {@code b} (called {@code name} in the message) unless its columns are those of {@code a}. */
    static void checkSameLayout(Table a, Table b, String name) {
        if (!a.names().equals(b.names()) || !a.kinds().equals(b.kinds())) {
            throw new IllegalArgumentException(name + " has columns " + b.names() + " " + b.kinds()
                    + "; expected the training columns " + a.names() + " " + a.kinds());
        }
    }

    static float[] toFloat(double[][] rows) {
        int d = rows.length == 0 ? 0 : rows[0].length;
        float[] f = new float[rows.length * d];
        for (int r = 0; r < rows.length; r++) {
            for (int j = 0; j < d; j++) {
                f[r * d + j] = (float) rows[r][j];
            }
        }
        return f;
    }

    static int[] identity(int n) {
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            p[i] = i;
        }
        return p;
    }

    /** Fisher-Yates shuffle (Knuth, TAOCP vol. 2, algorithm P). */
    static void shuffle(int[] a, SplittableRandom rng) {
        for (int i = a.length - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int tmp = a[i];
            a[i] = a[j];
            a[j] = tmp;
        }
    }

    /** Draws t uniformly or by importance (Nichol &amp; Dhariwal 2021, sec. 3.3). */
    static final class StepSampler {
        private final int steps;
        private final StepSampling mode;
        private final double[][] recent;
        private final int[] count;
        private final double[] cdf;
        private final double[] prob;
        private boolean warm;
        private int sinceRefresh;

        StepSampler(int steps, StepSampling mode) {
            this.steps = steps;
            this.mode = mode;
            this.recent = mode == StepSampling.IMPORTANCE ? new double[steps + 1][IMPORTANCE_HISTORY] : null;
            this.count = new int[steps + 1];
            this.cdf = new double[steps + 1];
            this.prob = new double[steps + 1];
        }

        int draw(SplittableRandom rng) {
            if (!warm) {
                return 1 + rng.nextInt(steps);
            }
            double u = rng.nextDouble();
            int lo = 1;
            int hi = steps;
            while (lo < hi) {
                int mid = (lo + hi) >>> 1;
                if (cdf[mid] > u) {
                    hi = mid;
                } else {
                    lo = mid + 1;
                }
            }
            return lo;
        }

        double weight(int t) {
            return warm ? 1.0 / (steps * prob[t]) : 1.0;
        }

        void record(int[] k, double[] rowBound, int rows) {
            if (mode != StepSampling.IMPORTANCE) {
                return;
            }
            for (int r = 0; r < rows; r++) {
                int t = k[r];
                recent[t][count[t] % IMPORTANCE_HISTORY] = rowBound[r];
                count[t]++;
            }
            if (!warm) {
                for (int t = 1; t <= steps; t++) {
                    if (count[t] < IMPORTANCE_HISTORY) {
                        return;
                    }
                }
                warm = true;
            }
            if (++sinceRefresh < 10 && cdf[steps] > 0) {
                return;
            }
            sinceRefresh = 0;
            double total = 0.0;
            for (int t = 1; t <= steps; t++) {
                double sq = 0.0;
                for (double v : recent[t]) {
                    sq += v * v;
                }
                prob[t] = Math.sqrt(sq / IMPORTANCE_HISTORY);
                total += prob[t];
            }
            double acc = 0.0;
            for (int t = 1; t <= steps; t++) {
                double p = total > 0 ? prob[t] / total : 1.0 / steps;
                prob[t] = (1.0 - IMPORTANCE_UNIFORM_SHARE) * p + IMPORTANCE_UNIFORM_SHARE / steps;
                acc += prob[t];
                cdf[t] = acc;
            }
            cdf[steps] = 1.0;
        }
    }

    /**
     * The loss and its gradient with respect to the network's outputs, row by row; called by the
     * parallel step for each shard of the minibatch.
     */
    static final class LossTerms implements ParallelStep.LossGradient {
        private final Chain chain;
        private final TrainingLoss loss;
        private final double lambda;
        private final boolean learned;
        private final int dc;
        private final int db;
        private final int outputs;
        private final double steps;
        final double[] rowBound;
        private float[] x0;
        private float[] xt;
        private float[] eps;
        private int[] k;
        private double[] weight;
        private int batch;

        LossTerms(Chain chain, FitOptions options, int batch) {
            this.chain = chain;
            this.loss = options.loss();
            this.lambda = options.hybridWeight();
            this.learned = options.variance() == ReverseVariance.LEARNED;
            this.dc = chain.dc;
            this.db = chain.db;
            this.outputs = chain.outputs;
            this.steps = chain.steps;
            this.rowBound = new double[batch];
            this.batch = batch;
        }

        void prepare(float[] x0, float[] xt, float[] eps, int[] k, double[] weight) {
            this.x0 = x0;
            this.xt = xt;
            this.eps = eps;
            this.k = k;
            this.weight = weight;
        }

        @Override
        public double compute(int shard, int rowOffset, INDArray output, INDArray dOutputInto) {
            int rows = (int) output.rows();
            float[] out = output.dup('c').data().asFloat();
            float[] grad = new float[rows * outputs];
            int d = dc + db;
            int vOff = dc;
            double total = 0.0;
            for (int i = 0; i < rows; i++) {
                int r = rowOffset + i;
                int s = k[r];
                int o = r * d;
                int oo = i * outputs;
                double w = weight[r] / (batch * (double) d);
                double rowLoss = 0.0;
                double bound = 0.0;
                for (int j = 0; j < dc; j++) {
                    double eh = out[oo + j];
                    double v = learned ? out[oo + vOff + j] : 0.0;
                    double raw = learned ? chain.interpolatedLogVariance(s, v) : 0.0;
                    double lv = learned ? chain.clampLogVariance(s, raw) : chain.reverseLogVariance(s, v);
                    double inv = Math.exp(-lv);
                    double mp = (xt[o + j] - chain.epsCoef[s] * eh) / chain.sqrtAlpha[s];
                    double term;
                    double dMean;      // d term / d mean_p
                    double dLogVar;    // d term / d log var_p
                    if (s == 1) {
                        double diff = x0[o + j] - mp;
                        term = 0.5 * (Chain.LOG_2PI + lv + diff * diff * inv);
                        dMean = -diff * inv;
                        dLogVar = 0.5 * (1.0 - diff * diff * inv);
                    } else {
                        double mq = chain.coefX0[s] * x0[o + j] + chain.coefXt[s] * xt[o + j];
                        double lq = chain.logVarClipped[s];
                        double diff = mq - mp;
                        double num = Math.exp(lq) + diff * diff;
                        term = 0.5 * (lv - lq + num * inv - 1.0);
                        dMean = -diff * inv;
                        dLogVar = 0.5 * (1.0 - num * inv);
                    }
                    bound += term;
                    double dMeanDEps = -chain.epsCoef[s] / chain.sqrtAlpha[s];
                    double dLogVarDv = learned && lv != raw
                            ? 0.0 : chain.logBeta[s] - chain.logVarClipped[s];   // zero where the clamp holds
                    double gEps = 0.0;
                    double gV = 0.0;
                    switch (loss) {
                        case SIMPLE -> {
                            double e = eh - eps[r * dc + j];
                            rowLoss += e * e;
                            gEps = 2.0 * e;
                        }
                        case BOUND -> {
                            rowLoss += steps * term;
                            gEps = steps * dMean * dMeanDEps;
                            gV = steps * dLogVar * dLogVarDv;
                        }
                        case HYBRID -> {
                            double e = eh - eps[r * dc + j];
                            rowLoss += e * e + lambda * steps * term;
                            gEps = 2.0 * e;
                            gV = lambda * steps * dLogVar * dLogVarDv;
                        }
                    }
                    grad[oo + j] = (float) (w * gEps);
                    if (learned) {
                        grad[oo + vOff + j] = (float) (w * gV);
                    }
                }
                for (int j = 0; j < db; j++) {
                    double logit = out[oo + chain.logitOffset + j];
                    double pOne = Chain.sigmoid(logit);
                    int x0i = x0[o + dc + j] > 0.5f ? 1 : 0;
                    double term;
                    double gLogit;
                    if (s == 1) {
                        double p = Chain.clampProb(x0i == 1 ? pOne : 1.0 - pOne);
                        term = -Math.log(p);
                        gLogit = pOne - x0i;
                    } else {
                        int xi = xt[o + dc + j] > 0.5f ? 1 : 0;
                        double a = chain.binPosterior[s][2 * x0i + xi];
                        double q1 = chain.binPosterior[s][2 + xi];
                        double q0 = chain.binPosterior[s][xi];
                        double p = Chain.clampProb(q0 + pOne * (q1 - q0));
                        term = Chain.bernoulliKl(a, p);
                        gLogit = (p - a) / (p * (1.0 - p)) * (q1 - q0) * pOne * (1.0 - pOne);
                    }
                    bound += term;
                    rowLoss += steps * term;
                    grad[oo + chain.logitOffset + j] = (float) (w * steps * gLogit);
                }
                rowBound[r] = bound;
                total += w * rowLoss;
            }
            dOutputInto.assign(Nd4j.create(grad, new long[] {rows, outputs}, 'c'));
            return total;
        }
    }

    /** What the fit records about itself: this library, this JVM and machine, the clock, the data's hash. */
    private static Provenance provenance(Table table, int trainingRows, int validationRows,
                                         double seconds, List<EpochRecord> history, List<String> notes) {
        return new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"),
                System.getProperty("os.name") + " " + System.getProperty("os.version"),
                System.getProperty("os.arch"), java.time.Instant.now().toString(), seconds, table.rows(), trainingRows,
                validationRows, table.sha256(), history, notes);
    }
}
