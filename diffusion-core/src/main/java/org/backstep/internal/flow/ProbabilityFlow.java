package org.backstep.internal.flow;

import org.apache.commons.math3.exception.MathIllegalArgumentException;
import org.apache.commons.math3.exception.MathIllegalStateException;
import org.apache.commons.math3.ode.FirstOrderDifferentialEquations;
import org.apache.commons.math3.ode.nonstiff.DormandPrince54Integrator;
import org.backstep.internal.chain.Estimator;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.Parallel;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.TableTransform;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

import java.nio.FloatBuffer;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.IntStream;

/**
 * The exact log-likelihood of records under the probability-flow ODE of a model's continuous
 * columns (Song et al. 2021, "Score-Based Generative Modeling through Stochastic Differential
 * Equations", ICLR 2021, section 4.3 and appendix D.2).
 *
 * <p><b>The flow.</b> The forward process x_t = sqrt(alpha-bar) x_0 + sigma eps of the variance-
 * preserving kind (Song et al. 2021, eq. 11) has the probability-flow ODE
 * dx/dt = -1/2 beta(t) x - 1/2 beta(t) score(x, t) (eq. 13 with f = -1/2 beta x, g^2 = beta), with
 * score = -eps-hat / sigma, sigma^2 = 1 - alpha-bar. It is written here in the time
 * u = -log SNR = log((1 - alpha-bar)/alpha-bar), with beta dt = d(-log alpha-bar) = sigma^2 du:
 * <pre>
 *   dx/du = h(x, u) = -1/2 sigma^2(u) x + 1/2 sigma(u) eps-hat(x, u),    sigma^2(u) = sigmoid(u)
 *   div h = -1/2 sigma^2(u) Dc + 1/2 sigma(u) tr(d eps-hat / dx)
 *   log p_1(x) = log N(x(u_T); 0, I) + integral from u_1 to u_T of div h(x(u), u) du   (eq. 39)
 * </pre>
 * In u no continuous-time alpha-bar has to be invented: alpha-bar(u) = sigmoid(-u) holds at every
 * step of any schedule and in between.
 *
 * <p><b>The estimator between steps.</b> The network takes integer steps only (its step input is
 * a sinusoidal embedding trained at t = 1..T), so eps-hat(x, u) is the prediction at the step whose
 * u is nearest: step k on the segment between the midpoints (u_(k-1) + u_k)/2 and
 * (u_k + u_(k+1))/2 (u_1 and u_T at the ends). The drift is smooth on each segment, so each
 * segment is integrated on its own, by commons-math3's Dormand-Prince 5(4) integrator
 * (Dormand &amp; Prince 1980) with the given tolerances, the first try one step over the whole
 * segment. This is a choice of ours, measured on Gaussian data with the exact eps-hat (T = 100,
 * 12 records): the nearest step was within 2e-4 to 3.5e-3 nats of the exact density for records
 * from the data and 0.033 for a tail record at 23 nats; eps-hat interpolated linearly in u between
 * neighbouring steps halved these errors (0.017) at twice the cost (two predictions and two traces
 * per evaluation); at T = 1000 both were within 0.004.
 *
 * <p><b>What the figure is.</b> {@code -log p_1(x_0)}: the exact negative log-density of the record
 * under the flow's density at the first step (noise sd sqrt(1 - alpha-bar_1), 0.03 of a standardized
 * column at the defaults), up to the integrator's tolerance and float32 rounding of the network. It
 * is the likelihood of the flow model that shares the chain's estimator, not a bound on the
 * ancestral chain's likelihood (the two models differ unless eps-hat is exact).
 *
 * <p><b>Determinism.</b> Each record is integrated alone (its own step sizes; one record and its Dc
 * tangents per network call), so its figure depends on the record and the model only, never on
 * the other records, the order or the thread count; no random draw is made.
 *
 * <p>Immutable and safe to share between threads.
 */
public final class ProbabilityFlow {

