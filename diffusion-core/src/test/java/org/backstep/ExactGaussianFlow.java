package org.backstep;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.internal.chain.Estimator;
import org.backstep.internal.flow.EpsilonTrace;
import org.backstep.schedule.NoiseSchedule;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * The exact epsilon-hat of Gaussian data x_0 ~ N(mu, Sigma) and the trace of its Jacobian, as an
 * estimator with fixed variances (epsilon-hat columns only), for checking the flow likelihood
 * against a closed-form density. With x_t = a x_0 + s eps (a^2 = alpha-bar_t, s^2 = 1 - alpha-bar_t),
 * x_t ~ N(a mu, Sigma_t), Sigma_t = a^2 Sigma + s^2 I, and E[eps | x_t] = s Sigma_t^{-1} (x_t - a mu)
 * (Gaussian conditioning, Bishop 2006, eq. 2.81), so d eps-hat / d x_t = s Sigma_t^{-1} and its trace
 * is s tr(Sigma_t^{-1}).
 */
final class ExactGaussianFlow implements Estimator, EpsilonTrace {

    private final int d;
    private final double[][] gain;     // per step: s Sigma_t^{-1}, row-major
    private final double[][] shift;    // per step: a mu
    private final double[] trace;      // per step: s tr(Sigma_t^{-1})

    ExactGaussianFlow(NoiseSchedule schedule, double[] mu, double[][] sigma) {
        d = mu.length;
        int n = schedule.steps();
        gain = new double[n + 1][d * d];
        shift = new double[n + 1][d];
        trace = new double[n + 1];
        RealMatrix cov = new Array2DRowRealMatrix(sigma);
        RealMatrix eye = MatrixUtils.createRealIdentityMatrix(d);
        for (int t = 1; t <= n; t++) {
            double s = Math.sqrt(schedule.oneMinusAlphaBar(t));
            RealMatrix inv = new LUDecomposition(cov.scalarMultiply(schedule.alphaBar(t)).add(eye.scalarMultiply(s * s)))
                    .getSolver().getInverse().scalarMultiply(s);
            for (int i = 0; i < d; i++) {
                for (int j = 0; j < d; j++) {
                    gain[t][i * d + j] = inv.getEntry(i, j);
                }
                shift[t][i] = Math.sqrt(schedule.alphaBar(t)) * mu[i];
            }
            trace[t] = inv.getTrace();
        }
    }

    @Override
    public int inputs() {
        return d;
    }

    @Override
    public int outputs() {
        return d;
    }

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        int rows = (int) xt.rows();
        for (int r = 0; r < rows; r++) {
            int t = steps[r];
            for (int i = 0; i < d; i++) {
                double e = 0.0;
                for (int j = 0; j < d; j++) {
                    e += gain[t][i * d + j] * (xt.getDouble(r, j) - shift[t][j]);
                }
                out.putScalar(r, i, (float) e);
            }
        }
    }

    @Override
    public void traces(float[] x, int rows, int step, double[] into) {
        for (int r = 0; r < rows; r++) {
            into[r] = trace[step];
        }
    }
}
