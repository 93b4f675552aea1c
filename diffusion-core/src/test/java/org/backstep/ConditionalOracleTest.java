package org.backstep;

import org.backstep.internal.chain.ReverseRun;
import org.backstep.internal.chain.Chain;
import org.backstep.option.BoundOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplerKind;
import org.backstep.option.SamplingPlan;

import org.backstep.option.Conditioning;

import org.backstep.report.Denoising;
import org.backstep.report.Imputation;

import org.apache.commons.math3.analysis.integration.IterativeLegendreGaussIntegrator;
import org.apache.commons.math3.analysis.integration.UnivariateIntegrator;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Imputation and denoising against closed forms, with the exact reverse kernels of Gaussian data
 * (no training), so that only the conditioning method is under test.
 */
class ConditionalOracleTest {

    /** Mean error allowed, in conditional standard deviations (the imputation issue's target). */
    private static final double MEAN_TOLERANCE_SD = 0.1;
    /** Relative variance error allowed (the imputation issue's target). */
    private static final double VARIANCE_TOLERANCE = 0.2;
    /** Identities and worked values in double. */
    private static final double IDENTITY_TOLERANCE = 1e-12;
    /**
     * Record-by-record mean error (in conditional sd, the draws' own noise removed) that
     * replacement without resampling stays below: measured 0.17 on the Gaussian oracle. A
     * regression bound, not a target.
     */
    private static final double RMS_BOUND_WITHOUT_RESAMPLING = 0.25;
    /** As {@link #RMS_BOUND_WITHOUT_RESAMPLING} for the kernel product: measured 0.29. */
    private static final double KERNEL_PRODUCT_RMS_BOUND = 0.35;
    /** The band of the kernel product's variance excess without resampling: measured 0.19 (100 steps), 0.21 (1000). */
    private static final double[] KERNEL_PRODUCT_EXCESS = {0.1, 0.3};
    /** Quadrature of the Gaussian product's moments (commons-math3 Legendre-Gauss), relative to its sd or variance. */
    private static final double QUADRATURE_TOLERANCE = 1e-8;
    /** Probabilities kept off 0 and 1 by {@link org.backstep.posterior.Divergence#PROBABILITY_FLOOR} differ from the exact ones by about that much. */
    private static final double FLOOR_TOLERANCE = 1e-6;

    private static final double[] MU = ImputationCases.MU;
    private static final double[][] SIGMA = ImputationCases.SIGMA;
    private static final int RECORDS = 400;
    private static final int DRAWS = 100;
    private static final int MIXTURE_SAMPLES = 4000;
    private static final DiffusionModel GAUSS = ImputationCases.gaussianModel(NoiseSchedule.linear(1000));
    private static final DiffusionModel MIXED = ImputationCases.mixedModel(NoiseSchedule.linear(1000));

    @Test
    void schurComplementWorkedValue() {
        // Worked value: x2 | x1 = 3 has mean 2 + 1.2/4 (3 - 1) = 2.6 and variance 1 - 1.2^2/4 = 0.64
        // (Gaussian conditioning by the Schur complement; e.g. Bishop 2006, eq. 2.81-2.82)
        assertEquals(2.6, conditionalMean(3.0), IDENTITY_TOLERANCE);
        assertEquals(0.64, conditionalVariance(), IDENTITY_TOLERANCE);
        ImputationCases.Case c = ImputationCases.gaussian(3, 3);
        for (int i = 0; i < 3; i++) {
            // the cases' exact answers are the same Schur complement
            assertEquals(conditionalMean(c.records().get(i, 0)), c.exactMean()[i], IDENTITY_TOLERANCE);
            assertEquals(conditionalVariance(), c.exactVariance()[i], IDENTITY_TOLERANCE);
        }
    }

    /**
     * Replacement (the default), 100 steps, no resampling, against the Schur complement: the issue's
     * three targets. Measured (imputation-methods.txt): mean error -0.002 sd, variance ratio 1.08,
     * coverage 0.90. The record-by-record mean error is 0.17 sd (the imputed mean follows x1 with too
     * small a slope, which cancels in the average): that stricter reading of the mean target is met
     * only with resampling rounds ({@link #resamplingMeetsTheTargetsRecordByRecord}).
     */
    @Test
    void replacementMatchesSchurComplement() {
        ImputationCases.Case c = ImputationCases.gaussian(RECORDS, 3);
        Imputation imp = GAUSS.impute(c.records(), new ImputationOptions(DRAWS, 0.9, 100, 1, Conditioning.REPLACEMENT), 17);
        observedCellsUnchanged(c, imp);
        ImputationCases.Continuous f = ImputationCases.continuous(imp, c);
        assertIssueTargets(f);
        // what it meets of the record-by-record reading: measured 0.17 (common practice, no source: a regression bound)
        assertTrue(f.rmsMeanError() < RMS_BOUND_WITHOUT_RESAMPLING, "rms mean error " + f.rmsMeanError());
    }

