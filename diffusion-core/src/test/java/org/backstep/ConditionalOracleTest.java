package org.backstep;

import org.backstep.report.Denoising;
import org.backstep.report.Imputation;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
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

    private static final double[] MU = {1.0, 2.0};
    private static final double[][] SIGMA = {{4.0, 1.2}, {1.2, 1.0}};

    @Test
    void imputationMatchesSchurComplement() {
        NoiseSchedule schedule = NoiseSchedule.linear(1000);
        DiffusionModel model = GaussianOracle.model(schedule, MU, SIGMA, ColumnTransform.Kind.STANDARDIZE);
        // Worked value: x2 | x1 = 3 has mean 2 + 1.2/4 (3 - 1) = 2.6 and variance 1 - 1.2^2/4 = 0.64
        // (Gaussian conditioning by the Schur complement; e.g. Bishop 2006, eq. 2.81-2.82)
        assertEquals(2.6, conditionalMean(3.0), 1e-12);
        assertEquals(0.64, conditionalVariance(), 1e-12);

        int n = 400;
        int draws = 100;
        MultivariateNormalDistribution joint = new MultivariateNormalDistribution(new Well19937c(3), MU, SIGMA);
        double[][] rows = new double[n][];
        double[] truth = new double[n];
        for (int i = 0; i < n; i++) {
            double[] x = joint.sample();
            truth[i] = x[1];
            rows[i] = new double[] {x[0], Double.NaN};
        }
        Table records = Table.of(List.of("x0", "x1"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
        Imputation imp = model.impute(records, draws, 0.9, 17);
        double sdc = Math.sqrt(conditionalVariance());
        double meanErr = 0;
        double pooledVar = 0;
        int covered = 0;
        for (int i = 0; i < n; i++) {
            double exact = conditionalMean(rows[i][0]);
            assertEquals(rows[i][0], imp.mean().get(i, 0), 0.0, "observed cell unchanged"); // by definition of imputation
            meanErr += (imp.mean().get(i, 1) - exact) / sdc;
            for (Table t : imp.draws()) {
                assertEquals(rows[i][0], t.get(i, 0), 0.0);
                double e = t.get(i, 1) - exact;
                pooledVar += e * e;
            }
            if (truth[i] >= imp.lower().get(i, 1) && truth[i] <= imp.upper().get(i, 1)) {
                covered++;
            }
        }
        meanErr /= n;
        pooledVar /= (double) n * draws;
        assertTrue(Math.abs(meanErr) < MEAN_TOLERANCE_SD, "mean error " + meanErr + " conditional sd");
        assertEquals(conditionalVariance(), pooledVar, VARIANCE_TOLERANCE * conditionalVariance(), "pooled variance");
        double coverage = covered / (double) n;
        // 90% intervals should cover 85-95% of held-out truths (the imputation issue's target)
        assertTrue(coverage >= 0.85 && coverage <= 0.95, "coverage " + coverage + ", mean error " + meanErr
                + ", pooled variance " + pooledVar);
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
        Denoising out = model.denoise(readings, new double[] {Math.sqrt(noiseVar)}, 20, 9);
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
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.impute(one, 0, 0.9, 1)).getMessage().contains("draws"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.denoise(one, new double[] {0.0}, 2, 1)).getMessage().contains("noiseSd"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.denoise(one, new double[] {-1.0}, 2, 1)).getMessage().contains("noiseSd"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.sample(0, 1)).getMessage().contains("count"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> model.boundMonteCarlo(one, 0, 1)).getMessage().contains("draws"));
    }
}
