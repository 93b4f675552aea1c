package org.backstep.internal.chain;

import org.backstep.option.ReverseVariance;

import org.backstep.posterior.BinomialDiffusion;
import org.backstep.posterior.CategoricalDiffusion;
import org.backstep.posterior.GaussianDiffusion;
import org.backstep.schedule.NoiseSchedule;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

import java.nio.FloatBuffer;
import java.util.SplittableRandom;

/**
 * The reverse chain in model space over one pair of schedules (continuous and binary, the same
 * number of steps K), possibly strided from the training schedules. Every per-step coefficient is
 * computed once in double from {@link GaussianDiffusion} and {@link BinomialDiffusion}; the
 * per-cell work runs in plain Java loops over float rows, which for a table's few columns is faster
 * than a chain of small native calls. The estimator (a network, or an exact closed form in tests)
 * is called with the source step of each chain step.
 *
 * <p>Row-major float arrays: x has rows x D cells, continuous columns first, then binary ones, then
 * one cell per categorical column holding the category's index. Categorical columns are diffused by
 * the multinomial diffusion over the binary schedule ({@link CategoricalDiffusion}; with K = 2 it is
 * the binomial diffusion value for value). The estimator sees each categorical cell one-hot
 * ({@link #encodeInput}: K inputs, one of them 1) and gives one logit per category.
 */
public final class Chain {


    final NoiseSchedule continuous;
    final NoiseSchedule binary;
    final int dc;
    final int db;
    final int dk;                   // categorical columns
    final int d;
    final int discreteEnd;          // dc + db: the first categorical cell of a row
    final int inputs;               // dc + db + sum K: the estimator's input width
    final int outputs;
    final int[] categories;         // K of each categorical column
    final int[] catInput;           // first estimator input of each categorical column
    final int[] catLogits;          // first estimator output (logit) of each categorical column
    final CategoricalDiffusion[] catDiffusion;
    /** Per continuous column, the discretized Gaussian decoder of an integer column, null for a real one. */
    final org.backstep.posterior.DiscretizedGaussian[] decoders;
    final int logitOffset;          // first output column of the binary logits: dc, or 2 dc with learned variances
    final ReverseVariance variance;
    final Estimator estimator;
    final int steps;
    /** The whitened coordinates the chain runs in, or null for standardized ones; set once by {@link #of}. */
    ChainCoordinates coordinates;

    // index k = 1..K (index 0 unused)
    final int[] source;
    final double[] sqrtAbar;
    final double[] sqrtOneMinusAbar;
    final double[] sqrtAlpha;
    final double[] beta;
    final double[] logBeta;
    final double[] logVarClipped;
    final double[] learnedLogVarLo;     // the clamp of a learned log-variance: min(log beta, log beta-tilde) - margin
    final double[] learnedLogVarHi;     // max(log beta, log beta-tilde) + margin
    final double[] coefX0;
    final double[] coefXt;
    final double[] epsCoef;                 // beta / sqrt(1 - abar): mean = (x_t - epsCoef eps-hat) / sqrt(alpha)
    final double[] binMarginalOne0;         // q(x_k = 1 | x0 = 0)
    final double[] binMarginalOne1;         // q(x_k = 1 | x0 = 1)
    final double[][] binPosterior;          // [k][2 x0 + xk] = q(x_{k-1} = 1 | x_k, x0)
    final double priorMeanScale;            // sqrt(abar_K)
    final double priorVariance;             // 1 - abar_K

    /**
     * @param continuous the Gaussian schedule of the continuous columns
     * @param binary the binomial schedule of the binary columns, with as many steps
     * @param dc diffused continuous columns
     * @param db diffused binary columns
     * @param variance how the continuous reverse variance is set
     * @param estimator the network (or an exact closed form in tests), inputs dc + db, outputs as {@link Estimator} says
     */
    public Chain(NoiseSchedule continuous, NoiseSchedule binary, int dc, int db, ReverseVariance variance,
          Estimator estimator) {
        this(continuous, binary, dc, db, new int[0], variance, estimator);
    }

    /**
     * As {@link #Chain(NoiseSchedule, NoiseSchedule, int, int, int[], ReverseVariance, Estimator)},
     * without integer columns.
     */
    public Chain(NoiseSchedule continuous, NoiseSchedule binary, int dc, int db, int[] categories,
          ReverseVariance variance, Estimator estimator) {
        this(continuous, binary, dc, db, categories, new org.backstep.posterior.DiscretizedGaussian[dc], variance,
                estimator);
    }