    /**
     * The kernel product, 100 steps, no resampling, against the Schur complement. It meets the
     * issue's mean and coverage targets and MISSES the variance target: measured variance ratio
     * 1.19 at 100 steps and 1.21 at 1000 (imputation-methods.txt), so the draws are too wide. Tested
     * is what it meets, and that its variance lies in the measured band.
     */
    @Test
    void kernelProductMatchesSchurComplementExceptForItsVariance() {
        ImputationCases.Case c = ImputationCases.gaussian(RECORDS, 3);
        Imputation imp = GAUSS.impute(c.records(), new ImputationOptions(DRAWS, 0.9, 100, 1, Conditioning.KERNEL_PRODUCT), 17);
        observedCellsUnchanged(c, imp);
        ImputationCases.Continuous f = ImputationCases.continuous(imp, c);
        assertMeanAndCoverageTargets(f);
        // the documented miss: measured 1.19 (common practice, no source: the measured band)
        assertTrue(f.varianceRatio() > 1.0 + KERNEL_PRODUCT_EXCESS[0] && f.varianceRatio() < 1.0 + KERNEL_PRODUCT_EXCESS[1],
                "variance ratio " + f.varianceRatio());
        assertTrue(f.rmsMeanError() < KERNEL_PRODUCT_RMS_BOUND, "rms mean error " + f.rmsMeanError());
    }

    /**
     * With resampling rounds (Lugmayr et al. 2022) both methods meet all three targets, and the mean
     * target record by record. Measured: replacement with 3 rounds rms 0.045, variance 1.02, coverage
     * 0.89; the kernel product with 5 rounds rms 0.059, variance 1.03, coverage 0.90.
     */
    @ParameterizedTest
    @CsvSource({"REPLACEMENT, 3", "KERNEL_PRODUCT, 5"})
    void resamplingMeetsTheTargetsRecordByRecord(Conditioning method, int rounds) {
        ImputationCases.Case c = ImputationCases.gaussian(RECORDS, 3);
        Imputation imp = GAUSS.impute(c.records(), new ImputationOptions(DRAWS, 0.9, 100, rounds, method), 17);
        observedCellsUnchanged(c, imp);
        ImputationCases.Continuous f = ImputationCases.continuous(imp, c);
        assertIssueTargets(f);
        // the issue's mean target read record by record
        assertTrue(f.rmsMeanError() < MEAN_TOLERANCE_SD, "rms mean error " + f.rmsMeanError());
    }

    /**
     * The mixed oracle's own check: unconditional samples of the exact-kernel chain reproduce the
     * mixture it was built from (P(b = 1) = 0.3, E[x | b] = -0.5 or 1, sd 1), so that its
     * imputations can be judged against Bayes' rule.
     */
    @Test
    void mixedOracleSamplesItsMixture() {
        Table t = MIXED.sample(MIXTURE_SAMPLES, SamplingPlan.ancestral(100), 5);
        double[] n = new double[2];
        double[] sum = new double[2];
        for (int i = 0; i < t.rows(); i++) {
            int b = (int) t.get(i, 1);
            n[b]++;
            sum[b] += t.get(i, 0);
        }
        // the mixture's definition; tolerance 4 standard errors (common practice, no source)
        double share = n[1] / MIXTURE_SAMPLES;
        assertEquals(ImputationCases.PI, share, 4 * Math.sqrt(ImputationCases.PI * (1 - ImputationCases.PI) / MIXTURE_SAMPLES));
        assertEquals(ImputationCases.M0, sum[0] / n[0], 4 * ImputationCases.S / Math.sqrt(n[0]));
        assertEquals(ImputationCases.M1, sum[1] / n[1], 4 * ImputationCases.S / Math.sqrt(n[1]));
    }