    /** Evaluations allowed per segment before the integration is given up. */
    static final int MAX_EVALUATIONS_PER_SEGMENT = 20_000;
    /** The smallest step, as a share of the segment, before the integration is given up. */
    static final double MIN_STEP_SHARE = 1e-9;

    private final Estimator estimator;
    private final EpsilonTrace trace;
    private final int dc;
    private final int outputs;
    private final int steps;
    private final double[] boundary;    // boundary[k-1], boundary[k]: segment of step k, k = 1..T
    private final double relativeTolerance;
    private final double absoluteTolerance;

    /** Per-record results. */
    public static final class Result {
        /** -log p_1(x), nats, model space. */
        public final double[] nats;
        /** -log N(x(u_T); 0, I), the prior's part of {@link #nats}. */
        public final double[] prior;
        /** Evaluations of the drift per record (each one prediction and one trace). */
        public final int[] evaluations;

        Result(int rows) {
            nats = new double[rows];
            prior = new double[rows];
            evaluations = new int[rows];
        }
    }

    /**
     * @param parts the model's parts; every diffused column must be continuous
     * @param relativeTolerance the integrator's relative tolerance
     * @param absoluteTolerance the integrator's absolute tolerance (model-space units and nats)
     * @throws IllegalArgumentException if the model diffuses binary, integer or categorical columns, or a step's log SNR is
     *     not finite
     */
    /**
     * Refuses a model with a binary, integer or categorical column, naming them: the ODE needs a
     * density, and such a column has a probability mass.
     *
     * @param transform the model's transform
     * @param prefix put before the message (the name of the caller's argument, or "")
     * @throws IllegalArgumentException naming the columns
     */
    public static void requireContinuousOnly(TableTransform transform, String prefix) {
        List<String> discrete = new ArrayList<>();
        for (int j : transform.modelledContinuous()) {
            if (transform.kinds().get(j) == ColumnKind.INTEGER) {
                discrete.add(transform.names().get(j));
            }
        }
        IntStream.concat(IntStream.of(transform.modelledBinary()), IntStream.of(transform.modelledCategorical()))
                .forEach(j -> discrete.add(transform.names().get(j)));
        if (!discrete.isEmpty()) {
            throw new IllegalArgumentException(prefix + "the model diffuses " + discrete.size() + " binary, integer or"
                    + " categorical column(s) " + discrete + "; the flow likelihood covers continuous columns only (the"
                    + " ODE needs a density): use bound(records, seed) for this model");
        }
    }

    public ProbabilityFlow(ModelParts parts, double relativeTolerance, double absoluteTolerance) {
        this.estimator = parts.estimator();
        requireContinuousOnly(parts.transform(), "");
        this.dc = parts.transform().modelledContinuous().length;
        if (dc == 0) {
            throw new IllegalArgumentException("the model diffuses no continuous column; the flow likelihood needs"
                    + " continuous columns");
        }
        this.trace = EpsilonTrace.of(parts);
        this.outputs = estimator.outputs();
        NoiseSchedule schedule = parts.options().continuousSchedule();
        this.steps = schedule.steps();
        double[] u = new double[steps + 1];
        for (int k = 1; k <= steps; k++) {
            u[k] = -schedule.logSnr(k);
            if (!Double.isFinite(u[k])) {
                throw new IllegalArgumentException("log SNR at step " + k + " is " + -u[k]
                        + "; the flow likelihood needs a finite log SNR at every step");
            }
        }
        boundary = new double[steps + 1];
        boundary[0] = u[1];
        for (int k = 1; k < steps; k++) {
            boundary[k] = 0.5 * (u[k] + u[k + 1]);
        }
        boundary[steps] = u[steps];
        this.relativeTolerance = relativeTolerance;
        this.absoluteTolerance = absoluteTolerance;
    }

    /**
     * @param x rows x Dc model-space records, row-major (not modified)
     * @param rows the records
     * @param threads worker threads
     * @return per record, the negative log-likelihood, its prior part and the evaluations
     * @throws IllegalStateException naming the row, if its integration does not converge or the
     *     estimator gives a non-finite value
     */
    public Result evaluate(float[] x, int rows, int threads) {
        Result res = new Result(rows);
        Parallel.forEachChunk(rows, threads, r -> record(x, r, res));
        return res;
    }

