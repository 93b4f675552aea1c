package org.backstep;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.report.BoundReport;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The closed-form part of the estimator ({@link Baseline}, {@link GaussianBaseline}): a model whose
 * network outputs zero is the reverse chain of the Gaussian fitted on the training rows.
 */
class GaussianBaselineTest {

    private static final double[] MU = {10.0, -3.0, 0.5};
    private static final double[][] SIGMA = {{4.0, 1.2, -0.4}, {1.2, 1.0, 0.2}, {-0.4, 0.2, 0.25}};

    static Table gaussianRows(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), MU, SIGMA);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < MU.length; j++) {
            names.add("x" + j);
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(names, kinds, rows);
    }

    /** A model over a network whose output layer is zero, plus the baseline fitted on {@code training}. */
    static DiffusionModel zeroCorrection(Table training, Baseline kind, NoiseSchedule schedule) {
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).continuousSchedule(schedule).hidden(8).baseline(kind).threads(2).options();
        TableTransform transform = TableTransform.fit(training, Set.of());
        int d = transform.modelledContinuous().length;
        float[] x0 = Engine.toFloat(transform.toModelSpace(training));
        GaussianBaseline baseline = GaussianBaseline.fit(kind, x0, training.rows(), d, d, schedule);
        NetworkShape shape = new NetworkShape(d, options.hidden(), 2 * d, options.embeddingSize(), options.stepInput());
        ReverseNetwork net = ReverseNetwork.create(shape, schedule.steps(), 1, true);
        return DiffusionModel.withEstimator(options, transform, new NetworkEstimator(net, baseline, true));
    }

    /** Float32 outputs of a double computation: about 1e-5 relative (common practice, no source). */
    private static final double FLOAT_REL = 2e-5;

    @Test
    void zeroCorrectionPredictsAsTheGaussianOracle() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = gaussianRows(500, 3);
        TableTransform transform = TableTransform.fit(training, Set.of());
        float[] x0 = Engine.toFloat(transform.toModelSpace(training));
        GaussianBaseline baseline = GaussianBaseline.fit(Baseline.FITTED_GAUSSIAN, x0, 500, 3, 3, schedule);
        NetworkShape shape = new NetworkShape(3, new int[] {8}, 6, 8, org.backstep.option.StepInput.EVERY_BLOCK);
        NetworkEstimator est = new NetworkEstimator(ReverseNetwork.create(shape, 100, 4, true), baseline, true);
        // GaussianOracle: an independent implementation of the same closed form in the tests (LU inverse per
        // step, the conditional covariance V_{t-1} - alpha V_{t-1} V_t^-1 V_{t-1}); Bishop 2006, eq. 2.81
        GaussianOracle oracle = new GaussianOracle(schedule, baseline.mean(), shrunk(baseline));
        SplittableRandom rng = new SplittableRandom(8);
        int rows = 64;
        INDArray xt = Nd4j.create(DataType.FLOAT, rows, 3);
        int[] steps = new int[rows];
        for (int r = 0; r < rows; r++) {
            steps[r] = 1 + rng.nextInt(100);
            for (int j = 0; j < 3; j++) {
                xt.putScalar(r, j, (float) (2 * rng.nextGaussian()));
            }
        }
        INDArray a = Nd4j.create(DataType.FLOAT, rows, 6);
        INDArray b = Nd4j.create(DataType.FLOAT, rows, 6);
        est.predict(xt, steps, a);
        oracle.predict(xt, steps, b);
        for (int r = 0; r < rows; r++) {
            for (int c = 0; c < 6; c++) {
                double expected = b.getDouble(r, c);
                assertEquals(expected, a.getDouble(r, c), FLOAT_REL * Math.max(1.0, Math.abs(expected)),
                        "row " + r + " (step " + steps[r] + "), output " + c);
            }
        }
    }

    private static double[][] shrunk(GaussianBaseline b) {
        return b.covariance();
    }

    /**
     * The Gaussian identity: on Gaussian data, the zero-correction model's exact bound (all T terms)
     * equals the negative log-density of the Gaussian the baseline fitted (commons-math3's
     * MultivariateNormalDistribution, in original units through the standardization's Jacobian) up
     * to the bound's gap (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015, eq. 14). With exact
     * reverse kernels the bound of every record is its exact NLL plus KL(q(x_T) || N(0, I)) (see
     * BoundIdentityTest); here the kernels' variances are the diagonal of the exact reverse
     * covariance, so the gap adds, per step, the KL divergence of the full conditional Gaussian from
     * its diagonal version, O(beta_t^2) each.
     */
    @Test
    void zeroCorrectionBoundIsTheFittedGaussiansNegativeLogDensity() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = gaussianRows(1424, 5);
        Table test = gaussianRows(4000, 6);
        DiffusionModel model = zeroCorrection(training, Baseline.FITTED_GAUSSIAN, schedule);
        GaussianBaseline gb = model.parts().baseline();
        double[][] s = gb.covariance();
        MultivariateNormalDistribution fitted = fittedGaussianOriginalUnits(model);
        BoundReport report = model.bound(test, BoundOptions.exact(), 7);
        double[] nats = report.natsOriginalUnits();
        double[] gapAndSe = gapMeanAndStandardError(nats, test, fitted);
        double meanGap = gapAndSe[0];
        double se = gapAndSe[1];
        double expected = expectedGap(schedule, gb.mean(), s);
        // the control variate (BoundEvaluator.exact): for a zero correction every term is its closed-form
        // expectation, so the score of a record does not depend on the seed
        org.junit.jupiter.api.Assertions.assertArrayEquals(report.nats(), model.bound(test, BoundOptions.exact(), 8).nats(),
                1e-9);
        // measured: 0.0424 +/- 0.0007 against the expected 0.0412 (the diagonal kernels' gap and the prior's);
        // with one plain draw per term (before the control variate) it was 0.035 +/- 0.030
        assertTrue(expected > 0 && expected < 0.1, "expected gap " + expected);
        assertEquals(expected, meanGap, STANDARD_ERRORS * se + FLOAT_NATS,
                "bound minus the fitted Gaussian's NLL, mean over " + test.rows() + " records (se " + se + ")");
    }

    /** Monte Carlo checks pass within this many standard errors (common practice, no source). */
    static final double STANDARD_ERRORS = 3.0;
    /** Float32 network arithmetic summed over T = 100 terms of three cells: 1e-3 nats (common practice, no source). */
    static final double FLOAT_NATS = 1e-3;

    /**
     * The gap between a bound and the exact negative log-density, per record: nats[i] + log p(row i);
     * returns its mean over the records and the mean's standard error (sample standard deviation over
     * the square root of the count; common practice, no source).
     */
    static double[] gapMeanAndStandardError(double[] nats, Table test, MultivariateNormalDistribution fitted) {
        double sum = 0;
        double[] gap = new double[test.rows()];
        for (int i = 0; i < test.rows(); i++) {
            gap[i] = nats[i] + Math.log(fitted.density(test.row(i)));
            sum += gap[i];
        }
        double meanGap = sum / test.rows();
        double ss = 0;
        for (double g : gap) {
            ss += (g - meanGap) * (g - meanGap);
        }
        return new double[] {meanGap, Math.sqrt(ss / (test.rows() - 1) / test.rows())};
    }

    @Test
    void aFitWithTheBaselineIsDeterministicAndRoundTripsThroughTheModelFile(@org.junit.jupiter.api.io.TempDir
                                                                            java.nio.file.Path dir) throws Exception {
        Table training = gaussianRows(120, 9);
        Backstep.Builder b = Backstep.builder().steps(10).hidden(8).epochs(3).baseline(Baseline.FITTED_GAUSSIAN)
                .seed(4).threads(2);
        DiffusionModel a = b.fit(training);
        DiffusionModel again = b.fit(training);
        // determinism (the project's rule: same seed, same model)
        org.junit.jupiter.api.Assertions.assertArrayEquals(a.parts().network().parameters(),
                again.parts().network().parameters());
        java.nio.file.Path file = dir.resolve("m.backstep");
        a.save(file);
        DiffusionModel back = DiffusionModel.load(file);
        assertEquals(Baseline.FITTED_GAUSSIAN, back.options().baseline());
        org.junit.jupiter.api.Assertions.assertArrayEquals(a.parts().baseline().mean(), back.parts().baseline().mean());
        Table records = gaussianRows(5, 10);
        // the same model after a round trip: the same bound to the bit (common practice, no source)
        org.junit.jupiter.api.Assertions.assertArrayEquals(a.bound(records, BoundOptions.exact(), 3).nats(),
                back.bound(records, BoundOptions.exact(), 3).nats());
    }

    @Test
    void theStandardNormalBaselineIsExactForStandardNormalData() {
        // with S = I the kernels are exact (v = 1: sigma_t^2 = beta_t), so the bound's gap is the prior's alone
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = gaussianRows(1000, 12);
        DiffusionModel model = zeroCorrection(training, Baseline.STANDARD_NORMAL, schedule);
        double[] m = new double[3];
        double[][] eye = {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}};
        assertEquals(expectedGap(schedule, m, eye), expectedPriorGap(schedule, 3), 1e-9);
        // GaussianOracle of N(0, I): the baseline's outputs equal it
        GaussianOracle oracle = new GaussianOracle(schedule, m, eye);
        INDArray xt = Nd4j.create(new float[] {0.3f, -1.2f, 2.0f, 0.1f, 0.0f, -0.7f}, new long[] {2, 3}, 'c');
        INDArray a = Nd4j.create(DataType.FLOAT, 2, 6);
        INDArray o = Nd4j.create(DataType.FLOAT, 2, 6);
        int[] steps = {1, 77};
        model.parts().estimator().predict(xt, steps, a);
        oracle.predict(xt, steps, o);
        for (int r = 0; r < 2; r++) {
            for (int c = 0; c < 6; c++) {
                assertEquals(o.getDouble(r, c), a.getDouble(r, c), FLOAT_REL * Math.max(1, Math.abs(o.getDouble(r, c))));
            }
        }
    }

    /** KL(N(0, I) diffused to T || N(0, I)) is zero: q(x_T) of N(0, I) data is N(0, I). */
    private static double expectedPriorGap(NoiseSchedule schedule, int d) {
        return 0.0;
    }

    /**
     * The model's fitted Gaussian part N(m, S) (model space) in original units: mean shift + scale * m,
     * covariance S_ij scale_i scale_j, the affine image of a normal (Anderson 2003, theorem 2.4.4).
     */
    static MultivariateNormalDistribution fittedGaussianOriginalUnits(DiffusionModel model) {
        GaussianBaseline gb = model.parts().baseline();
        TableTransform tr = model.transform();
        int d = gb.mean().length;
        double[] mean = new double[d];
        double[][] cov = new double[d][d];
        double[][] s = gb.covariance();
        for (int i = 0; i < d; i++) {
            mean[i] = tr.transform(i).shift() + tr.transform(i).scale() * gb.mean()[i];
            for (int j = 0; j < d; j++) {
                cov[i][j] = s[i][j] * tr.transform(i).scale() * tr.transform(j).scale();
            }
        }
        return new MultivariateNormalDistribution(mean, cov);
    }

    /**
     * The bound's expected gap over the data of the model's own Gaussian N(m, S) in model space:
     * KL(q(x_T) || N(0, I)) plus, for every step, KL(N(mu, C_t) || N(mu, diag C_t)) =
     * (1/2)(sum_j log C_t,jj - log det C_t), where C_t = V_{t-1} - alpha_t V_{t-1} V_t^-1 V_{t-1},
     * V_t = abar_t S + (1 - abar_t) I, is the exact reverse covariance and diag C_t the kernel the
     * baseline gives (Gaussian KL closed form; Gaussian conditioning, Bishop 2006, eq. 2.81).
     */
    static double expectedGap(NoiseSchedule schedule, double[] m, double[][] s) {
        int d = m.length;
        org.apache.commons.math3.linear.RealMatrix cov = new org.apache.commons.math3.linear.Array2DRowRealMatrix(s);
        org.apache.commons.math3.linear.RealMatrix eye = org.apache.commons.math3.linear.MatrixUtils.createRealIdentityMatrix(d);
        double gap = 0;
        for (int t = 1; t <= schedule.steps(); t++) {
            double abar = schedule.alphaBar(t);
            double abarPrev = t == 1 ? 1.0 : schedule.alphaBar(t - 1);
            var vt = cov.scalarMultiply(abar).add(eye.scalarMultiply(1 - abar));
            var vp = cov.scalarMultiply(abarPrev).add(eye.scalarMultiply(1 - abarPrev));
            var inv = new org.apache.commons.math3.linear.LUDecomposition(vt).getSolver().getInverse();
            var c = vp.subtract(vp.multiply(inv).multiply(vp).scalarMultiply(schedule.alpha(t)));
            double logDiag = 0;
            for (int j = 0; j < d; j++) {
                logDiag += Math.log(c.getEntry(j, j));
            }
            gap += 0.5 * (logDiag - Math.log(new org.apache.commons.math3.linear.LUDecomposition(c).getDeterminant()));
        }
        double abarT = schedule.alphaBar(schedule.steps());
        var vT = cov.scalarMultiply(abarT).add(eye.scalarMultiply(1 - abarT));
        double trace = vT.getTrace();
        double mm = 0;
        for (double x : m) {
            mm += abarT * x * x;
        }
        gap += 0.5 * (trace + mm - d - Math.log(new org.apache.commons.math3.linear.LUDecomposition(vT).getDeterminant()));
        return gap;
    }
}