    /**
     * A continuous cell given an observed binary one (exact x | b = N(m_b, s^2)), 100 steps, no
     * resampling. Both methods meet the mean and coverage targets and MISS the variance target:
     * measured variance ratio 1.33 (replacement) and 1.43 (kernel product); the record-by-record mean
     * error is 0.34 and 0.38 sd: the draws lean toward the other group's mean. Resampling narrows it
     * (replacement, 10 rounds: 1.10) but does not reach the targets at the rounds measured.
     */
    @ParameterizedTest
    @CsvSource({"REPLACEMENT, 1.45", "KERNEL_PRODUCT, 1.55"})
    void continuousGivenBinaryMeetsMeanAndCoverage(Conditioning method, double varianceBound) {
        ImputationCases.Case c = ImputationCases.mixed(RECORDS, 4, true);
        Imputation imp = MIXED.impute(c.records(), new ImputationOptions(DRAWS, 0.9, 100, 1, method), 17);
        observedCellsUnchanged(c, imp);
        ImputationCases.Continuous f = ImputationCases.continuous(imp, c);
        assertMeanAndCoverageTargets(f);
        // the documented miss, bounded by the measured value (common practice, no source)
        assertTrue(f.varianceRatio() < varianceBound, "variance ratio " + f.varianceRatio());
    }

    /**
     * A binary cell given an observed continuous one, against Bayes' rule P(b = 1 | x) (commons-math3
     * normal densities). The issue's mean target, transferred to a Bernoulli cell: the average error
     * of the imputed P(1) within 0.1 of the average conditional sd sqrt(P(1 - P)). Measured: -0.016
     * (replacement), -0.023 (kernel product), against 0.1 x 0.41. Record by record the error is 0.10
     * and 0.13 in probability (the draws lean toward the base rate), met only with resampling
     * (5 rounds: 0.006 and 0.037).
     */
    @ParameterizedTest
    @CsvSource({"REPLACEMENT, 0.13", "KERNEL_PRODUCT, 0.17"})
    void binaryGivenContinuousMatchesBayesRule(Conditioning method, double rmsBound) {
        ImputationCases.Case c = ImputationCases.mixed(RECORDS, 5, false);
        Imputation imp = MIXED.impute(c.records(), new ImputationOptions(DRAWS, 0.9, 100, 1, method), 17);
        observedCellsUnchanged(c, imp);
        for (Table t : imp.draws()) {
            for (int i = 0; i < c.records().rows(); i++) {
                double b = t.get(i, 1);
                assertTrue(b == 0.0 || b == 1.0, "a binary draw is 0 or 1, was " + b);   // by definition
            }
        }
        ImputationCases.Binary f = ImputationCases.binary(imp, c);
        // the imputation issue's mean target in units of the Bernoulli sd
        assertTrue(Math.abs(f.meanError()) < MEAN_TOLERANCE_SD * f.bernoulliSd(), "mean error " + f.meanError());
        // what it meets record by record, bounded by the measured value (common practice, no source)
        assertTrue(f.rmsError() < rmsBound, "rms error " + f.rmsError());
    }

    private static void assertIssueTargets(ImputationCases.Continuous f) {
        assertMeanAndCoverageTargets(f);
        // the imputation issue's variance target: within 20% of the exact conditional variance
        assertEquals(1.0, f.varianceRatio(), VARIANCE_TOLERANCE, "variance ratio");
    }

    private static void assertMeanAndCoverageTargets(ImputationCases.Continuous f) {
        // the imputation issue's targets: mean within 0.1 conditional sd, 90% intervals covering
        // 85-95% of held-out truths
        assertTrue(Math.abs(f.meanError()) < MEAN_TOLERANCE_SD, "mean error " + f.meanError() + " conditional sd");
        assertTrue(f.coverage() >= 0.85 && f.coverage() <= 0.95, "coverage " + f.coverage());
    }

    private static void observedCellsUnchanged(ImputationCases.Case c, Imputation imp) {
        Table records = c.records();
        for (int i = 0; i < records.rows(); i++) {
            for (int j = 0; j < records.columns(); j++) {
                double v = records.get(i, j);
                if (Double.isNaN(v)) {
                    continue;
                }
                assertEquals(v, imp.mean().get(i, j), 0.0, "observed cell unchanged");   // by definition of imputation
                for (Table t : imp.draws()) {
                    assertEquals(v, t.get(i, j), 0.0);
                }
            }
        }
    }