    /** Integrates record r alone and writes its figures into res. */
    private void record(float[] x, int r, Result res) {
        Drift drift = new Drift(r);
        double[] y = new double[dc + 1];
        for (int j = 0; j < dc; j++) {
            y[j] = x[r * dc + j];
        }
        int evaluations = 0;
        for (int k = 1; k <= steps; k++) {
            double from = boundary[k - 1];
            double to = boundary[k];
            double length = to - from;
            if (!(length > 0)) {
                continue;
            }
            drift.step[0] = k;
            DormandPrince54Integrator integrator = new DormandPrince54Integrator(MIN_STEP_SHARE * length, length,
                    absoluteTolerance, relativeTolerance);
            integrator.setInitialStepSize(length);
            integrator.setMaxEvaluations(MAX_EVALUATIONS_PER_SEGMENT);
            try {
                integrator.integrate(drift, from, y, to, y);
            } catch (MathIllegalStateException | MathIllegalArgumentException e) {
                throw new IllegalStateException("row " + r + ": the flow integration did not converge on the segment"
                        + " of step " + k + " (u from " + from + " to " + to + "): " + e.getMessage(), e);
            }
            evaluations += integrator.getEvaluations();
        }
        double squares = 0.0;
        for (int j = 0; j < dc; j++) {
            squares += y[j] * y[j];
        }
        double logPrior = -0.5 * squares - 0.5 * dc * Math.log(2 * Math.PI);
        if (!Double.isFinite(logPrior) || !Double.isFinite(y[dc])) {
            throw new IllegalStateException("row " + r + ": the flow ended at a non-finite state (log prior "
                    + logPrior + ", divergence integral " + y[dc] + ")");
        }
        res.nats[r] = -(logPrior + y[dc]);
        res.prior[r] = -logPrior;
        res.evaluations[r] = evaluations;
    }

    /** The drift h and the divergence of one record, with its own buffers. */
    private final class Drift implements FirstOrderDifferentialEquations {
        final int row;
        final int[] step = new int[1];
        final double[] ed = new double[dc];
        final INDArray xt = Nd4j.create(DataType.FLOAT, 1, dc);
        final INDArray out = Nd4j.create(DataType.FLOAT, 1, outputs);
        final FloatBuffer xtView = xt.data().asNioFloat();
        final FloatBuffer outView = out.data().asNioFloat();
        final float[] xf = new float[dc];
        final float[] eps = new float[outputs];
        final double[] tr = new double[1];

        Drift(int row) {
            this.row = row;
        }

        @Override
        public int getDimension() {
            return dc + 1;
        }

        @Override
        public void computeDerivatives(double u, double[] y, double[] yDot) {
            for (int j = 0; j < dc; j++) {
                xf[j] = (float) y[j];
            }
            xtView.put(0, xf, 0, dc);
            estimator.predict(xt, step, out);
            outView.get(0, eps, 0, outputs);
            trace.traces(xf, 1, step[0], tr);
            for (int j = 0; j < dc; j++) {
                ed[j] = eps[j];
            }
            double s2 = 1.0 / (1.0 + Math.exp(-u));
            double s = Math.sqrt(s2);
            for (int j = 0; j < dc; j++) {
                if (!Double.isFinite(ed[j])) {
                    throw new IllegalStateException("row " + row + ": the estimator gave eps-hat " + ed[j]
                            + " for column " + j + " at step " + step[0]);
                }
                yDot[j] = -0.5 * s2 * y[j] + 0.5 * s * ed[j];
            }
            yDot[dc] = -0.5 * s2 * dc + 0.5 * s * tr[0];
            if (!Double.isFinite(yDot[dc])) {
                throw new IllegalStateException("row " + row + ": the Jacobian trace is " + tr[0] + " at step " + step[0]);
            }
        }
    }
}
