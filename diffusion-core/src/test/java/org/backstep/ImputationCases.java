package org.backstep;

import org.backstep.report.Imputation;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;

import java.util.List;
import java.util.SplittableRandom;

/**
 * Records with one missing cell each, drawn from tables whose conditional distributions are known
 * in closed form, and the figures of an imputation of them against those distributions (the
 * imputation issue's targets: mean within 0.1 conditional sd, variance within 20%, 90% intervals
 * covering 85-95% of held-out truths). Shared by {@link ConditionalOracleTest} and
 * {@link ImputationMethodsMeasurement}.
 */
final class ImputationCases {

    /** The 2-D Gaussian: mean (1, 2), covariance [[4, 1.2], [1.2, 1]]. */
    static final double[] MU = {1.0, 2.0};
    static final double[][] SIGMA = {{4.0, 1.2}, {1.2, 1.0}};
    /** The mixed table: b ~ Bernoulli(PI), x | b ~ N(M0 or M1, S^2). */
    static final double PI = 0.3;
    static final double M0 = -0.5;
    static final double M1 = 1.0;
    static final double S = 1.0;

    private ImputationCases() {
    }

    /**
     * Records with one cell missing.
     *
     * @param records the records, NaN in the missing cell
     * @param column the missing column
     * @param binary whether that column is binary
     * @param exactMean each record's exact conditional mean (for a binary cell, P(1))
     * @param exactVariance each record's exact conditional variance
     * @param truth each record's held-out true value
     */
    record Case(Table records, int column, boolean binary, double[] exactMean, double[] exactVariance, double[] truth) {
    }

    /**
     * For a continuous cell.
     *
     * @param meanError the average over records of (mean of the draws - exact mean) / exact sd
     * @param rmsMeanError the root mean square over records of the same error, less the part the
     *     draws' own noise explains: sqrt(max(0, mean(e_i^2) - mean(s_i^2 / (k v_i)))), s_i^2 the
     *     sample variance of record i's k draws and v_i its exact variance (E[e_i^2] = bias_i^2 +
     *     Var_i / k for a mean of k draws): a systematic error that the signed average can hide,
     *     as errors of opposite sign in different records cancel there
     * @param slope the least-squares slope of the records' imputed means on their exact means: 1 when
     *     the imputation follows the observed cells fully, below 1 when it leans toward the
     *     unconditional mean
     * @param varianceRatio the draws' squared deviations from the exact mean, pooled over records and
     *     draws, over the exact variance (1 when spread and centre are both right)
     * @param coverage the share of records whose held-out true value lies in the imputed interval
     */
    record Continuous(double meanError, double rmsMeanError, double slope, double varianceRatio, double coverage) {
    }

    /**
     * For a binary cell.
     *
     * @param meanError the average over records of (share of draws that are 1 - exact P(1))
     * @param rmsError the root mean square over records of the same difference, less the part the
     *     draws' own binomial noise explains: sqrt(max(0, mean(e_i^2) - mean(P_i (1 - P_i) / k)))
     *     for k draws
     * @param bernoulliSd the average over records of sqrt(P_i (1 - P_i)), the exact conditional sd
     */
    record Binary(double meanError, double rmsError, double bernoulliSd) {
    }