    @Test
    void defaultOverloadsUseTheDefaultsAndAreDeterministic() {
        ImputationCases.Case c = ImputationCases.gaussian(20, 8);
        Imputation viaDefault = GAUSS.impute(c.records(), Defaults.imputation().withDraws(4).withLevel(0.9), 23);
        Imputation explicit = GAUSS.impute(c.records(), new ImputationOptions(4, 0.9, Math.min(Defaults.IMPUTATION_STEPS, GAUSS.steps()), Defaults.IMPUTATION_ROUNDS, Defaults.IMPUTATION_CONDITIONING), 23);
        // common practice, no source: same seed and settings, bit-identical draws
        assertEquals(explicit.draws(), viaDefault.draws());
        Imputation sixArguments = GAUSS.impute(c.records(), Defaults.imputation().withDraws(4).withLevel(0.9).withSteps(10).withRounds(2), 23);
        assertEquals(GAUSS.impute(c.records(), new ImputationOptions(4, 0.9, 10, 2, Defaults.IMPUTATION_CONDITIONING), 23).draws(),
                sixArguments.draws());
        Imputation product = GAUSS.impute(c.records(), new ImputationOptions(4, 0.9, 10, 2, Conditioning.KERNEL_PRODUCT), 23);
        assertEquals(product.draws(), GAUSS.impute(c.records(), new ImputationOptions(4, 0.9, 10, 2, Conditioning.KERNEL_PRODUCT), 23).draws());
        assertNotEquals(product.draws(), GAUSS.impute(c.records(), new ImputationOptions(4, 0.9, 10, 2, Conditioning.REPLACEMENT), 23).draws(),
                "the two methods draw differently");
    }

    /**
     * The binary kernel product of one reverse step against exhaustive enumeration from the binomial
     * schedule's betas alone: the forward marginal q(x_{k-1} | x_0 = y) by enumerating every path of
     * the one-step kernel q(x_s = 1 | x_{s-1}) = x_{s-1} (1 - beta_s) + beta_s/2 (Sohl-Dickstein et al.
     * 2015, table App.1), the reverse kernel p(x_{k-1} | x_k) = sum over x_0 of P(x_0) q(x_{k-1} | x_k, x_0)
     * by Bayes' rule, and their product normalized over x_{k-1} in {0, 1} (section 2.5.2), on the full
     * schedule and on a strided one.
     */
    @Test
    void binaryKernelProductMatchesEnumeration() {
        NoiseSchedule binomial = NoiseSchedule.binomial(12);
        Chain full = new Chain(NoiseSchedule.linear(12), binomial, 0, 1, ReverseVariance.FIXED_BETA, new ConstantEstimator(1, 1, 0f));
        for (Chain chain : new Chain[] {full, full.strided(5)}) {
            for (int k = 1; k <= chain.steps(); k++) {
                for (int xk = 0; xk <= 1; xk++) {
                    for (int y = 0; y <= 1; y++) {
                        for (double pOne : new double[] {0.03, 0.5, 0.9}) {
                            double expected = enumeratedProductOne(chain.binarySchedule(), k, xk, pOne, y);
                            double got = ReverseRun.productBinaryOne(chain, k, xk, pOne, y);
                            assertEquals(expected, got, IDENTITY_TOLERANCE, "k " + k + ", x_k " + xk + ", y " + y + ", pOne " + pOne);
                        }
                        for (double pOne : new double[] {0.0, 1.0}) {
                            // an estimator that is certain: the product stays a probability (no 0/0)
                            double got = ReverseRun.productBinaryOne(chain, k, xk, pOne, y);
                            assertTrue(got >= 0.0 && got <= 1.0, "k " + k + ": " + got);
                            assertEquals(enumeratedProductOne(chain.binarySchedule(), k, xk, pOne, y), got, FLOOR_TOLERANCE);
                        }
                    }
                }
            }
        }
    }

    /** P(x_{k-1} = 1) of the normalized product, enumerated over paths and x_0 from the schedule's betas. */
    private static double enumeratedProductOne(NoiseSchedule schedule, int k, int xk, double pOne, int y) {
        if (k == 1) {
            return y;   // r_0 is the point mass at y
        }
        double[] weight = new double[2];
        for (int prev = 0; prev <= 1; prev++) {
            double kernel = 0.0;
            for (int x0 = 0; x0 <= 1; x0++) {
                double joint = marginal(schedule, k - 1, x0, prev) * step(schedule, k, prev, xk);
                double norm = marginal(schedule, k - 1, x0, 0) * step(schedule, k, 0, xk)
                        + marginal(schedule, k - 1, x0, 1) * step(schedule, k, 1, xk);
                kernel += (x0 == 1 ? pOne : 1.0 - pOne) * joint / norm;
            }
            weight[prev] = kernel * marginal(schedule, k - 1, y, prev);
        }
        return weight[1] / (weight[0] + weight[1]);
    }

