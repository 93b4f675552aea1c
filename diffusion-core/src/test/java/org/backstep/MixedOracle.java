package org.backstep;

import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Estimator;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.TrainingLoss;

import org.backstep.option.StepInput;
import org.backstep.posterior.BinomialDiffusion;
import org.backstep.posterior.GaussianDiffusion;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.TableTransform;
import org.nd4j.linalg.api.ndarray.INDArray;

import java.nio.FloatBuffer;
import java.util.List;

/**
 * The exact estimator of a table with one continuous and one binary column: b ~ Bernoulli(pi),
 * x | b ~ N(m_b, s^2), x diffused by a Gaussian and b by the binomial diffusion at the same t, so
 * that imputation of mixed tables can be checked against Bayes' rule.
 *
 * <p>Given (x_t, b_t), with a = sqrt(alpha-bar_t), u^2 = 1 - alpha-bar_t and V = a^2 s^2 + u^2:
 * the weight of b_0 is w_b proportional to pi_b N(x_t; a m_b, V) q(b_t | b_0 = b) (Bayes' rule; the
 * two diffusions are independent given x_0); given b_0 = b, x_t is Gaussian, so
 * E[eps | x_t, b] = u (x_t - a m_b)/V, E[x_0 | x_t, b] = m_b + a s^2 (x_t - a m_b)/V and
 * Var(x_0 | x_t, b) = s^2 - a^2 s^4 / V (Gaussian conditioning; e.g. Bishop 2006, eq. 2.81-2.82).
 * The outputs are eps-hat = sum_b w_b E[eps | x_t, b], the logit of w_1, and v encoding
 * Var(x_{t-1} | x_t, b_t) = beta-tilde_t + c0^2 Var(x_0 | x_t, b_t) (c0 the posterior mean's x_0
 * coefficient, Ho et al. 2020, eq. 7; law of total variance over b_0) in the log-space interpolation
 * of Nichol &amp; Dhariwal 2021, eq. 15. The chain's kernel is then the moment-matched Gaussian of
 * the exact one for x and the exact one for b (Sohl-Dickstein et al. 2015, binomial posterior
 * averaged over P(b_0 = 1 | x_t, b_t)).
 */
final class MixedOracle implements Estimator {

    private final double pi;
    private final double[] m;
    private final double s2;
    private final double[] a;
    private final double[] u;
    private final double[] tilde;
    private final double[] c0;
    private final double[] logBeta;
    private final double[] logClip;
    private final double[][] logBinary;   // per step: log q(b_t = bt | b_0 = b) at [2 b + bt]

    MixedOracle(NoiseSchedule continuous, NoiseSchedule binarySchedule, double pi, double m0, double m1, double s) {
        this.pi = pi;
        this.m = new double[] {m0, m1};
        this.s2 = s * s;
        int n = continuous.steps();
        GaussianDiffusion g = GaussianDiffusion.of(continuous);
        BinomialDiffusion binary = BinomialDiffusion.of(binarySchedule);
        logBinary = new double[n + 1][4];
        a = new double[n + 1];
        u = new double[n + 1];
        tilde = new double[n + 1];
        c0 = new double[n + 1];
        logBeta = new double[n + 1];
        logClip = new double[n + 1];
        for (int t = 1; t <= n; t++) {
            a[t] = Math.sqrt(continuous.alphaBar(t));
            u[t] = Math.sqrt(continuous.oneMinusAlphaBar(t));
            tilde[t] = g.posteriorVariance(t);
            c0[t] = g.posteriorMeanCoefX0(t);
            logBeta[t] = Math.log(continuous.beta(t));
            logClip[t] = g.posteriorLogVarianceClipped(t);
            for (int b = 0; b <= 1; b++) {
                double one = binary.marginalOne(t, b);
                logBinary[t][2 * b] = Math.log1p(-one);
                logBinary[t][2 * b + 1] = Math.log(one);
            }
        }
    }

    @Override
    public int inputs() {
        return 2;
    }

    @Override
    public int outputs() {
        return 3;
    }

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        int rows = (int) xt.rows();
        float[] x = new float[rows * 2];
        INDArray in = xt.ordering() == 'c' && !xt.isView() ? xt : xt.dup('c');
        in.data().asNioFloat().get(0, x, 0, x.length);   // a bulk copy
        float[] o = new float[rows * 3];
        for (int r = 0; r < rows; r++) {
            int t = steps[r];
            double xc = x[2 * r];
            int bt = x[2 * r + 1] > 0.5f ? 1 : 0;
            double v = a[t] * a[t] * s2 + u[t] * u[t];
            double diff0 = xc - a[t] * m[0];
            double diff1 = xc - a[t] * m[1];
            double logW0 = Math.log1p(-pi) - 0.5 * diff0 * diff0 / v + logBinary[t][bt];
            double logW1 = Math.log(pi) - 0.5 * diff1 * diff1 / v + logBinary[t][2 + bt];
            double w1 = Chain.sigmoid(logW1 - logW0);
            double w0 = 1.0 - w1;
            double mean0 = m[0] + a[t] * s2 * diff0 / v;      // E[x_0 | x_t, b_0 = 0]
            double mean1 = m[1] + a[t] * s2 * diff1 / v;
            double condVar = s2 - a[t] * a[t] * s2 * s2 / v;
            double meanX0 = w0 * mean0 + w1 * mean1;
            double varX0 = condVar + w0 * mean0 * mean0 + w1 * mean1 * mean1 - meanX0 * meanX0;
            double varPrev = tilde[t] + c0[t] * c0[t] * Math.max(0.0, varX0);
            o[3 * r] = (float) (u[t] * (w0 * diff0 + w1 * diff1) / v);    // sum_b w_b E[eps | x_t, b]
            o[3 * r + 1] = (float) ((Math.log(varPrev) - logClip[t]) / (logBeta[t] - logClip[t]));
            o[3 * r + 2] = (float) (logW1 - logW0);
        }
        if (out.ordering() == 'c' && !out.isView()) {
            FloatBuffer view = out.data().asNioFloat();
            view.put(0, o, 0, o.length);
        } else {
            out.assign(org.nd4j.linalg.factory.Nd4j.create(o, new long[] {rows, 3L}, 'c'));
        }
    }

    /** A model of the columns "x" (continuous, used in its own units) and "b" (binary) over this oracle. */
    static DiffusionModel model(NoiseSchedule schedule, double pi, double m0, double m1, double s) {
        NoiseSchedule bin = NoiseSchedule.binomial(schedule.steps());
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(schedule).binarySchedule(bin)
                .variance(ReverseVariance.LEARNED).loss(TrainingLoss.HYBRID).timeEmbedding(2, StepInput.INPUT)
                .hidden(1).logColumns().threads(2).options();
        TableTransform transform = TableTransform.of(List.of("x", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.BINARY),
                List.of(new ColumnTransform(ColumnTransform.Kind.STANDARDIZE, 0.0, 1.0), ColumnTransform.identity()));
        return DiffusionModel.withEstimator(options, transform, new MixedOracle(schedule, bin, pi, m0, m1, s));
    }
}
