package org.backstep;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.Collections;
import java.util.List;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.commons.math3.stat.StatUtils;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.ModelRange;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.option.Conditioning;
import org.backstep.option.Coordinates;
import org.backstep.option.DenoisingOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.table.Whitening;
import org.backstep.training.Provenance;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Coordinates WHITENED on the exact model of Gaussian data: with the STANDARD_NORMAL part and a
 * network whose output layer is zero, the chain in z = W (y - m) is the exact reverse chain of
 * N(0, I) (v = 1: sigma_t^2 = beta_t is the exact reverse variance of N(0, I) data), so the model
 * is N(mu, Sigma) in the caller's units. Each job is checked against the closed form of that
 * Gaussian: densities from commons-math3's {@link MultivariateNormalDistribution}, conditionals by
 * the Schur complement (Anderson 2003, "An Introduction to Multivariate Statistical Analysis",
 * theorem 2.5.1), denoising by the Gaussian posterior E[y | y~] = m + Sigma (Sigma + S)^-1 (y~ - m)
 * (the same theorem applied to the joint of y and y~ = y + n).
 */
class WhitenedCoordinatesTest {

    private static final List<String> NAMES = List.of("a", "b", "c");
    private static final double[] MU = {1.0, -2.0, 0.5};
    /** Strongly correlated, unequal scales: log |det W| of the standardized covariance is about 1.2. */
    private static final double[][] SIGMA = {{4.0, 1.7, 0.9}, {1.7, 1.0, 0.55}, {0.9, 0.55, 0.5}};
    private static final NoiseSchedule SCHEDULE = NoiseSchedule.linear(100, 1e-3, 0.2);
    /** Denoised means against the exact posterior mean: slope within this of 1 (common practice, no source; measured 0.996 to 1.000). */
    private static final double DENOISED_SLOPE = 0.05;
    /** Their mean error, in posterior sd (common practice, no source; measured at most 0.013). */
    private static final double DENOISED_MEAN_ERROR = 0.1;
    /**
     * Their RMSE against the true rows, relative to the exact posterior mean's (common practice, no source;
     * measured 1.007 to 1.021 times, about the 40 draws' Monte Carlo error, 1 + 1/80).
     */
    private static final double DENOISED_RMSE_RATIO = 0.05;