    /** q(x_s = to | x_0 = from), summed over every path x_1 .. x_{s-1}. */
    private static double marginal(NoiseSchedule schedule, int s, int from, int to) {
        double[] p = {from == 0 ? 1.0 : 0.0, from == 1 ? 1.0 : 0.0};
        for (int t = 1; t <= s; t++) {
            double[] next = new double[2];
            for (int a = 0; a <= 1; a++) {
                for (int b = 0; b <= 1; b++) {
                    next[b] += p[a] * step(schedule, t, a, b);
                }
            }
            p = next;
        }
        return p[to];
    }

    /** q(x_t = to | x_{t-1} = from): keep with 1 - beta_t, else a fair coin. */
    private static double step(NoiseSchedule schedule, int t, int from, int to) {
        double beta = schedule.beta(t);
        return (from == to ? 1.0 - beta : 0.0) + beta / 2.0;
    }

    /**
     * The Gaussian kernel product's moments, mu + w (m - mu) and w v with w = s/(s + v), against
     * the normalized product N(mu, s) N(m, v) integrated numerically (commons-math3 Legendre-Gauss
     * quadrature), including a v near 0 (alpha-bar near 1) and v = 0 (a point mass: w = 1, no NaN).
     */
    @Test
    void gaussianKernelProductMatchesQuadrature() {
        double[][] cases = {{0.3, 0.02, 1.1, 0.9}, {-1.0, 0.5, 2.0, 0.05}, {0.0, 1e-4, 0.03, 1e-3}, {0.5, 0.01, 0.45, 1e-6}};
        for (double[] c : cases) {
            double mu = c[0];
            double s = c[1];
            double m = c[2];
            double v = c[3];
            double w = ReverseRun.productWeight(s, v);
            NormalDistribution kernel = new NormalDistribution(null, mu, Math.sqrt(s));
            NormalDistribution r = new NormalDistribution(null, m, Math.sqrt(v));
            double centre = mu + w * (m - mu);
            double sd = Math.sqrt(w * v);
            double lo = centre - 12.0 * sd;
            double hi = centre + 12.0 * sd;
            UnivariateIntegrator q = new IterativeLegendreGaussIntegrator(16, 1e-11, Double.MIN_VALUE);
            double z = q.integrate(100_000, x -> kernel.density(x) * r.density(x), lo, hi);
            double first = q.integrate(100_000, x -> x * kernel.density(x) * r.density(x), lo, hi) / z;
            double second = q.integrate(100_000, x -> (x - first) * (x - first) * kernel.density(x) * r.density(x), lo, hi) / z;
            // the product of two Gaussian densities, its moments by quadrature (commons-math3)
            assertEquals(first, centre, QUADRATURE_TOLERANCE * sd, "mean of case " + java.util.Arrays.toString(c));
            assertEquals(second, w * v, QUADRATURE_TOLERANCE * w * v, "variance of case " + java.util.Arrays.toString(c));
        }
        // a point mass at the observed value: the mean is m, the variance 0 (definition of a point mass)
        assertEquals(1.0, ReverseRun.productWeight(0.02, 0.0), 0.0);
    }

    private static double conditionalMean(double x1) {
        RealMatrix s = new Array2DRowRealMatrix(SIGMA);
        return MU[1] + s.getEntry(1, 0) / s.getEntry(0, 0) * (x1 - MU[0]);
    }

    private static double conditionalVariance() {
        RealMatrix s = new Array2DRowRealMatrix(SIGMA);
        // Schur complement of Sigma_11 in Sigma, computed with commons-math3 matrices
        return s.getEntry(1, 1) - s.getEntry(1, 0) * s.getEntry(0, 1) / s.getEntry(0, 0);
    }