    /**
     * @param continuous the Gaussian schedule of the continuous columns
     * @param binary the binomial schedule of the binary and categorical columns, with as many steps
     * @param dc diffused continuous columns
     * @param db diffused binary columns
     * @param categories K of each diffused categorical column, each at least 2 (not modified)
     * @param decoders per continuous column, the discretized Gaussian decoder of an integer column or
     *     null (Ho et al. 2020, eq. 13; not modified)
     * @param variance how the continuous reverse variance is set
     * @param estimator inputs dc + db + sum K, outputs as {@link Estimator} says
     */
    public Chain(NoiseSchedule continuous, NoiseSchedule binary, int dc, int db, int[] categories,
          org.backstep.posterior.DiscretizedGaussian[] decoders, ReverseVariance variance, Estimator estimator) {
        if (decoders.length != dc) {
            throw new IllegalArgumentException("decoders has " + decoders.length + " entries; expected " + dc
                    + ", one per continuous column");
        }
        this.decoders = decoders.clone();
        if (continuous.steps() != binary.steps()) {
            throw new IllegalArgumentException("the binary schedule has " + binary.steps()
                    + " steps and the continuous one " + continuous.steps() + "; both kinds are diffused at the same t");
        }
        this.continuous = continuous;
        this.binary = binary;
        this.dc = dc;
        this.db = db;
        this.categories = categories.clone();
        this.dk = categories.length;
        this.discreteEnd = dc + db;
        this.d = dc + db + dk;
        this.variance = variance;
        this.logitOffset = dc * (variance == ReverseVariance.LEARNED ? 2 : 1);
        this.catInput = new int[dk];
        this.catLogits = new int[dk];
        this.catDiffusion = new CategoricalDiffusion[dk];
        int in = dc + db;
        int outAt = logitOffset + db;
        java.util.Map<Integer, CategoricalDiffusion> byK = new java.util.HashMap<>();
        for (int j = 0; j < dk; j++) {
            if (categories[j] < 2) {
                throw new IllegalArgumentException("categorical column " + j + " has " + categories[j]
                        + " categories; expected at least 2 (a column of one category is constant)");
            }
            catInput[j] = in;
            catLogits[j] = outAt;
            in += categories[j];
            outAt += categories[j];
            catDiffusion[j] = byK.computeIfAbsent(categories[j], kk -> CategoricalDiffusion.of(binary, kk));
        }
        this.inputs = in;
        this.outputs = outAt;
        this.estimator = estimator;
        if (estimator.inputs() != inputs || estimator.outputs() != outputs) {
            throw new IllegalArgumentException("the estimator takes " + estimator.inputs() + " inputs and gives "
                    + estimator.outputs() + " outputs; the chain needs " + inputs + " and " + outputs);
        }
        int n = continuous.steps();
        this.steps = n;
        GaussianDiffusion g = GaussianDiffusion.of(continuous);
        BinomialDiffusion b = BinomialDiffusion.of(binary);
        source = new int[n + 1];
        sqrtAbar = new double[n + 1];
        sqrtOneMinusAbar = new double[n + 1];
        sqrtAlpha = new double[n + 1];
        beta = new double[n + 1];
        logBeta = new double[n + 1];
        logVarClipped = new double[n + 1];
        learnedLogVarLo = new double[n + 1];
        learnedLogVarHi = new double[n + 1];
        coefX0 = new double[n + 1];
        coefXt = new double[n + 1];
        epsCoef = new double[n + 1];
        binMarginalOne0 = new double[n + 1];
        binMarginalOne1 = new double[n + 1];
        binPosterior = new double[n + 1][4];
        for (int k = 1; k <= n; k++) {
            source[k] = continuous.sourceStep(k);
            sqrtAbar[k] = Math.sqrt(continuous.alphaBar(k));
            sqrtOneMinusAbar[k] = Math.sqrt(continuous.oneMinusAlphaBar(k));
            sqrtAlpha[k] = Math.sqrt(continuous.alpha(k));
            beta[k] = continuous.beta(k);
            logBeta[k] = Math.log(beta[k]);
            logVarClipped[k] = g.posteriorLogVarianceClipped(k);
            learnedLogVarLo[k] = Math.min(logBeta[k], logVarClipped[k]) - LOG_VARIANCE_MARGIN;
            learnedLogVarHi[k] = Math.max(logBeta[k], logVarClipped[k]) + LOG_VARIANCE_MARGIN;
            coefX0[k] = g.posteriorMeanCoefX0(k);
            coefXt[k] = g.posteriorMeanCoefXt(k);
            epsCoef[k] = beta[k] / sqrtOneMinusAbar[k];
            binMarginalOne0[k] = b.marginalOne(k, 0.0);
            binMarginalOne1[k] = b.marginalOne(k, 1.0);
            for (int x0 = 0; x0 < 2; x0++) {
                for (int xk = 0; xk < 2; xk++) {
                    binPosterior[k][2 * x0 + xk] = b.posteriorOne(k, x0, xk);
                }
            }
        }
        sqrtAbar[0] = 1.0;          // alpha-bar_0 = 1
        sqrtOneMinusAbar[0] = 0.0;
        priorMeanScale = sqrtAbar[n];
        priorVariance = continuous.oneMinusAlphaBar(n);
    }