    /** The exact whitened model of N(MU, SIGMA): standardize by MU and the sds, whiten by the correlation. */
    static DiffusionModel exactModel(int threads) {
        int d = MU.length;
        List<ColumnKind> kinds = Collections.nCopies(d, ColumnKind.CONTINUOUS);
        ColumnTransform[] cols = new ColumnTransform[d];
        double[][] corr = new double[d][d];
        for (int a = 0; a < d; a++) {
            cols[a] = ColumnTransform.standardize(MU[a], Math.sqrt(SIGMA[a][a]));
            for (int b = 0; b < d; b++) {
                corr[a][b] = SIGMA[a][b] / Math.sqrt(SIGMA[a][a] * SIGMA[b][b]);
            }
        }
        TableTransform transform = TableTransform.of(NAMES, kinds, List.of(cols));
        FitOptions options = Backstep.builder().continuousSchedule(SCHEDULE).hidden(8)
                .variance(ReverseVariance.LEARNED).baseline(Baseline.STANDARD_NORMAL)
                .coordinates(Coordinates.WHITENED).threads(threads).options();
        NetworkShape shape = new NetworkShape(d, options.hidden(), 2 * d, options.embeddingSize(), options.stepInput());
        ReverseNetwork net = ReverseNetwork.create(shape, SCHEDULE.steps(), 1, true);   // output layer zero
        GaussianBaseline part = GaussianBaseline.standardNormal(d, SCHEDULE);
        Provenance provenance = new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"),
                "", "", "", 0.0, 0, 0, 0, 0, 0, 0, "", List.of(), List.of("zero network"));
        Whitening w = Whitening.of(new double[d], corr, 0.0);
        return DiffusionModel.of(new ModelParts(options, transform, net, new NetworkEstimator(net, part, true),
                provenance, ModelRange.none(d, 0), w));
    }

    private static double[][] draws(int n, int seed) {
        return draws(n, seed, MU, SIGMA);
    }

    /** n rows of N(mu, sigma) from commons-math3's sampler on Well19937c(seed) (also WhitenedDenoisingTest's). */
    static double[][] draws(int n, int seed, double[] mu, double[][] sigma) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), mu, sigma);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        return rows;
    }

    private static Table table(double[][] rows) {
        return table(NAMES, rows);
    }

    /** The rows as a table of continuous columns with these names. */
    static Table table(List<String> names, double[][] rows) {
        return Table.of(names, Collections.nCopies(names.size(), ColumnKind.CONTINUOUS), rows);
    }

    /**
     * The exact bound of the exact model has expectation -log p(y) record by record (the model's
     * joint equals the forward process's, so the bound's gap is zero; only its one draw per term
     * is noise): its mean over 600 records and 2 seeds is within 0.15 nats (about 3 standard
     * errors) of the mean exact negative log density from commons-math3, in original units.
     * Leaving out log |det W| would move it by 1.2 nats.
     */
    @Test
    void theBoundOfTheExactWhitenedModelIsTheGaussianDensity() {
        DiffusionModel model = exactModel(2);
        double[][] rows = draws(600, 3);
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(MU, SIGMA);
        double exact = 0.0;
        for (double[] r : rows) {
            exact -= Math.log(g.density(r));
        }
        exact /= rows.length;
        double bound = 0.0;
        for (int seed = 1; seed <= 2; seed++) {
            bound += model.bound(table(rows), BoundOptions.exact(), seed).meanNatsOriginalUnits() / 2;
        }
        assertEquals(exact, bound, 0.15, "bound " + bound + ", exact " + exact);
    }

    /** The flow's exact likelihood, record by record, within the flow's own tolerance (BaselineFlowTest's). */
    @Test
    void theFlowOfTheExactWhitenedModelIsTheGaussianDensity() {
        DiffusionModel model = exactModel(2);
        double[][] rows = draws(6, 4);
        rows[0] = new double[] {5.0, -0.5, 1.5};   // in the tail
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(MU, SIGMA);
        double[] nats = model.flowLikelihood(table(rows)).natsOriginalUnits();
        for (int r = 0; r < rows.length; r++) {
            double expected = -Math.log(g.density(rows[r]));
            assertEquals(expected, nats[r], BaselineFlowTest.DENSITY_TOLERANCE
                    + BaselineFlowTest.DENSITY_RELATIVE_TOLERANCE * Math.abs(expected), "row " + r);
        }
    }

    /** Samples in original units: mean within 4 standard errors of MU, covariance within 10% (sd about 3%). */
    @Test
    void samplesHaveTheGaussiansMeanAndCovariance() {
        Table s = exactModel(2).sample(3000, 5);
        double[][] rows = s.toArray();
        double[][] cov = new Covariance(rows, false).getCovarianceMatrix().getData();
        for (int a = 0; a < MU.length; a++) {
            double[] col = new double[rows.length];
            for (int i = 0; i < rows.length; i++) {
                col[i] = rows[i][a];
            }
            assertEquals(MU[a], StatUtils.mean(col), 4 * Math.sqrt(SIGMA[a][a] / rows.length), "mean of " + a);
            for (int b = 0; b < MU.length; b++) {
                assertEquals(SIGMA[a][b], cov[a][b], 0.1 * Math.sqrt(SIGMA[a][a] * SIGMA[b][b]), "cov " + a + "," + b);
            }
        }
    }

    /**
     * Column c missing, a and b observed: the imputed means against the Schur complement
     * mu_c + S_co S_oo^-1 (x_o - mu_o) (Anderson 2003, theorem 2.5.1): slope at least 0.95 (the
     * issue's target; plain replacement in standardized coordinates gives 0.77), mean error and
     * variance ratio within 4 standard errors of an exact conditional draw: with n = 200 rows and
     * D = 40 draws each, the mean error (in conditional sd) has standard error 1/sqrt(nD) = 0.011 and
     * the variance ratio (chi-square with nD degrees of freedom over nD) sqrt(2/(nD)) = 0.016
     * (a mean of nD unit normals, and a chi-square's variance 2 nD; the draws independent given the
     * row: common practice, no source). Measured on
     * draw/imputation seeds 6/7, 16/17, 26/27, 36/37, 46/47: mean error at most 0.021 (1.9 se),
     * variance ratio at most 0.035 from 1 (2.2 se).
     */
    @Test
    void imputationsFollowTheSchurComplement() {
        DiffusionModel model = exactModel(2);
        double[][] rows = draws(200, 6);
        RealMatrix s = new Array2DRowRealMatrix(SIGMA);
        RealMatrix soo = s.getSubMatrix(0, 1, 0, 1);
        RealMatrix sco = s.getSubMatrix(2, 2, 0, 1);
        RealMatrix gain = sco.multiply(new LUDecomposition(soo).getSolver().getInverse());
        double condVar = SIGMA[2][2] - gain.multiply(sco.transpose()).getEntry(0, 0);
        double[] exact = new double[rows.length];
        double[][] masked = new double[rows.length][];
        for (int i = 0; i < rows.length; i++) {
            exact[i] = MU[2] + gain.getEntry(0, 0) * (rows[i][0] - MU[0]) + gain.getEntry(0, 1) * (rows[i][1] - MU[1]);
            masked[i] = new double[] {rows[i][0], rows[i][1], Double.NaN};
        }
        Imputation imp = model.impute(table(masked), new ImputationOptions(40, 0.9, 100, 1, Conditioning.REPLACEMENT), 7);
        double[] got = new double[rows.length];
        double sq = 0.0;
        double err = 0.0;
        for (int i = 0; i < rows.length; i++) {
            got[i] = imp.mean().get(i, 2);
            err += (got[i] - exact[i]) / Math.sqrt(condVar) / rows.length;
            for (Table draw : imp.draws()) {
                double e = draw.get(i, 2) - exact[i];
                sq += e * e;
            }
            assertEquals(rows[i][0], imp.mean().get(i, 0), 0.0, "observed cell kept");
        }
        double slope = slope(exact, got);
        double varianceRatio = sq / (rows.length * imp.draws().size()) / condVar;
        assertTrue(slope >= 0.95 && slope <= 1.05, "slope " + slope);
        double nd = rows.length * imp.draws().size();
        assertEquals(0.0, err, 4 / Math.sqrt(nd), "mean error in conditional sd");
        assertEquals(1.0, varianceRatio, 4 * Math.sqrt(2 / nd), "variance ratio");
    }

    /**
     * Readings y~ = y + n, n ~ N(0, D), D = diag(s^2) in original units. The exact posterior mean is
     * m + Sigma (Sigma + D)^-1 (y~ - m) and the exact posterior covariance Sigma - Sigma (Sigma + D)^-1 Sigma
     * (Anderson 2003, theorem 2.5.1 applied to the joint of y and y~ = y + n). The whitened chain releases
     * each direction of the noise's eigenbasis at its own level (Denoiser), so on this exact model the
     * denoised means follow the exact posterior mean: slope within {@link #DENOISED_SLOPE} of 1 per
     * column, mean error within {@link #DENOISED_MEAN_ERROR} posterior sd, RMSE against the true rows
     * within {@link #DENOISED_RMSE_RATIO} of the exact posterior mean's on the same rows, and below the
     * RMSE of the old start's posterior (one level L for every direction: m + (y~ - m) / (1 + L), the
     * same theorem with the joint covariance Sigma, (1 + L) Sigma).
     */
    @Test
    void denoisingFollowsTheExactGaussianPosterior() {
        DiffusionModel model = exactModel(2);
        double[][] rows = draws(150, 8);
        double[] noise = {0.6, 0.3, 0.2};
        Well19937c rng = new Well19937c(9);
        double[][] readings = new double[rows.length][MU.length];
        for (int i = 0; i < rows.length; i++) {
            for (int a = 0; a < MU.length; a++) {
                readings[i][a] = rows[i][a] + noise[a] * rng.nextGaussian();
            }
        }
        Denoising dn = model.denoise(table(readings), new DenoisingOptions(noise, 40, 100), 10);
        double level = SCHEDULE.oneMinusAlphaBar(dn.step()) / SCHEDULE.alphaBar(dn.step());
        RealMatrix sigma = new Array2DRowRealMatrix(SIGMA);
        RealMatrix gain = sigma.multiply(new LUDecomposition(sigma.add(new Array2DRowRealMatrix(new double[][] {
                {noise[0] * noise[0], 0, 0}, {0, noise[1] * noise[1], 0}, {0, 0, noise[2] * noise[2]}}))).getSolver().getInverse());
        RealMatrix post = sigma.subtract(gain.multiply(sigma));
        for (int a = 0; a < MU.length; a++) {
            double[] exact = new double[rows.length];
            double[] got = new double[rows.length];
            double err = 0.0;
            double sqGot = 0.0;
            double sqExact = 0.0;
            double sqOld = 0.0;
            double postSd = Math.sqrt(post.getEntry(a, a));
            for (int i = 0; i < rows.length; i++) {
                exact[i] = MU[a];
                for (int b = 0; b < MU.length; b++) {
                    exact[i] += gain.getEntry(a, b) * (readings[i][b] - MU[b]);
                }
                got[i] = dn.mean().get(i, a);
                err += (got[i] - exact[i]) / postSd / rows.length;
                sqGot += (got[i] - rows[i][a]) * (got[i] - rows[i][a]);
                sqExact += (exact[i] - rows[i][a]) * (exact[i] - rows[i][a]);
                double old = MU[a] + (readings[i][a] - MU[a]) / (1.0 + level);
                sqOld += (old - rows[i][a]) * (old - rows[i][a]);
            }
            double rmse = Math.sqrt(sqGot / rows.length);
            double rmseExact = Math.sqrt(sqExact / rows.length);
            double rmseOld = Math.sqrt(sqOld / rows.length);
            assertEquals(1.0, slope(exact, got), DENOISED_SLOPE, "slope of column " + a);
            assertEquals(0.0, err, DENOISED_MEAN_ERROR, "mean error of column " + a);
            assertEquals(rmseExact, rmse, DENOISED_RMSE_RATIO * rmseExact, "RMSE of column " + a + " (exact " + rmseExact + ")");
            assertTrue(rmse < rmseOld, "RMSE of column " + a + ": " + rmse + ", old start's posterior " + rmseOld);
        }
    }

    /** Save and load: the whitening comes back, so the same seed gives the same bound and samples. */
    @Test
    void theModelFileKeepsTheWhitening(@TempDir Path dir) throws Exception {
        DiffusionModel model = exactModel(1);
        Path file = dir.resolve("w.backstep");
        model.save(file);
        DiffusionModel back = DiffusionModel.load(file);
        // common practice, no source: a saved and reloaded model is the same model, bit for bit (the project's
        // determinism rule: same seed, same model, same samples)
        assertEquals(Coordinates.WHITENED, back.options().coordinates());
        Table rows = table(draws(20, 11));
        assertEquals(model.bound(rows, 3).meanNats(), back.bound(rows, 3).meanNats(), 0.0);
        assertEquals(model.sample(5, 4).get(4, 2), back.sample(5, 4).get(4, 2), 0.0);
    }

    /**
     * The kernel-product conditioning is refused by a whitened model, naming both options and the way
     * out (training rows with a gap are trained on since the whitened coordinates became the default:
     * WhitenedGapsTest).
     */
    @Test
    void refusalsNameTheOption() {
        double[][] masked = {{1.0, -2.0, Double.NaN}};
        IllegalArgumentException product = assertThrows(IllegalArgumentException.class, () -> exactModel(1)
                .impute(table(masked), new ImputationOptions(2, 0.9, 10, 1, Conditioning.KERNEL_PRODUCT), 1));
        // common practice, no source: the message names the conditioning, the coordinates and the fix
        assertTrue(product.getMessage().contains("coordinates WHITENED"), product.getMessage());
        assertTrue(product.getMessage().contains("KERNEL_PRODUCT"), product.getMessage());
        assertTrue(product.getMessage().contains("coordinates(Coordinates.STANDARDIZED)"), product.getMessage());
    }

    /** A short whitened fit on complete rows: the provenance notes the whitening; bound and imputation run. */
    @Test
    void aWhitenedFitRuns() {
        DiffusionModel model = Backstep.builder().coordinates(Coordinates.WHITENED).baseline(Baseline.STANDARD_NORMAL)
                .hidden(8).trainingSteps(20).steps(20).seed(3).fit(table(draws(80, 13)));
        // common practice, no source: a small whitened fit says so in its provenance and gives finite figures
        assertTrue(model.provenance().notes().stream().anyMatch(n -> n.contains("whitened")),
                () -> "notes " + model.provenance().notes());
        assertTrue(Double.isFinite(model.bound(table(draws(10, 14)), 1).meanNats()));
        double[][] masked = {{1.0, Double.NaN, 0.4}};
        assertTrue(Double.isFinite(model.impute(table(masked), 2).mean().get(0, 1)));
    }

    /** Least-squares slope of y on x. */
    static double slope(double[] x, double[] y) {
        double mx = StatUtils.mean(x);
        double my = StatUtils.mean(y);
        double sxy = 0.0;
        double sxx = 0.0;
        for (int i = 0; i < x.length; i++) {
            sxy += (x[i] - mx) * (y[i] - my);
            sxx += (x[i] - mx) * (x[i] - mx);
        }
        return sxy / sxx;
    }
}