    @Test
    void denoisingMatchesWienerFilter() {
        NoiseSchedule schedule = NoiseSchedule.linear(1000);
        DiffusionModel model = GaussianOracle.model(schedule, new double[] {2.0}, new double[][] {{0.25}},
                ColumnTransform.Kind.STANDARDIZE);
        double noiseVar = 0.25;
        double y = 3.0;
        // Wiener filter / Gaussian posterior: mean = (0.25 * 3 + 0.25 * 2)/(0.5) = 2.5, var = 0.25*0.25/0.5 = 0.125
        // (Bayes' rule for a Gaussian prior and Gaussian noise; e.g. Bishop 2006, eq. 2.115-2.117)
        double postMean = (0.25 * y + noiseVar * 2.0) / (0.25 + noiseVar);
        double postVar = 0.25 * noiseVar / (0.25 + noiseVar);
        assertEquals(2.5, postMean, 1e-12);
        assertEquals(0.125, postVar, 1e-12);
        int n = 200;
        double[][] rows = new double[n][1];
        for (double[] r : rows) {
            r[0] = y;
        }
        Table readings = Table.of(List.of("x0"), List.of(ColumnKind.CONTINUOUS), rows);
        Denoising out = model.denoise(readings, Defaults.denoising(new double[] {Math.sqrt(noiseVar)}).withDraws(20), 9);
        double mean = 0;
        double var = 0;
        for (int i = 0; i < n; i++) {
            mean += out.mean().get(i, 0);
            double sd = out.standardDeviation().get(i, 0);
            var += sd * sd;
        }
        mean /= n;
        var /= n;
        double postSd = Math.sqrt(postVar);
        assertTrue(Math.abs(mean - postMean) < MEAN_TOLERANCE_SD * postSd, "denoised mean " + mean);
        assertEquals(postVar, var, VARIANCE_TOLERANCE * postVar, "denoised variance");
    }

    @Test
    void badInputIsRefusedByName() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        DiffusionModel model = GaussianOracle.model(schedule, new double[] {2.0}, new double[][] {{0.25}},
                ColumnTransform.Kind.STANDARDIZE);
        Table one = Table.of(List.of("x0"), List.of(ColumnKind.CONTINUOUS), new double[][] {{1.0}});
        Table missing = Table.of(List.of("x0"), List.of(ColumnKind.CONTINUOUS), new double[][] {{Double.NaN}});
        Table wrong = Table.of(List.of("y"), List.of(ColumnKind.CONTINUOUS), new double[][] {{1.0}});
        // common practice, no source: each message names what is wrong
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.bound(missing, 1)).getMessage().contains("row 0"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.bound(wrong, 1)).getMessage().contains("columns"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.impute(one, Defaults.imputation().withDraws(0).withLevel(0.9), 1)).getMessage().contains("draws"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.impute(one, new ImputationOptions(2, 0.9, 10, 1, null), 1))
                .getMessage().contains("method"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(one, new ImputationOptions(2, 1.0, 10, 1, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("level"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(one, new ImputationOptions(2, 0.9, 0, 1, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("steps"));
        // steps is a most: past T the chain has T steps (ImputationOptions' contract)
        assertEquals(model.impute(one, new ImputationOptions(2, 0.9, 100, 1, Conditioning.KERNEL_PRODUCT), 1).draws(),
                model.impute(one, new ImputationOptions(2, 0.9, 101, 1, Conditioning.KERNEL_PRODUCT), 1).draws());
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(one, new ImputationOptions(2, 0.9, 10, 0, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("rounds"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(one, new ImputationOptions(0, 0.9, 10, 1, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("draws"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(null, new ImputationOptions(2, 0.9, 10, 1, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("records"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> model.impute(wrong, new ImputationOptions(2, 0.9, 10, 1, Conditioning.KERNEL_PRODUCT), 1)).getMessage().contains("columns"));
        // the implicit sampler has no reverse kernel to multiply
        Chain chain = model.chain();
        float[] state = new float[1];
        float[] known = {1f};
        assertTrue(assertThrows(IllegalArgumentException.class, () -> ReverseRun.run(chain, state, 1, chain.steps(), known, 1,
                SamplerKind.IMPLICIT, 0.0, Conditioning.KERNEL_PRODUCT, new java.util.SplittableRandom(1)))
                .getMessage().contains("kind"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.denoise(one, Defaults.denoising(new double[] {0.0}).withDraws(2), 1)).getMessage().contains("noiseSd"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.denoise(one, Defaults.denoising(new double[] {-1.0}).withDraws(2), 1)).getMessage().contains("noiseSd"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.sample(0, 1)).getMessage().contains("count"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.bound(one, BoundOptions.sampled(0), 1)).getMessage().contains("draws"));
    }
}