    /**
     * The full chain of a fit's options over the model space of a transform.
     *
     * @param options the fit's options (schedules, variance)
     * @param transform the column transforms (the model space's columns and categories)
     * @param estimator the estimator, inputs and outputs as {@link #inputsOf} and {@link #outputsOf} say
     * @return the chain
     */
    public static Chain of(org.backstep.option.FitOptions options, org.backstep.table.TableTransform transform,
                           Estimator estimator) {
        return of(options, transform, estimator, null);
    }

    /**
     * The full chain of a fit's options over the model space of a transform, run in the whitened
     * coordinates of {@code whitening} when it is not null.
     *
     * @param whitening the whitening of the real continuous columns ({@link #whitenedColumns}), or null
     * @return the chain
     */
    public static Chain of(org.backstep.option.FitOptions options, org.backstep.table.TableTransform transform,
                           Estimator estimator, org.backstep.table.Whitening whitening) {
        Chain c = plain(options, transform, estimator);
        c.coordinates = whitening == null ? null : new ChainCoordinates(whitening, whitenedColumns(transform));
        return c;
    }

    /**
     * @param transform the column transforms
     * @return the model columns a whitened chain whitens: the modelled continuous columns of kind
     *     CONTINUOUS (integer columns keep their own axis for their decoder),
     *     {@link org.backstep.table.TableTransform#realContinuousColumns}
     */
    public static int[] whitenedColumns(org.backstep.table.TableTransform transform) {
        return transform.realContinuousColumns();
    }

    private static Chain plain(org.backstep.option.FitOptions options, org.backstep.table.TableTransform transform,
                               Estimator estimator) {
        int[] mc = transform.modelledContinuous();
        org.backstep.posterior.DiscretizedGaussian[] decoders = new org.backstep.posterior.DiscretizedGaussian[mc.length];
        for (int j = 0; j < mc.length; j++) {
            if (transform.kinds().get(mc[j]) == org.backstep.table.ColumnKind.INTEGER) {
                org.backstep.table.ColumnTransform t = transform.transform(mc[j]);
                decoders[j] = transform.lowest().containsKey(transform.names().get(mc[j]))
                        ? org.backstep.posterior.DiscretizedGaussian.boundedBelow(t.shift(), t.scale(), 0L)
                        : org.backstep.posterior.DiscretizedGaussian.unbounded(t.shift(), t.scale());
            }
        }
        return new Chain(options.continuousSchedule(), options.binarySchedule(), mc.length,
                transform.modelledBinary().length, transform.modelledCategories(), decoders, options.variance(),
                estimator);
    }

    /** @return the estimator's input width over a transform's model space: Dc + Db + sum K */
    public static int inputsOf(org.backstep.table.TableTransform transform) {
        int in = transform.modelledContinuous().length + transform.modelledBinary().length;
        for (int k : transform.modelledCategories()) {
            in += k;
        }
        return in;
    }

    /** @return the estimator's output width: Dc (1 + [learned variance]) + Db + sum K */
    public static int outputsOf(ReverseVariance variance, org.backstep.table.TableTransform transform) {
        int dc = transform.modelledContinuous().length;
        return dc * (variance == ReverseVariance.LEARNED ? 2 : 1) + inputsOf(transform) - dc;
    }

