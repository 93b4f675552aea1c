package org.backstep;

import org.backstep.internal.chain.Estimator;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.TrainingLoss;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.option.StepInput;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.TableTransform;
import org.nd4j.linalg.api.ndarray.INDArray;

import java.util.ArrayList;
import java.util.List;

/**
 * The exact reverse kernels of Gaussian data x_0 ~ N(mu, Sigma) under a Gaussian diffusion, as an
 * {@link Estimator}, so that the bound, sampling, imputation and denoising code can be checked
 * against closed forms through the same interfaces a trained network uses.
 *
 * <p>With x_t = a x_0 + s eps (a = sqrt(alpha-bar_t), s^2 = 1 - alpha-bar_t), Sigma_t = a^2 Sigma + s^2 I
 * and E[eps | x_t] = s Sigma_t^{-1} (x_t - a mu) (Gaussian conditioning; e.g. Bishop 2006, eq. 2.81).
 * Given eps-hat = E[eps | x_t], the chain's mean (x_t - beta/s eps-hat)/sqrt(alpha) equals
 * E[x_{t-1} | x_t] (Ho et al. 2020, eq. 7 and 11, averaged over x_0 given x_t). The variance v
 * encodes the diagonal of Cov(x_{t-1} | x_t) = V_{t-1} - alpha_t V_{t-1} V_t^{-1} V_{t-1}
 * in the log-space interpolation of Nichol &amp; Dhariwal 2021, eq. 15.
 */
final class GaussianOracle implements Estimator {

    private final NoiseSchedule schedule;
    private final int d;
    private final double[][] epsGain;     // per step: d x d matrix s Sigma_t^{-1}, row-major
    private final double[][] shift;       // per step: a mu
    private final double[][] v;           // per step: v per dimension

    GaussianOracle(NoiseSchedule schedule, double[] mu, double[][] sigma) {
        this.schedule = schedule;
        this.d = mu.length;
        int n = schedule.steps();
        epsGain = new double[n + 1][];
        shift = new double[n + 1][];
        v = new double[n + 1][];
        RealMatrix cov = new Array2DRowRealMatrix(sigma);
        RealMatrix eye = MatrixUtils.createRealIdentityMatrix(d);
        org.backstep.posterior.GaussianDiffusion g = org.backstep.posterior.GaussianDiffusion.of(schedule);
        for (int t = 1; t <= n; t++) {
            double abar = schedule.alphaBar(t);
            double s2 = schedule.oneMinusAlphaBar(t);
            RealMatrix vt = cov.scalarMultiply(abar).add(eye.scalarMultiply(s2));
            RealMatrix inv = new LUDecomposition(vt).getSolver().getInverse();
            RealMatrix gain = inv.scalarMultiply(Math.sqrt(s2));
            epsGain[t] = new double[d * d];
            for (int i = 0; i < d; i++) {
                for (int j = 0; j < d; j++) {
                    epsGain[t][i * d + j] = gain.getEntry(i, j);
                }
            }
            shift[t] = new double[d];
            for (int i = 0; i < d; i++) {
                shift[t][i] = Math.sqrt(abar) * mu[i];
            }
            double abarPrev = schedule.alphaBar(t - 1);
            RealMatrix vPrev = cov.scalarMultiply(abarPrev).add(eye.scalarMultiply(1.0 - abarPrev));
            RealMatrix cond = vPrev.subtract(vPrev.multiply(inv).multiply(vPrev).scalarMultiply(schedule.alpha(t)));
            v[t] = new double[d];
            double logBeta = Math.log(schedule.beta(t));
            double logClip = g.posteriorLogVarianceClipped(t);
            for (int i = 0; i < d; i++) {
                v[t][i] = (Math.log(cond.getEntry(i, i)) - logClip) / (logBeta - logClip);
            }
        }
    }

    @Override
    public int inputs() {
        return d;
    }

    @Override
    public int outputs() {
        return 2 * d;
    }

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        int rows = (int) xt.rows();
        float[] x = new float[rows * d];
        INDArray in = xt.ordering() == 'c' && !xt.isView() ? xt : xt.dup('c');
        in.data().asNioFloat().get(0, x, 0, x.length);   // a bulk copy (asFloat() copies element by element)
        float[] o = new float[rows * 2 * d];
        for (int r = 0; r < rows; r++) {
            int t = steps[r];
            for (int i = 0; i < d; i++) {
                double e = 0.0;
                for (int j = 0; j < d; j++) {
                    e += epsGain[t][i * d + j] * (x[r * d + j] - shift[t][j]);
                }
                o[r * 2 * d + i] = (float) e;
                o[r * 2 * d + d + i] = (float) v[t][i];
            }
        }
        if (out.ordering() == 'c' && !out.isView()) {
            out.data().asNioFloat().put(0, o, 0, o.length);
        } else {
            out.assign(org.nd4j.linalg.factory.Nd4j.create(o, new long[] {rows, 2L * d}, 'c'));
        }
    }

    /** A model whose columns are used in their own units (no standardization): model space = data space. */
    static DiffusionModel model(NoiseSchedule schedule, double[] mu, double[][] sigma, ColumnTransform.Kind kind) {
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        List<ColumnTransform> transforms = new ArrayList<>();
        for (int i = 0; i < mu.length; i++) {
            names.add("x" + i);
            kinds.add(ColumnKind.CONTINUOUS);
            transforms.add(new ColumnTransform(kind, 0.0, 1.0));
        }
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(schedule).variance(ReverseVariance.LEARNED)
                .loss(TrainingLoss.HYBRID).timeEmbedding(2, StepInput.INPUT).hidden(1)
                .logColumns().threads(2).options();
        return DiffusionModel.withEstimator(options, TableTransform.of(names, kinds, transforms),
                new GaussianOracle(schedule, mu, sigma));
    }
}
