package org.backstep;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepInput;
import org.backstep.option.TrainingLoss;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.List;

/**
 * Exact-kernel models and their data for the screening tests: no training, so that only the
 * screening code is under test.
 */
final class ScreeningCases {

    /** The correlated 2-D Gaussian of the model space: unit variances, correlation 0.6. */
    static final double[] MU2 = {0.0, 0.0};
    static final double[][] SIGMA2 = {{1.0, 0.6}, {0.6, 1.0}};
    /** The constant column's one value. */
    static final double UNIT = 5.0;
    /** Column names of {@link #threeKinds}: standardized, log-scale, constant. */
    static final List<String> NAMES = List.of("temp", "flow", "unit");

    private ScreeningCases() {
    }

    static FitOptions options(NoiseSchedule schedule) {
        return Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(schedule).variance(ReverseVariance.LEARNED)
                .loss(TrainingLoss.HYBRID).timeEmbedding(2, StepInput.INPUT).hidden(1).logColumns().threads(2)
                .options();
    }

    /**
     * The 2-D Gaussian oracle seen through three kinds of column: "temp" standardized (z = x),
     * "flow" on the log scale (z = log x, so flow is log-normal), "unit" constant at {@link #UNIT}.
     */
    static DiffusionModel threeKinds(NoiseSchedule schedule) {
        TableTransform t = TableTransform.of(NAMES, List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.CONTINUOUS), List.of(ColumnTransform.standardize(0.0, 1.0),
                ColumnTransform.logStandardize(0.0, 1.0), ColumnTransform.constant(UNIT)));
        return DiffusionModel.withEstimator(options(schedule), t, new GaussianOracle(schedule, MU2, SIGMA2));
    }

    /** Rows of {@link #threeKinds}'s distribution. */
    static Table threeKindsRows(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), MU2, SIGMA2);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            double[] z = g.sample();
            rows[i] = new double[] {z[0], Math.exp(z[1]), UNIT};
        }
        return Table.of(NAMES, List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
    }

    /** An exact-kernel model of N(mu, sigma) in its own units (model space = data space), columns x0, x1, ... */
    static DiffusionModel gaussian(NoiseSchedule schedule, double[] mu, double[][] sigma) {
        return GaussianOracle.model(schedule, mu, sigma, ColumnTransform.Kind.STANDARDIZE);
    }

    /** Rows of N(mu, sigma), columns x0, x1, ..., with {@code shift} added to column {@code shifted} (-1: none). */
    static Table gaussianRows(int n, long seed, double[] mu, double[][] sigma, int shifted, double shift) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), mu, sigma);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
            if (shifted >= 0) {
                rows[i][shifted] += shift;
            }
        }
        List<String> names = new java.util.ArrayList<>();
        List<ColumnKind> kinds = new java.util.ArrayList<>();
        for (int j = 0; j < mu.length; j++) {
            names.add("x" + j);
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(names, kinds, rows);
    }

    /** A table with {@code base}'s rows and {@code extra} rows after them. */
    static Table append(Table base, double[]... extra) {
        double[][] all = new double[base.rows() + extra.length][];
        for (int i = 0; i < base.rows(); i++) {
            all[i] = base.row(i);
        }
        System.arraycopy(extra, 0, all, base.rows(), extra.length);
        return base.withRows(all);
    }
}