    /** The same estimator over the sub-schedules that keep the given steps of this chain. */
    public Chain subset(int[] keep) {
        Chain c = new Chain(continuous.subset(keep), binary.subset(keep), dc, db, categories, decoders, variance, estimator);
        c.coordinates = coordinates;
        return c;
    }

    /** @return log |det W| of a whitened chain (add it to a log density of z for one of y), 0 otherwise */
    public double logDeterminant() {
        return coordinates == null ? 0.0 : coordinates.logDeterminant();
    }

    /** @return true if the chain runs in whitened coordinates */
    public boolean whitened() {
        return coordinates != null;
    }

    /** Model-space (standardized) rows to the chain's coordinates, in place; identity unless whitened. */
    public void toChain(float[] x, int rows) {
        if (coordinates != null) {
            coordinates.toChain(x, rows, d);
        }
    }

    /** The chain's coordinates to model-space (standardized) rows, in place; identity unless whitened. */
    public void fromChain(float[] x, int rows) {
        if (coordinates != null) {
            coordinates.fromChain(x, rows, d);
        }
    }

    /** The same estimator over count evenly spaced steps (see {@link NoiseSchedule#strided(int)}). */
    public Chain strided(int count) {
        NoiseSchedule c = continuous.strided(count);
        int[] keep = new int[count];
        for (int i = 0; i < count; i++) {
            keep[i] = indexOfSource(c.sourceStep(i + 1));
        }
        return subset(keep);
    }

    private int indexOfSource(int src) {
        for (int k = 1; k <= steps; k++) {
            if (source[k] == src) {
                return k;
            }
        }
        throw new IllegalStateException("source step " + src + " not in chain");
    }

    /**
     * How far, in nats of log-variance, a learned variance may leave the interval between
     * log beta-tilde_t and log beta_t. The exact reverse variance lies close to that interval
     * (Nichol &amp; Dhariwal 2021, section 3.1); the clamp only stops a network that extrapolates off
     * the data (in sampling) from producing an infinite variance.
     */
    static final double LOG_VARIANCE_MARGIN = 5.0;

    /** log sigma^2 of the continuous reverse kernel at step k, given the network's v (ignored unless learned). */
    double reverseLogVariance(int k, double v) {
        return switch (variance) {
            case FIXED_BETA -> k == 1 ? logVarClipped[1] : logBeta[k];
            case FIXED_POSTERIOR -> logVarClipped[k];
            case LEARNED -> clampLogVariance(k, interpolatedLogVariance(k, v));
        };
    }

    /**
     * The learned log-variance before the clamp, {@code v log beta_k + (1 - v) log beta-tilde_k}
     * (Nichol &amp; Dhariwal 2021, eq. 15); {@link #reverseLogVariance} clamps it.
     */
    double interpolatedLogVariance(int k, double v) {
        return v * logBeta[k] + (1.0 - v) * logVarClipped[k];
    }

    /** The learned log-variance kept within {@link #LOG_VARIANCE_MARGIN} of [log beta-tilde_k, log beta_k]. */
    double clampLogVariance(int k, double lv) {
        return Math.max(learnedLogVarLo[k], Math.min(learnedLogVarHi[k], lv));
    }

    /**
     * Buffers for running the estimator on a batch of one size: x_t and the output as ND4J arrays,
     * bulk views of their native memory, and a heap copy of the output. Not thread-safe.
     *
     * <p>Copies go through {@link FloatBuffer} bulk get and put (a memory copy); ND4J's
     * {@code setData(float[])} and {@code asFloat()} copy element by element, which measured about
     * ten times slower (about 0.2 ms each way for 256 rows of 64 columns, a sizeable share of a step
     * of a 3 x 256 network).
     */
    static final class Workspace {
        final INDArray xt;
        final INDArray out;
        final int rows;
        final int[] stepBuf;
        private final FloatBuffer xtView;
        private final FloatBuffer outView;
        private final float[] outHeap;

        final float[] encoded;           // rows x inputs, the one-hot input of categorical rows; null without them

        Workspace(int rows, int d, int inputs, int outputs) {
            this.rows = rows;
            this.encoded = inputs == d ? null : new float[rows * inputs];
            this.xt = Nd4j.create(DataType.FLOAT, rows, inputs);
            this.out = Nd4j.create(DataType.FLOAT, rows, outputs);
            this.stepBuf = new int[rows];
            this.xtView = xt.data().asNioFloat();
            this.outView = out.data().asNioFloat();
            this.outHeap = new float[rows * outputs];
        }
    }

