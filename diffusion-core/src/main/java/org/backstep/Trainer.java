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
     * Fits, for the builder's epochs or to a budget.
     *
     * @param budget null to train for the options' epochs; otherwise a fixed number of updates or
     *     a wall-clock time of updates, which replaces the epochs (see {@link TrainingBudget})
     */
    static Fitted run(FitOptions options, Table table, Table validation, TrainingListener listener,
                      BooleanSupplier stop, TrainingBudget budget) {
        long started = System.nanoTime();
        List<String> notes = new ArrayList<>();
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
            checkSameLayout(table, held);
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
        TableTransform transform = TableTransform.fit(complete, options.logColumns());
        notes.addAll(transform.notes());
        int dc = transform.modelledContinuous().length;
        int db = transform.modelledBinary().length;
        if (dc + db == 0) {
            throw new IllegalArgumentException("the table has no column to diffuse: every column is constant");
        }
        float[] x0 = toFloat(transform.toModelSpace(complete));
        int n = complete.rows();
        float[] xv = null;
        int nv = 0;
        if (held != null) {
            Table heldComplete = held.completeRows();
            nv = heldComplete.rows();
            if (nv > 0) {
                xv = toFloat(transform.toModelSpace(heldComplete));
            }
        }
        int d = dc + db;
        int steps = options.steps();
        int outputs = dc * (options.variance() == ReverseVariance.LEARNED ? 2 : 1) + db;
        NetworkShape shape = new NetworkShape(d, options.hidden(), outputs, options.embeddingSize(),
                options.conditioning());
        ReverseNetwork net = ReverseNetwork.create(shape, steps, options.seed());
        Chain chain = new Chain(options.continuousSchedule(), options.binarySchedule(), dc, db,
                options.variance(), new NetworkEstimator(net));

        int batch = Math.min(options.batchSize(), n);
        int batchesPerEpoch = n / batch;
        long budgetUpdates = budget == null ? 0 : budget.updates().orElse(0);
        long budgetNanos = budget == null ? 0 : budget.wallClock().map(java.time.Duration::toNanos).orElse(0L);
        boolean timed = budgetNanos > 0;
        int epochs;
        if (budgetUpdates > 0) {
            epochs = (int) Math.min(Integer.MAX_VALUE, (budgetUpdates + batchesPerEpoch - 1) / batchesPerEpoch);
        } else if (timed) {
            epochs = Integer.MAX_VALUE;      // until the time is spent
        } else {
            epochs = options.epochs() > 0 ? options.epochs()
                    : (int) Math.ceil((double) Defaults.TRAINING_STEPS / batchesPerEpoch);
        }
        // held-out evaluations: every evaluateEvery epochs, or (timed, by default) every 1/EVALUATIONS of the time
        int evaluateEvery = options.evaluateEvery() > 0 ? options.evaluateEvery()
                : timed ? 0 : Math.max(1, epochs / Defaults.EVALUATIONS);
        long totalSteps = budgetUpdates > 0 ? budgetUpdates : timed ? 0 : (long) epochs * batchesPerEpoch;
        if (timed) {
            LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, for {} in minibatches of {}",
                    n, dc, db, steps, budget, batch);
        } else {
            LOG.info("training on {} rows ({} continuous, {} binary columns), T = {}, {} epochs of {} minibatches of {}"
                    + " ({} updates)", n, dc, db, steps, epochs, batchesPerEpoch, batch, totalSteps);
        }

        AdamOptimizer adam = AdamOptimizer.create(net.parameterCount(), options.learningRate(), options.adamBeta1(),
                options.adamBeta2(), options.adamEpsilon(), options.weightDecay());
        WeightAverage ema = WeightAverage.of(net.parameterView(), options.emaDecay());
        SplittableRandom rng = new SplittableRandom(options.seed());
        StepSampler sampler = new StepSampler(steps, options.stepSampling());
        LossTerms terms = new LossTerms(chain, options, batch);
        INDArray xtArray = Nd4j.create(DataType.FLOAT, batch, d);
        float[] xb = new float[batch * d];
        float[] xt = new float[batch * d];
        float[] eps = new float[batch * Math.max(1, dc)];
        int[] k = new int[batch];
        int[] src = new int[batch];
        double[] weight = new double[batch];
        int[] perm = identity(n);

        List<EpochRecord> history = new ArrayList<>();
        float[] bestWeights = null;
        double bestBound = Double.POSITIVE_INFINITY;
        OptionalDouble lastBound = OptionalDouble.empty();
        int sinceBest = 0;
        long step = 0;
        String stopReason = null;
        long loopStart = System.nanoTime();
        long evaluationNanos = 0;          // held-out evaluations, left out of a wall-clock budget
        long nextEvaluation = timed ? budgetNanos / Defaults.EVALUATIONS : 0;
        try (ParallelStep parallel = ParallelStep.create(net, batch, options.threads())) {
            for (int epoch = 1; epoch <= epochs; epoch++) {
                shuffle(perm, rng);
                double lossSum = 0.0;
                int done = 0;
                for (int b = 0; b < batchesPerEpoch; b++) {
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
                            ? options.learningRateSchedule().rate(options.learningRate(),
                                    System.nanoTime() - loopStart - evaluationNanos, budgetNanos)
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
                    done++;
                    long spent = System.nanoTime() - loopStart - evaluationNanos;
                    if (stop.getAsBoolean()) {
                        stopReason = "stopped on request at epoch " + epoch + ", step " + step;
                        break;
                    }
                    if (budgetUpdates > 0 && step >= budgetUpdates) {
                        stopReason = "trained to the budget of " + budgetUpdates + " updates";
                        break;
                    }
                    if (timed && spent >= budgetNanos) {
                        stopReason = String.format(java.util.Locale.ROOT,
                                "spent the wall-clock budget of %.1f s: %d updates in %.1f s", budgetNanos / 1e9, step, spent / 1e9);
                        break;
                    }
                    if (batchesPerEpoch >= 10 && (b + 1) % (batchesPerEpoch / 10) == 0 && b + 1 < batchesPerEpoch) {
                        listener.onProgress(progress(epoch, epochs, step, totalSteps, lossSum / (b + 1), lastBound,
                                batch, started, timed, spent, budgetNanos, batchesPerEpoch));
                    }
                }
                boolean last = stopReason != null || epoch == epochs;
                double epochLoss = lossSum / done;
                OptionalDouble bound = OptionalDouble.empty();
                long spent = System.nanoTime() - loopStart - evaluationNanos;
                boolean due = evaluateEvery > 0 ? epoch % evaluateEvery == 0 : spent >= nextEvaluation;
                if (xv != null && (due || last)) {
                    long evaluationStart = System.nanoTime();
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
                    while (timed && nextEvaluation <= spent) {
                        nextEvaluation += Math.max(1, budgetNanos / Defaults.EVALUATIONS);
                    }
                    evaluationNanos += System.nanoTime() - evaluationStart;
                }
                history.add(new EpochRecord(epoch, epochLoss, bound, seconds(started)));
                listener.onProgress(progress(epoch, epochs, step, totalSteps, epochLoss, lastBound, batch, started,
                        timed, spent, budgetNanos, batchesPerEpoch));
                if (last) {
                    break;
                }
                if (options.patience() > 0 && sinceBest >= options.patience()) {
                    stopReason = "stopped early at epoch " + epoch + ": no better held-out bound in "
                            + options.patience() + " evaluations";
                    break;
                }
            }
        }
        long updateNanos = System.nanoTime() - loopStart - evaluationNanos;
        float[] finalWeights = bestWeights != null ? bestWeights : ema.average();
        if (bestWeights != null) {
            notes.add("kept the averaged weights with the best held-out bound, " + bestBound + " nats per record");
        }
        if (stopReason != null) {
            notes.add(stopReason);
            LOG.info(stopReason);
        }
        ReverseNetwork fitted = ReverseNetwork.fromParameters(shape, steps, finalWeights);
        Provenance provenance = provenance(options, table, n, nv, seconds(started), history, notes);
        DiffusionModel model = new DiffusionModel(options, transform, fitted, new NetworkEstimator(fitted), provenance);
        return new Fitted(model, step, step / (double) batchesPerEpoch, updateNanos / 1e9);
    }

    private static TrainingProgress progress(int epoch, int epochs, long step, long total, double loss,
                                             OptionalDouble bound, int batch, long started, boolean timed,
                                             long spentNanos, long budgetNanos, int batchesPerEpoch) {
        double secs = seconds(started);
        double rate = step * (double) batch / Math.max(secs, 1e-9);
        if (timed) {
            // planned totals are unknown: estimated from the pace so far
            long estimated = Math.max(step, Math.round(step * (double) budgetNanos / Math.max(1L, spentNanos)));
            int estimatedEpochs = (int) Math.min(Integer.MAX_VALUE, Math.max(epoch,
                    (estimated + batchesPerEpoch - 1) / batchesPerEpoch));
            return new TrainingProgress(epoch, estimatedEpochs, step, estimated, loss, bound, rate,
                    Math.max(0.0, (budgetNanos - spentNanos) / 1e9));
        }
        double left = step == 0 ? Double.NaN : secs * (total - step) / step;
        return new TrainingProgress(epoch, epochs, step, total, loss, bound, rate, Math.max(0.0, left));
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

    static void checkSameLayout(Table a, Table b) {
        if (!a.names().equals(b.names()) || !a.kinds().equals(b.kinds())) {
            throw new IllegalArgumentException("validation has columns " + b.names() + " " + b.kinds()
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
            int lOff = dc * (learned ? 2 : 1);
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
                    double lv = chain.reverseLogVariance(s, v);
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
                    double dLogVarDv = learned && lv != v * chain.logBeta[s] + (1.0 - v) * chain.logVarClipped[s]
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
                    double logit = out[oo + lOff + j];
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
                    grad[oo + lOff + j] = (float) (w * steps * gLogit);
                }
                rowBound[r] = bound;
                total += w * rowLoss;
            }
            dOutputInto.assign(Nd4j.create(grad, new long[] {rows, outputs}, 'c'));
            return total;
        }
    }

    /** What the fit records about itself: this library, this JVM and machine, the clock, the data's hash. */
    private static Provenance provenance(FitOptions options, Table table, int trainingRows, int validationRows,
                                         double seconds, List<EpochRecord> history, List<String> notes) {
        return new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"),
                System.getProperty("os.name") + " " + System.getProperty("os.version"),
                System.getProperty("os.arch"), java.time.Instant.now().toString(), seconds, table.rows(), trainingRows,
                validationRows, table.sha256(), history, notes);
    }
}
