package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.apache.commons.math3.distribution.MixtureMultivariateNormalDistribution;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.distribution.fitting.MultivariateNormalMixtureExpectationMaximization;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.util.Pair;
import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.MixtureBaseline;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.mixture.GaussianMixture;
import org.backstep.internal.mixture.MixtureFit;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.internal.store.ModelFile;
import org.backstep.io.ModelFileException;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.option.Coordinates;
import org.backstep.option.FitOptions;
import org.backstep.posterior.GaussianDiffusion;
import org.backstep.report.FlowLikelihood;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.Provenance;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The Gaussian mixture part ({@link Baseline#FITTED_MIXTURE}, {@link MixtureBaseline}, {@link MixtureFit}):
 * its EM against commons-math3's, its closed form against Tweedie's formula on commons-math3's mixture
 * density, the zero-correction model's bound and flow against the mixture's exact density, K = 1
 * against {@link Baseline#FITTED_GAUSSIAN}, determinism, the model file and the refusals.
 */
class MixtureBaselineTest {

    private static final double[] WEIGHTS = {0.4, 0.6};
    private static final double[][] MEANS = {{-1.5, 0.5}, {1.2, -0.3}};
    private static final double[][][] COVARIANCES = {{{0.3, 0.1}, {0.1, 0.5}}, {{0.6, -0.2}, {-0.2, 0.4}}};
    private static final List<String> NAMES = List.of("a", "b");
    private static final List<ColumnKind> KINDS = Collections.nCopies(2, ColumnKind.CONTINUOUS);

    /** Float32 outputs of a double computation: about 1e-5 relative (common practice, no source). */
    private static final double FLOAT_REL = 2e-5;
    /** Central differences of a smooth log-density in double, step 1e-4 or 1e-3: error far below this (common practice, no source). */
    private static final double DIFFERENCE_TOLERANCE = 2e-4;
    /**
     * The reverse variance and the Jacobian trace against a Hessian from second central differences (step
     * 1e-3: truncation error O(h^2), and the log-density's rounding amplified by 1 / h^2 = 1e6), compared with
     * the part's float32 outputs: 1e-3 relative (common practice, no source).
     */
    private static final double SECOND_DIFFERENCE_REL = 1e-3;

    private static MixtureMultivariateNormalDistribution truth(long seed) {
        Well19937c random = new Well19937c(seed);
        List<Pair<Double, MultivariateNormalDistribution>> components = new ArrayList<>();
        for (int k = 0; k < WEIGHTS.length; k++) {
            components.add(new Pair<>(WEIGHTS[k], new MultivariateNormalDistribution(random, MEANS[k], COVARIANCES[k])));
        }
        return new MixtureMultivariateNormalDistribution(random, components);
    }

    private static double[][] draw(int n, long seed) {
        MixtureMultivariateNormalDistribution g = truth(seed);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        return rows;
    }

    private static GaussianMixture trueMixture() {
        return GaussianMixture.of(WEIGHTS, MEANS, COVARIANCES, new double[2]);
    }

    /** x_t's density at step t for data of the true mixture: components N(sqrt(abar) m_k, abar S_k + (1 - abar) I). */
    private static MixtureMultivariateNormalDistribution diffused(NoiseSchedule schedule, int t) {
        double abar = schedule.alphaBar(t);
        double[][] m = new double[2][2];
        double[][][] c = new double[2][2][2];
        for (int k = 0; k < 2; k++) {
            for (int i = 0; i < 2; i++) {
                m[k][i] = Math.sqrt(abar) * MEANS[k][i];
                for (int j = 0; j < 2; j++) {
                    c[k][i][j] = abar * COVARIANCES[k][i][j] + (i == j ? 1 - abar : 0.0);
                }
            }
        }
        return new MixtureMultivariateNormalDistribution(WEIGHTS, m, c);
    }

    private static double logDensity(MixtureMultivariateNormalDistribution p, double x, double y) {
        return Math.log(p.density(new double[] {x, y}));
    }

    /**
     * EM without the prior against commons-math3's MultivariateNormalMixtureExpectationMaximization
     * (maximum likelihood, the same updates), both started from the same mixture on 3,000 rows of a
     * well-separated two-component mixture, both run to a change of the mean log-likelihood below 1e-12.
     */
    @Test
    void emAgreesWithCommonsMath() {
        double[][] x = draw(3000, 11);
        double[][] startMeans = {{-1.0, 0.0}, {1.0, 0.0}};
        double[][][] eye = {{{1, 0}, {0, 1}}, {{1, 0}, {0, 1}}};
        MixtureMultivariateNormalDistribution start = new MixtureMultivariateNormalDistribution(
                new double[] {0.5, 0.5}, startMeans, eye);
        MultivariateNormalMixtureExpectationMaximization reference = new MultivariateNormalMixtureExpectationMaximization(x);
        reference.fit(start, 10_000, 1e-12);
        GaussianMixture ours = MixtureFit.em(x, GaussianMixture.of(new double[] {0.5, 0.5}, startMeans, eye, new double[2]),
                10_000, 1e-12, false);
        List<Pair<Double, MultivariateNormalDistribution>> components = reference.getFittedModel().getComponents();
        for (int k = 0; k < 2; k++) {
            // commons-math3's fitted parameters (general-purpose library, same start): agreement to the convergence threshold
            assertEquals(components.get(k).getFirst(), ours.weights()[k], 1e-6, "weight " + k);
            assertArrayEquals(components.get(k).getSecond().getMeans(), ours.mean(k), 1e-5, "mean " + k);
            double[][] cov = components.get(k).getSecond().getCovariances().getData();
            for (int i = 0; i < 2; i++) {
                assertArrayEquals(cov[i], ours.covariance(k)[i], 1e-5, "covariance " + k + " row " + i);
            }
        }
        // and the fit recovers the generating mixture (3,000 rows: standard errors about 0.02; common practice, no source)
        int first = ours.mean(0)[0] < ours.mean(1)[0] ? 0 : 1;
        assertArrayEquals(MEANS[0], ours.mean(first), 0.1);
        assertArrayEquals(MEANS[1], ours.mean(1 - first), 0.1);
    }

    /** The regularized fit chooses K = 2 by BIC on rows of a two-component mixture, and is deterministic. */
    @Test
    void bicChoosesTwoComponentsAndTheFitIsDeterministic() {
        double[][] x = draw(1000, 12);
        float[] x0 = Engine.toFloat(x);
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        MixtureBaseline a = (MixtureBaseline) ClosedFormPart.fit(Baseline.FITTED_MIXTURE, x0, 1000, 2, 2, schedule, 5);
        MixtureBaseline b = (MixtureBaseline) ClosedFormPart.fit(Baseline.FITTED_MIXTURE, x0, 1000, 2, 2, schedule, 5);
        // rows drawn from two components: the criterion of Schwarz 1978 picks 2 of 1..6
        assertEquals(2, a.mixture().components(), "BIC " + java.util.Arrays.toString(a.bic()));
        assertEquals(MixtureFit.MAX_COMPONENTS, a.bic().length);
        // determinism (the project's rule): same rows and seed, same bits
        assertArrayEquals(a.mixture().weights(), b.mixture().weights());
        assertArrayEquals(a.mixture().covariance(1)[0], b.mixture().covariance(1)[0]);
        assertArrayEquals(a.bic(), b.bic());
    }

    /** A single regularized component on one row (or none) still has an invertible covariance: the prior's scale. */
    @Test
    void aComponentOfOneRowHasAnInvertibleCovariance() {
        double[][] x = draw(40, 13);
        x[0] = new double[] {30.0, -30.0};   // an outlier a component may take alone
        GaussianMixture fit = MixtureFit.em(x, GaussianMixture.of(new double[] {0.5, 0.5},
                new double[][] {{30.0, -30.0}, {0.0, 0.0}}, new double[][][] {{{1, 0}, {0, 1}}, {{1, 0}, {0, 1}}},
                new double[2]), 200, 1e-9, true);
        for (int k = 0; k < 2; k++) {
            double[][] c = fit.covariance(k);
            // Fraley & Raftery 2007: the posterior mode's covariance is at least Lambda / (nu + N_k + d + 2), positive definite
            assertTrue(c[0][0] > 0 && c[0][0] * c[1][1] - c[0][1] * c[1][0] > 0, "component " + k);
        }
    }

    /**
     * The closed form against Tweedie's formula on commons-math3's density of x_t: E[eps | x_t] =
     * -sqrt(1 - abar_t) grad log p_t(x_t) (Vincent 2011, section 4; Efron 2011, "Tweedie's formula and
     * selection bias", JASA 106, eq. 2.8 for the first moment, from memory), and the kernel variance
     * of the learned v against the reverse variance from the second-order formula,
     * Var(x_{t-1} | x_t) = c0^2 Cov(x_0 | x_t) + beta-tilde_t, c0 = sqrt(abar_{t-1}) beta_t / (1 - abar_t)
     * (Ho et al. 2020, eq. 7), Cov(x_0 | x_t) = ((1 - abar_t) I + (1 - abar_t)^2 H) / abar_t with H the
     * Hessian of log p_t; and the Jacobian trace against -sqrt(1 - abar_t) tr(H). H and the gradient by
     * central differences.
     */
    @Test
    void theClosedFormIsTweediesFormulaOfTheDiffusedMixture() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        GaussianDiffusion g = GaussianDiffusion.of(schedule);
        MixtureBaseline part = MixtureBaseline.of(trueMixture(), new double[0], schedule);
        SplittableRandom rng = new SplittableRandom(3);
        int[] steps = {1, 2, 5, 20, 50, 77, 100};
        for (int t : steps) {
            MixtureMultivariateNormalDistribution pt = diffused(schedule, t);
            double abar = schedule.alphaBar(t);
            double sn = Math.sqrt(1 - abar);
            for (int trial = 0; trial < 6; trial++) {
                double x = 2.0 * rng.nextDouble() - 1.0 + (trial % 2 == 0 ? -1.0 : 1.0);
                double y = 2.0 * rng.nextDouble() - 1.0;
                float[] xt = {(float) x, (float) y};
                double xf = xt[0];
                double yf = xt[1];
                float[] out = new float[4];
                part.addToRowInPlace(xt, 0, t, out, 0, true, new double[part.scratchSize()]);
                double h = 1e-4;
                double gx = (logDensity(pt, xf + h, yf) - logDensity(pt, xf - h, yf)) / (2 * h);
                double gy = (logDensity(pt, xf, yf + h) - logDensity(pt, xf, yf - h)) / (2 * h);
                double hh = 1e-3;
                double f0 = logDensity(pt, xf, yf);
                double hxx = (logDensity(pt, xf + hh, yf) - 2 * f0 + logDensity(pt, xf - hh, yf)) / (hh * hh);
                double hyy = (logDensity(pt, xf, yf + hh) - 2 * f0 + logDensity(pt, xf, yf - hh)) / (hh * hh);
                String at = "step " + t + " at (" + xf + ", " + yf + ")";
                assertEquals(-sn * gx, out[0], DIFFERENCE_TOLERANCE + FLOAT_REL * Math.abs(sn * gx), "eps_0, " + at);
                assertEquals(-sn * gy, out[1], DIFFERENCE_TOLERANCE + FLOAT_REL * Math.abs(sn * gy), "eps_1, " + at);
                double abarPrev = t == 1 ? 1.0 : schedule.alphaBar(t - 1);
                double beta = schedule.beta(t);
                double c0 = Math.sqrt(abarPrev) * beta / (1 - abar);
                double tilde = (1 - abarPrev) / (1 - abar) * beta;
                double logBeta = Math.log(beta);
                double logTilde = g.posteriorLogVarianceClipped(t);
                double[] hess = {hxx, hyy};
                for (int j = 0; j < 2; j++) {
                    double cov0 = ((1 - abar) + (1 - abar) * (1 - abar) * hess[j]) / abar;
                    double expected = c0 * c0 * cov0 + tilde;
                    // the kernel variance of v (Nichol & Dhariwal 2021, eq. 15)
                    double kernel = Math.exp(out[2 + j] * logBeta + (1 - out[2 + j]) * logTilde);
                    assertEquals(expected, kernel, SECOND_DIFFERENCE_REL * expected, "reverse variance " + j + ", " + at);
                }
                double[] trace = new double[1];
                part.addTracesInPlace(xt, 2, 1, t, trace);
                double expectedTrace = -sn * (hxx + hyy);
                assertEquals(expectedTrace, trace[0], SECOND_DIFFERENCE_REL * Math.max(1, Math.abs(expectedTrace)), "trace, " + at);
            }
        }
    }

    /**
     * K = 1 is FITTED_GAUSSIAN: on Gaussian rows BIC picks one component, and the part's outputs are
     * GaussianBaseline's to the bit; and a mixture of two equal components (the general path) gives
     * the Gaussian's outputs to float rounding (a mixture of identical Gaussians is that Gaussian).
     */
    @Test
    void oneComponentIsTheFittedGaussian() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = GaussianBaselineTest.gaussianRows(500, 3);
        TableTransform transform = TableTransform.fit(training, java.util.Set.of());
        float[] x0 = Engine.toFloat(transform.toModelSpace(training));
        ClosedFormPart mixture = ClosedFormPart.fit(Baseline.FITTED_MIXTURE, x0, 500, 3, 3, schedule, 1);
        GaussianBaseline gaussian = GaussianBaseline.fit(Baseline.FITTED_GAUSSIAN, x0, 500, 3, 3, schedule);
        // BIC (Schwarz 1978, "Estimating the dimension of a model", Annals of Statistics 6:461-464) on
        // Gaussian rows picks one component; the outputs equal GaussianBaseline's: common practice, no source
        assertEquals(1, ((MixtureBaseline) mixture).mixture().components(),
                "BIC " + java.util.Arrays.toString(((MixtureBaseline) mixture).bic()));
        assertTrue(mixture.linear() != null, "a one-component mixture is linear (the bound's control variate)");
        GaussianMixture twin = GaussianMixture.of(new double[] {0.5, 0.5}, new double[][] {gaussian.mean(), gaussian.mean()},
                new double[][][] {gaussian.covariance(), gaussian.covariance()}, new double[2]);
        MixtureBaseline twins = MixtureBaseline.of(twin, new double[0], schedule);
        SplittableRandom rng = new SplittableRandom(8);
        int rows = 64;
        float[] xt = new float[rows * 3];
        int[] steps = new int[rows];
        for (int r = 0; r < rows; r++) {
            steps[r] = 1 + rng.nextInt(100);
            for (int j = 0; j < 3; j++) {
                xt[r * 3 + j] = (float) (2 * rng.nextGaussian());
            }
        }
        float[] a = new float[rows * 6];
        float[] b = new float[rows * 6];
        float[] c = new float[rows * 6];
        mixture.addInPlace(xt, 3, steps, a, 6, rows, true);
        gaussian.addInPlace(xt, 3, steps, b, 6, rows, true);
        twins.addInPlace(xt, 3, steps, c, 6, rows, true);
        assertArrayEquals(b, a);
        // a mixture of two identical Gaussians is that Gaussian (arithmetic); FLOAT_REL for float32 outputs
        for (int i = 0; i < b.length; i++) {
            assertEquals(b[i], c[i], FLOAT_REL * Math.max(1, Math.abs(b[i])), "output " + i + " of two equal components");
        }
        double[] ta = new double[rows];
        double[] tb = new double[rows];
        gaussian.addTracesInPlace(xt, 3, rows, 40, ta);
        twins.addTracesInPlace(xt, 3, rows, 40, tb);
        // the traces in double: 1e-9 for summation order (common practice, no source)
        assertArrayEquals(ta, tb, 1e-9);
    }

    /** A model over a network whose output layer is zero, with the true mixture's part, in data units. */
    private static DiffusionModel zeroCorrection(NoiseSchedule schedule, org.backstep.option.ReverseVariance variance) {
        TableTransform transform = TableTransform.of(NAMES, KINDS, Collections.nCopies(2, ColumnTransform.standardize(0, 1)));
        // standardized coordinates: the parts carry no whitening (the true mixture is given in data units)
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED)
                .continuousSchedule(schedule).hidden(8).variance(variance)
                .baseline(Baseline.FITTED_MIXTURE).threads(2).options();
        boolean learned = variance == org.backstep.option.ReverseVariance.LEARNED;
        NetworkShape shape = new NetworkShape(2, options.hidden(), learned ? 4 : 2, options.embeddingSize(), options.stepInput());
        ReverseNetwork net = ReverseNetwork.create(shape, schedule.steps(), 1, true);   // output layer zero
        Provenance provenance = new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"),
                "", "", "", 0.0, 0, 0, 0, 0, 0, 0, "", List.of(), List.of("zero network"));
        return DiffusionModel.of(new ModelParts(options, transform, net,
                new NetworkEstimator(net, MixtureBaseline.of(trueMixture(), new double[0], schedule), learned), provenance));
    }

    /**
     * The mixture identity: on rows of the mixture, the zero-correction model's exact bound (all T
     * terms) is the mixture's negative log-density (commons-math3's MixtureMultivariateNormalDistribution)
     * plus the bound's gap (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015, eq. 14): the prior's
     * KL(q(x_T) || N(0, I)) and, per step, the KL of the mixture's reverse distribution from the
     * Gaussian kernel with its mean and diagonal variance. The gap is positive and small.
     */
    @Test
    void zeroCorrectionBoundIsTheMixturesNegativeLogDensityPlusASmallGap() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        DiffusionModel model = zeroCorrection(schedule, org.backstep.option.ReverseVariance.LEARNED);
        double[][] rows = draw(3000, 21);
        Table test = Table.of(NAMES, KINDS, rows);
        double[] nats = model.bound(test, BoundOptions.exact(), 7).natsOriginalUnits();
        MixtureMultivariateNormalDistribution p = truth(1);
        double sum = 0;
        double ss = 0;
        for (int i = 0; i < rows.length; i++) {
            double gap = nats[i] + Math.log(p.density(rows[i]));
            sum += gap;
            ss += gap * gap;
        }
        double mean = sum / rows.length;
        double se = Math.sqrt((ss / rows.length - mean * mean) / (rows.length - 1));
        // measured: -0.009 +/- 0.029 (no control variate for a mixture: one draw per term, per-record sd about 1.6);
        // an upper bound on the NLL in expectation, so not below zero beyond noise
        assertTrue(mean > -3 * se, "mean gap " + mean + " (se " + se + ")");
        assertTrue(mean < MIXTURE_GAP, "mean gap " + mean + " (se " + se + ")");
    }

    /**
     * The largest mean gap allowed: about 3.5 standard errors of the 3,000-record mean above zero (the
     * gap itself is small: 0.04 nats for the Gaussian part on 3-D data, GaussianBaselineTest).
     */
    private static final double MIXTURE_GAP = 0.1;

    /**
     * The flow likelihood of the zero-correction model (eps-hat the mixture's exact E[eps | x_t], its
     * trace the closed form) is the density of x_1 under the diffused mixture (Song et al. 2021,
     * section 4.3: the flow carries q(x_t) along), checked against commons-math3's mixture density;
     * schedule and tolerances as BaselineFlowTest's (the N(0, I) prior is then exact to 1e-6).
     */
    @Test
    void theFlowOfTheMixturePartIsTheDiffusedMixturesDensity() {
        NoiseSchedule schedule = NoiseSchedule.linear(100, 1e-3, 0.3);
        DiffusionModel model = zeroCorrection(schedule, org.backstep.option.ReverseVariance.FIXED_POSTERIOR);
        double[][] rows = draw(8, 23);
        rows[0] = new double[] {0.0, 0.1};     // between the components
        rows[1] = new double[] {3.0, -2.0};    // in the tail
        FlowLikelihood flow = model.flowLikelihood(Table.of(NAMES, KINDS, rows));
        MixtureMultivariateNormalDistribution p1 = diffused(schedule, 1);
        double[] nats = flow.nats();
        for (int r = 0; r < rows.length; r++) {
            double expected = -Math.log(p1.density(rows[r]));
            assertEquals(expected, nats[r], BaselineFlowTest.DENSITY_TOLERANCE
                    + BaselineFlowTest.DENSITY_RELATIVE_TOLERANCE * Math.abs(expected), "row " + r);
        }
    }

    private static Table mixtureTable(int n, long seed) {
        return Table.of(NAMES, KINDS, draw(n, seed));
    }

    /**
     * A fit with the mixture part: deterministic, written as format version 6, and the same model after
     * a round trip (standardized and whitened coordinates).
     */
    @Test
    void aFitIsDeterministicAndRoundTripsThroughTheModelFile(@TempDir Path dir) throws Exception {
        Table training = mixtureTable(300, 31);
        Table records = mixtureTable(6, 32);
        for (Coordinates coordinates : Coordinates.values()) {
            Backstep.Builder b = Backstep.builder().steps(10).hidden(8).epochs(2).baseline(Baseline.FITTED_MIXTURE)
                    .coordinates(coordinates).seed(4).threads(2);
            DiffusionModel a = b.fit(training);
            DiffusionModel again = b.fit(training);
            // determinism (the project's rule: same seed, same model)
            assertArrayEquals(a.parts().network().parameters(), again.parts().network().parameters());
            MixtureBaseline part = (MixtureBaseline) a.parts().closedForm();
            assertEquals(2, part.mixture().components(), coordinates + ": BIC " + java.util.Arrays.toString(part.bic()));
            Path file = dir.resolve("m-" + coordinates + ".backstep");
            a.save(file);
            ObjectNode manifest = (ObjectNode) JSON.readTree(ModelFileTest.entries(file).get(ModelFile.MANIFEST));
            assertEquals(ModelFile.MIXTURE_VERSION, manifest.get("formatVersion").asInt());
            DiffusionModel back = DiffusionModel.load(file);
            assertEquals(Baseline.FITTED_MIXTURE, back.options().baseline());
            MixtureBaseline backPart = (MixtureBaseline) back.parts().closedForm();
            assertArrayEquals(part.mixture().weights(), backPart.mixture().weights());
            assertArrayEquals(part.mixture().covariance(1)[1], backPart.mixture().covariance(1)[1]);
            assertArrayEquals(part.bic(), backPart.bic());
            // the same model after a round trip: the same bound to the bit (common practice, no source)
            assertArrayEquals(a.bound(records, BoundOptions.exact(), 3).nats(), back.bound(records, BoundOptions.exact(), 3).nats());
        }
    }

    /**
     * Every job of a model runs with the mixture part and gives finite figures (the part enters through
     * the estimator, which every job calls): the exact, sampled and steady bounds, the screen, ancestral
     * and implicit sampling, imputation, denoising and the flow likelihood; and the steady bound is an
     * upper bound in expectation like the exact one, so their means over the records agree within
     * their noise (common practice, no source).
     */
    @Test
    void everyJobRunsWithTheMixturePart() {
        Table training = mixtureTable(300, 51);
        Table records = mixtureTable(20, 52);
        DiffusionModel model = Backstep.builder().steps(20).hidden(16).epochs(3).baseline(Baseline.FITTED_MIXTURE)
                .coordinates(Coordinates.WHITENED).seed(6).threads(2).fit(training);
        double exact = mean(model.bound(records, BoundOptions.exact(), 1).nats());
        double steady = mean(model.bound(records, BoundOptions.steady(16), 1).nats());
        double sampled = mean(model.bound(records, BoundOptions.sampled(8), 1).nats());
        assertTrue(Double.isFinite(exact) && Double.isFinite(steady) && Double.isFinite(sampled),
                exact + " " + steady + " " + sampled);
        assertEquals(exact, steady, 1.0, "exact and steady bounds, mean over 20 records");
        org.backstep.report.AnomalyScreen screen = model.screen(mixtureTable(20, 53), records, 2);
        for (double v : screen.scores()) {
            assertTrue(Double.isFinite(v), "screen score " + v);
        }
        for (Table t : List.of(model.sample(10, 3), model.sample(10, org.backstep.option.SamplingPlan.implicit(10, 0.0), 3))) {
            for (int r = 0; r < t.rows(); r++) {
                for (double v : t.row(r)) {
                    assertTrue(Double.isFinite(v), "sample " + v);
                }
            }
        }
        double[][] gaps = draw(10, 54);
        for (int r = 0; r < gaps.length; r++) {
            gaps[r][r % 2] = Double.NaN;
        }
        Table imputed = model.impute(Table.of(NAMES, KINDS, gaps), Defaults.imputation().withDraws(5), 4).mean();
        for (int r = 0; r < imputed.rows(); r++) {
            assertTrue(Double.isFinite(imputed.row(r)[r % 2]), "imputed cell of row " + r);
            assertEquals(gaps[r][1 - r % 2], imputed.row(r)[1 - r % 2], 1e-9, "observed cell of row " + r);
        }
        Table denoised = model.denoise(records, new org.backstep.option.DenoisingOptions(new double[] {0.2, 0.2}, 5, 20), 5).mean();
        for (int r = 0; r < denoised.rows(); r++) {
            assertTrue(Double.isFinite(denoised.row(r)[0]) && Double.isFinite(denoised.row(r)[1]), "denoised row " + r);
        }
        for (double v : model.flowLikelihood(mixtureTable(2, 55)).nats()) {
            assertTrue(Double.isFinite(v), "flow " + v);
        }
    }

    private static double mean(double[] a) {
        double s = 0;
        for (double v : a) {
            s += v;
        }
        return s / a.length;
    }

    @Test
    void aDamagedMixtureModelFileIsRefusedByName(@TempDir Path dir) throws Exception {
        Table training = mixtureTable(200, 41);
        DiffusionModel model = Backstep.builder().steps(10).hidden(8).epochs(1).baseline(Baseline.FITTED_MIXTURE)
                .seed(2).threads(2).fit(training);
        Path file = dir.resolve("m.backstep");
        model.save(file);
        // the project's rule that damaged files are refused by name; common practice, no source
        ModelFileException older = refusedEdit(dir, file, root -> root.put("formatVersion", 5));
        assertTrue(older.getMessage().contains("FITTED_MIXTURE") && older.getMessage().contains("version 6"), older.getMessage());
        ModelFileException absent = refusedEdit(dir, file, root -> root.remove("mixtureBaseline"));
        assertTrue(absent.getMessage().contains("mixtureBaseline"), absent.getMessage());
        ModelFileException weights = refusedEdit(dir, file, root -> ((com.fasterxml.jackson.databind.node.ArrayNode)
                root.get("mixtureBaseline").get("weights")).set(0, 0.9));
        assertTrue(weights.getMessage().contains("weights sum"), weights.getMessage());
        ModelFileException gaussian = refusedEdit(dir, file, root -> ((ObjectNode) root.get("options")).put("baseline", "NONE"));
        assertTrue(gaussian.getMessage().contains("mixtureBaseline"), gaussian.getMessage());
    }

    @Test
    void badMixturesAreRefusedByName() {
        // the project's rule that every entry point refuses bad input by name; common practice, no source
        // ({{1, 2}, {2, 1}} has eigenvalues 3 and -1: not positive definite, arithmetic)
        IllegalArgumentException sum = assertThrows(IllegalArgumentException.class, () -> GaussianMixture.of(
                new double[] {0.5, 0.6}, MEANS, COVARIANCES, new double[2]));
        assertTrue(sum.getMessage().contains("weights sum"), sum.getMessage());
        IllegalArgumentException notPd = assertThrows(IllegalArgumentException.class, () -> GaussianMixture.of(
                new double[] {1.0}, new double[][] {{0, 0}}, new double[][][] {{{1, 2}, {2, 1}}}, new double[1]));
        assertTrue(notPd.getMessage().contains("not positive definite"), notPd.getMessage());
        IllegalArgumentException kind = assertThrows(IllegalArgumentException.class, () -> GaussianBaseline.fit(
                Baseline.FITTED_MIXTURE, new float[4], 2, 2, 2, NoiseSchedule.linear(10)));
        assertTrue(kind.getMessage().contains("FITTED_MIXTURE"), kind.getMessage());
    }

    // ------------------------------------------------------------------ helpers

    private static final ObjectMapper JSON = new ObjectMapper();

    /** The file with its manifest edited and SHA256SUMS recomputed (ModelFileTest's helpers), loaded: the refusal. */
    private static ModelFileException refusedEdit(Path dir, Path file, java.util.function.Consumer<ObjectNode> edit)
            throws IOException {
        Map<String, byte[]> entries = ModelFileTest.entries(file);
        ObjectNode root = (ObjectNode) JSON.readTree(entries.get(ModelFile.MANIFEST));
        edit.accept(root);
        entries.put(ModelFile.MANIFEST, JSON.writeValueAsBytes(root));
        entries.put(ModelFile.SUMS, ModelFileTest.sums(entries).getBytes(StandardCharsets.UTF_8));
        Path f = dir.resolve("edited.backstep");
        ModelFileTest.write(f, entries);
        return assertThrows(ModelFileException.class, () -> DiffusionModel.load(f));
    }
}