    Workspace workspace(int rows) {
        return new Workspace(rows, d, inputs, outputs);
    }

    /**
     * Predicts for rows of x (rows x D) with each row at source step src[r].
     *
     * @param ws the workspace of this batch size (its buffers are modified)
     * @param x rows x D, not modified
     * @param srcSteps the training-schedule step of each row, not modified
     * @return rows x outputs, the workspace's own array: valid until the next call with {@code ws}
     */
    float[] predict(Workspace ws, float[] x, int[] srcSteps) {
        if (ws.encoded == null) {
            ws.xtView.put(0, x, 0, ws.rows * d);
        } else {
            encodeInput(x, ws.rows, ws.encoded);
            ws.xtView.put(0, ws.encoded, 0, ws.encoded.length);
        }
        estimator.predict(ws.xt, srcSteps, ws.out);
        ws.outView.get(0, ws.outHeap, 0, ws.outHeap.length);
        return ws.outHeap;
    }

    /**
     * The estimator's input of model-space rows: continuous and binary cells as they are, each
     * categorical cell as K inputs, 1 at its category and 0 elsewhere (cost O(sum K) per row).
     *
     * @param x rows x D, not modified
     * @param rows rows
     * @param into rows x {@link #inputs()}, overwritten
     */
    public void encodeInput(float[] x, int rows, float[] into) {
        if (dk == 0) {
            System.arraycopy(x, 0, into, 0, rows * d);
            return;
        }
        java.util.Arrays.fill(into, 0, rows * inputs, 0f);
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            int io = r * inputs;
            System.arraycopy(x, o, into, io, discreteEnd);
            for (int j = 0; j < dk; j++) {
                into[io + catInput[j] + (int) x[o + discreteEnd + j]] = 1f;
            }
        }
    }

    float[] predictAtStep(Workspace ws, float[] x, int k) {
        java.util.Arrays.fill(ws.stepBuf, source[k]);
        return predict(ws, x, ws.stepBuf);
    }

    /**
     * Fills x (rows x D) with draws of the prior: N(0, 1) for continuous cells, Bernoulli(1/2) for
     * binary ones; row r from {@code rng[r]} (entries may repeat: one generator for every row).
     */
    void drawPrior(float[] x, int rows, SplittableRandom[] rng) {
        for (int r = 0; r < rows; r++) {
            int o = r * d;
            for (int j = 0; j < dc; j++) {
                x[o + j] = (float) rng[r].nextGaussian();
            }
            for (int j = dc; j < discreteEnd; j++) {
                x[o + j] = rng[r].nextDouble() < 0.5 ? 1f : 0f;
            }
            for (int j = 0; j < dk; j++) {
                x[o + discreteEnd + j] = catDiffusion[j].priorDraw(rng[r].nextDouble());
            }
        }
    }

    /**
     * Draws x_k ~ q(x_k | x_0) into xt for every row (Ho et al. 2020, eq. 4; Sohl-Dickstein et al.
     * 2015 for binary cells), at chain step k[r] of each row. Continuous noise is written to eps.
     */
    public void diffuse(float[] x0, int rows, int[] k, float[] xt, float[] eps, SplittableRandom rng) {
        for (int r = 0; r < rows; r++) {
            diffuseRow(x0, r, k[r], xt, eps, rng);
        }
    }

    /**
     * {@link #diffuse(float[], int, int[], float[], float[], SplittableRandom)} with a generator per
     * row: row r draws its noise from {@code rowRng[r]} (entries may repeat: one generator shared by
     * every row draws as the one-generator form does).
     */
    public void diffuse(float[] x0, int rows, int[] k, float[] xt, float[] eps, SplittableRandom[] rowRng) {
        for (int r = 0; r < rows; r++) {
            diffuseRow(x0, r, k[r], xt, eps, rowRng[r]);
        }
    }

    /** x_k of row r into xt: continuous noise first, then one uniform per binary or categorical cell. */
    private void diffuseRow(float[] x0, int r, int s, float[] xt, float[] eps, SplittableRandom rng) {
        int o = r * d;
        for (int j = 0; j < dc; j++) {
            double e = rng.nextGaussian();
            if (eps != null) {
                eps[r * dc + j] = (float) e;
            }
            xt[o + j] = diffusedContinuous(s, x0[o + j], e);
        }
        for (int j = dc; j < d; j++) {
            xt[o + j] = diffusedDiscrete(j, s, x0[o + j], rng.nextDouble());
        }
    }

    /**
     * x_s of binary or categorical cell j (dc &lt;= j &lt; D) given a uniform u: {@link #diffusedBinary}
     * for a binary cell, {@link CategoricalDiffusion#marginalDraw} for a categorical one.
     */
    float diffusedDiscrete(int j, int s, float x0, double u) {
        if (j < discreteEnd) {
            return diffusedBinary(s, x0, u);
        }
        return catDiffusion[j - discreteEnd].marginalDraw(s, (int) x0, Math.min(1.0, u));
    }

    /**
     * The K logits of categorical column j (0-based among the categorical columns) in an output row.
     *
     * @param out rows x outputs
     * @param oo the first output of the row
     * @param j the categorical column
     * @param into K entries, overwritten
     */
    public void logitsInto(float[] out, int oo, int j, double[] into) {
        int at = oo + catLogits[j];
        for (int c = 0; c < into.length; c++) {
            into[c] = out[at + c];
        }
    }

    /** @return a buffer per categorical column for its logits */
    public double[][] logitBuffers() {
        double[][] b = new double[dk][];
        for (int j = 0; j < dk; j++) {
            b[j] = new double[categories[j]];
        }
        return b;
    }

    /**
     * x_s of a continuous cell given its standard normal noise e: sqrt(alpha-bar_s) x_0 +
     * sqrt(1 - alpha-bar_s) e (Ho et al. 2020, eq. 4).
     */
    float diffusedContinuous(int s, float x0, double e) {
        return (float) (sqrtAbar[s] * x0 + sqrtOneMinusAbar[s] * e);
    }

    /** x_s of a binary cell given a uniform u: 1 when u &lt; q(x_s = 1 | x_0) (Sohl-Dickstein et al. 2015). */
    float diffusedBinary(int s, float x0, double u) {
        double p1 = x0 > 0.5f ? binMarginalOne1[s] : binMarginalOne0[s];
        return u < p1 ? 1f : 0f;
    }

    /** @return the logistic function 1 / (1 + e^-l), computed without overflow */
    public static double sigmoid(double l) {
        return l >= 0 ? 1.0 / (1.0 + Math.exp(-l)) : Math.exp(l) / (1.0 + Math.exp(l));
    }

    /**
     * p(x_{k-1} = 1 | x_k) for a binary cell: the posterior averaged over the predicted x_0,
     * q0 + P(x_0 = 1) (q1 - q0) with q_i = q(x_{k-1} = 1 | x_k, x_0 = i) (Sohl-Dickstein et al.
     * 2015, appendix B; the same reverse kernel the bound scores and the sampler draws from).
     */
    double binaryReverseOne(int k, float xk, double pOne) {
        int xi = xk > 0.5f ? 1 : 0;
        double q0 = binPosterior[k][xi];
        return q0 + pOne * (binPosterior[k][2 + xi] - q0);
    }

    /** @return the binomial schedule of the binary columns */
    public NoiseSchedule binarySchedule() {
        return binary;
    }

    /** @return K, the number of steps of this chain */
    public int steps() {
        return steps;
    }

    /** @return Dc, the diffused continuous columns */
    public int continuousColumns() {
        return dc;
    }

    /** @return Db, the diffused binary columns */
    public int binaryColumns() {
        return db;
    }

    /** @return D = Dc + Db + Dk, the width of a model-space row */
    public int width() {
        return d;
    }

    /** @return Dk, the diffused categorical columns */
    public int categoricalColumns() {
        return dk;
    }

    /** @return K of each categorical column (a copy) */
    public int[] categories() {
        return categories.clone();
    }

    /** @return the estimator's input width, Dc + Db + sum K */
    public int inputs() {
        return inputs;
    }

    /** @return the first output column of categorical column j's logits */
    public int categoricalLogitOffset(int j) {
        return catLogits[j];
    }

    /** @return the multinomial diffusion of categorical column j */
    public CategoricalDiffusion categorical(int j) {
        return catDiffusion[j];
    }

    /** @return the estimator's output columns */
    public int outputs() {
        return outputs;
    }

    /** @return the first output column of the binary logits */
    public int logitOffset() {
        return logitOffset;
    }

    /** @return the step of the training schedule that chain step k stands for */
    public int source(int k) {
        return source[k];
    }

}