    /**
     * x2 missing, x1 observed; exact x2 | x1 by the Schur complement, computed with commons-math3
     * matrices (Gaussian conditioning; e.g. Bishop 2006, eq. 2.81-2.82).
     */
    static Case gaussian(int n, int seed) {
        MultivariateNormalDistribution joint = new MultivariateNormalDistribution(new Well19937c(seed), MU, SIGMA);
        RealMatrix s = new Array2DRowRealMatrix(SIGMA);
        double condVar = s.getEntry(1, 1) - s.getEntry(1, 0) * s.getEntry(0, 1) / s.getEntry(0, 0);
        double[][] rows = new double[n][];
        double[] truth = new double[n];
        double[] mean = new double[n];
        double[] var = new double[n];
        for (int i = 0; i < n; i++) {
            double[] x = joint.sample();
            truth[i] = x[1];
            rows[i] = new double[] {x[0], Double.NaN};
            mean[i] = MU[1] + s.getEntry(1, 0) / s.getEntry(0, 0) * (x[0] - MU[0]);
            var[i] = condVar;
        }
        Table records = Table.of(List.of("x0", "x1"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
        return new Case(records, 1, false, mean, var, truth);
    }

    /** The exact-kernel model of the 2-D Gaussian over the schedule. */
    static DiffusionModel gaussianModel(NoiseSchedule schedule) {
        return GaussianOracle.model(schedule, MU, SIGMA, ColumnTransform.Kind.STANDARDIZE);
    }

    /** The exact-kernel model of the mixed table over the schedule (binomial schedule for b). */
    static DiffusionModel mixedModel(NoiseSchedule schedule) {
        return MixedOracle.model(schedule, PI, M0, M1, S);
    }

    /**
     * Records of the mixed table with x missing (exact x | b = N(m_b, s^2), by construction) or with
     * b missing (exact P(b = 1 | x) by Bayes' rule, with commons-math3 normal densities).
     */
    static Case mixed(int n, int seed, boolean xMissing) {
        SplittableRandom rng = new SplittableRandom(seed);
        org.apache.commons.math3.distribution.NormalDistribution[] given = {
                new org.apache.commons.math3.distribution.NormalDistribution(null, M0, S),
                new org.apache.commons.math3.distribution.NormalDistribution(null, M1, S)};
        double[][] rows = new double[n][];
        double[] truth = new double[n];
        double[] mean = new double[n];
        double[] var = new double[n];
        for (int i = 0; i < n; i++) {
            int b = rng.nextDouble() < PI ? 1 : 0;
            double x = (b == 1 ? M1 : M0) + S * rng.nextGaussian();
            if (xMissing) {
                rows[i] = new double[] {Double.NaN, b};
                truth[i] = x;
                mean[i] = b == 1 ? M1 : M0;
                var[i] = S * S;
            } else {
                rows[i] = new double[] {x, Double.NaN};
                truth[i] = b;
                double one = PI * given[1].density(x);
                double zero = (1.0 - PI) * given[0].density(x);
                mean[i] = one / (one + zero);
                var[i] = mean[i] * (1.0 - mean[i]);
            }
        }
        Table records = Table.of(List.of("x", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
        return new Case(records, xMissing ? 0 : 1, !xMissing, mean, var, truth);
    }

    /**
     * @param imp the imputation of {@code c.records()}, not modified
     * @param c the case (a continuous missing cell), not modified
     * @return the figures
     */
    static Continuous continuous(Imputation imp, Case c) {
        int n = c.exactMean().length;
        int k = imp.draws().size();
        int column = c.column();
        double meanErr = 0.0;
        double meanSq = 0.0;
        double noise = 0.0;
        double sq = 0.0;
        double var = 0.0;
        int covered = 0;
        double sx = 0.0;
        double sy = 0.0;
        double sxx = 0.0;
        double sxy = 0.0;
        for (int i = 0; i < n; i++) {
            double v = c.exactVariance()[i];
            sx += c.exactMean()[i];
            sy += imp.mean().get(i, column);
            sxx += c.exactMean()[i] * c.exactMean()[i];
            sxy += c.exactMean()[i] * imp.mean().get(i, column);
            double m = imp.mean().get(i, column);
            double e = (m - c.exactMean()[i]) / Math.sqrt(v);
            meanErr += e;
            meanSq += e * e;
            double own = 0.0;
            for (Table t : imp.draws()) {
                double d = t.get(i, column) - c.exactMean()[i];
                sq += d * d;
                var += v;
                own += (t.get(i, column) - m) * (t.get(i, column) - m);
            }
            if (k > 1) {
                noise += own / (k - 1) / (k * v);
            }
            if (c.truth()[i] >= imp.lower().get(i, column) && c.truth()[i] <= imp.upper().get(i, column)) {
                covered++;
            }
        }
        double slope = (sxy - sx * sy / n) / (sxx - sx * sx / n);
        return new Continuous(meanErr / n, Math.sqrt(Math.max(0.0, (meanSq - noise) / n)), slope, sq / var,
                covered / (double) n);
    }

    /**
     * @param imp the imputation of {@code c.records()}, not modified
     * @param c the case (a binary missing cell), not modified
     * @return the figures
     */
    static Binary binary(Imputation imp, Case c) {
        int n = c.exactMean().length;
        int k = imp.draws().size();
        double err = 0.0;
        double sq = 0.0;
        double sd = 0.0;
        for (int i = 0; i < n; i++) {
            double p = c.exactMean()[i];
            double e = imp.mean().get(i, c.column()) - p;
            err += e;
            sq += e * e - p * (1.0 - p) / k;
            sd += Math.sqrt(p * (1.0 - p));
        }
        return new Binary(err / n, Math.sqrt(Math.max(0.0, sq / n)), sd / n);
    }
}
