package org.backstep.table;

import static org.backstep.table.ColumnKind.BINARY;
import static org.backstep.table.ColumnKind.CONTINUOUS;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.List;
import java.util.Set;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.commons.math3.stat.descriptive.DescriptiveStatistics;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.junit.jupiter.api.Test;

class TableTransformTest {

    private static final double NAN = Double.NaN;

    /** Relative tolerance of statistics recomputed by commons-math3 and of exact identities. */
    private static final double IDENTITY_TOL = 1e-12;

    /** SOURCES.md prints its negative log-likelihoods to 3 decimals. */
    private static final double PUBLISHED_3_DECIMALS_TOL = 5e-4;

    /** Agreement of two exact computations of one log density that take different rounding paths. */
    private static final double DENSITY_TOL = 1e-9;

    private static Table irisTraining() {
        // data/SOURCES.md, "A fixed split": training rows are those with i % 5 != 0
        return OpenData.read("iris.csv").filterRows(i -> i % 5 != 0);
    }

    private static double[] columnOf(double[][] rows, int c) {
        return Arrays.stream(rows).mapToDouble(r -> r[c]).toArray();
    }

    private static double[] observed(double[] values) {
        return Arrays.stream(values).filter(v -> !Double.isNaN(v)).toArray();
    }

    private static void assertMessageHas(IllegalArgumentException e, String... parts) {
        for (String p : parts) {
            assertTrue(e.getMessage().contains(p), () -> "message '" + e.getMessage() + "' lacks '" + p + "'");
        }
    }

    @Test
    void standardizesWithMeanAndPopulationSdOfTrainingRows() {
        Table train = irisTraining();
        TableTransform tt = TableTransform.fit(train, Set.of());
        double[][] z = tt.toModelSpace(train);
        for (int c = 0; c < train.columns(); c++) {
            double[] x = train.column(c);
            ColumnTransform t = tt.transform(c);
            assertEquals(ColumnTransform.Kind.STANDARDIZE, t.kind());
            // commons-math3 Mean and StandardDeviation(false), the population standard deviation that
            // data/SOURCES.md asks for
            assertEquals(new Mean().evaluate(x), t.shift(), IDENTITY_TOL * Math.abs(t.shift()));
            assertEquals(new StandardDeviation(false).evaluate(x), t.scale(), IDENTITY_TOL * t.scale());
            double[] zc = columnOf(z, c);
            DescriptiveStatistics stats = new DescriptiveStatistics(zc);
            // commons-math3 DescriptiveStatistics: the standardized training column has mean 0 ...
            assertEquals(0.0, stats.getMean(), IDENTITY_TOL);
            // ... and population standard deviation 1 (StandardDeviation(false))
            assertEquals(1.0, new StandardDeviation(false).evaluate(zc), IDENTITY_TOL);
        }
    }

    @Test
    void heldOutGaussianLikelihoodMatchesThePublishedBaseline() {
        Table iris = OpenData.read("iris.csv");
        Table train = iris.filterRows(i -> i % 5 != 0);
        Table test = iris.filterRows(i -> i % 5 == 0);
        TableTransform tt = TableTransform.fit(train, Set.of());
        double nllModel = gaussianNll(tt.toModelSpace(train), tt.toModelSpace(test));
        // data/SOURCES.md, "Classical baselines": iris, one Gaussian, 3.686 nats per record in
        // standardized space (full covariance, maximum likelihood); fitted here with commons-math3
        assertEquals(3.686, nllModel, PUBLISHED_3_DECIMALS_TOL);

        double[] logJac = tt.logJacobian(test);
        double meanLogJac = Arrays.stream(logJac).average().orElseThrow();
        double sumLogSd = 0;
        for (ColumnTransform t : tt.transforms()) {
            sumLogSd += Math.log(t.scale());
        }
        // data/SOURCES.md: "add the sum of the log standard deviations to get it in the original
        // units", i.e. -log p_x = -log p_z - sum log|dz/dx| with log|dz/dx| = -log sd
        assertEquals(sumLogSd, -meanLogJac, IDENTITY_TOL * Math.abs(sumLogSd));
        // the maximum-likelihood Gaussian is equivariant under affine maps, so a Gaussian fitted in
        // original units gives the same density after the change of variables (Dinh et al. 2017,
        // "Density estimation using Real NVP", section 3.1): log p_x = log p_z + log|dz/dx|
        double nllOriginal = gaussianNll(train.toArray(), test.toArray());
        assertEquals(nllOriginal, nllModel - meanLogJac, DENSITY_TOL);
    }

    /** Mean held-out negative log-likelihood of a maximum-likelihood Gaussian (commons-math3 density; no underflow at these sizes). */
    private static double gaussianNll(double[][] train, double[][] test) {
        int d = train[0].length;
        double[] mean = new double[d];
        for (int c = 0; c < d; c++) {
            mean[c] = new Mean().evaluate(columnOf(train, c));
        }
        double[][] cov = new Covariance(train, false).getCovarianceMatrix().getData();
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(mean, cov);
        return -Arrays.stream(test).mapToDouble(x -> Math.log(g.density(x))).average().orElseThrow();
    }

    @Test
    void logColumnsUseStatisticsOfTheLog() {
        Table cancer = OpenData.read("breast_cancer.csv");
        TableTransform tt = TableTransform.fit(cancer, Set.of("mean_area", "worst_area"));
        int c = cancer.indexOf("mean_area");
        double[] logs = Arrays.stream(cancer.column(c)).map(Math::log).toArray();
        ColumnTransform t = tt.transform(c);
        // commons-math3 Mean and StandardDeviation(false) of log x
        assertEquals(ColumnTransform.Kind.LOG_STANDARDIZE, t.kind());
        assertEquals(new Mean().evaluate(logs), t.shift(), IDENTITY_TOL * Math.abs(t.shift()));
        assertEquals(new StandardDeviation(false).evaluate(logs), t.scale(), IDENTITY_TOL * t.scale());
        double[] zc = columnOf(tt.toModelSpace(cancer), c);
        assertEquals(0.0, new Mean().evaluate(zc), IDENTITY_TOL);
        assertEquals(1.0, new StandardDeviation(false).evaluate(zc), IDENTITY_TOL);
        // the log-Jacobian of one row: sum over columns of -log sd, minus log x on the log columns
        // (ColumnTransform Javadoc table)
        double[] row = cancer.row(3);
        double expected = 0;
        for (int j = 0; j < row.length; j++) {
            ColumnTransform tj = tt.transform(j);
            expected += -Math.log(tj.scale()) - (tj.kind() == ColumnTransform.Kind.LOG_STANDARDIZE ? Math.log(row[j]) : 0);
        }
        assertEquals(expected, tt.logJacobian(row), IDENTITY_TOL * Math.abs(expected));
        assertTrue(tt.notes().stream().anyMatch(n -> n.startsWith("column 'mean_area' is modelled on the log scale")));
    }

    @Test
    void logColumnsMustBePositiveContinuousAndKnown() {
        Table cancer = OpenData.read("breast_cancer.csv");
        // data: mean_concavity is 0 at row 101 (the first such row), so it cannot be a log column
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fit(cancer, Set.of("mean_concavity")));
        assertMessageHas(e, "'mean_concavity'", "row 101", "0.0");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fit(cancer, Set.of("humidity"))), "'humidity'");
        Table digits = OpenData.read("digits_binary.csv");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fit(digits, Set.of("pixel_3_3"))), "'pixel_3_3'", "BINARY");
    }

    @Test
    void constantColumnsAreCarriedExactly() {
        Table t = Table.of(List.of("setpoint_c", "temp_c", "door_open", "spare"),
                List.of(CONTINUOUS, CONTINUOUS, BINARY, CONTINUOUS), new double[][] {
                    {4.0, 3.1, 0, NAN}, {4.0, 4.9, 1, 0.125}, {NAN, 5.2, 1, NAN}, {4.0, 3.8, NAN, 0.125}});
        TableTransform tt = TableTransform.fit(t, Set.of());
        // common practice, no source: the rule "fewer than 2 distinct observed values -> CONSTANT"
        assertEquals(ColumnTransform.constant(4.0), tt.transform(0));
        assertEquals(ColumnTransform.constant(0.125), tt.transform(3));
        assertEquals(ColumnTransform.identity(), tt.transform(2));
        assertArrayEquals(new int[] {1}, tt.modelledContinuous());
        assertArrayEquals(new int[] {2}, tt.modelledBinary());
        assertArrayEquals(new int[] {0, 3}, tt.constantColumns());
        assertEquals(2, tt.modelColumns());
        assertEquals(List.of("temp_c", "door_open"), tt.modelColumnNames());
        assertTrue(tt.notes().contains("column 'setpoint_c' is constant (4.0) and is carried exactly, not diffused"),
                tt.notes().toString());
        assertTrue(tt.notes().contains(
                "column 'spare' has 2 of 4 training cells missing; its transform was fitted on the other 2"));
        // the mean and population sd ignore missing cells (commons-math3 on the observed cells)
        double[] temp = observed(t.column(1));
        assertEquals(new StandardDeviation(false).evaluate(temp), tt.transform(1).scale(), IDENTITY_TOL);

        double[][] z = tt.toModelSpace(t);
        assertEquals(2, z[0].length);
        Table back = tt.fromModelSpace(z);
        // constant columns come back at their value, missing cells included; the rest round-trips
        assertArrayEquals(new double[] {4.0, 4.0, 4.0, 4.0}, back.column(0));
        assertArrayEquals(new double[] {0.125, 0.125, 0.125, 0.125}, back.column(3));
        assertArrayEquals(t.column(2), back.column(2));
        assertArrayEquals(t.column(1), back.column(1), IDENTITY_TOL * 10);
    }

    @Test
    void modelSpaceRoundTripKeepsMissingCells() {
        Table cancer = OpenData.read("breast_cancer.csv");
        double[][] rows = cancer.toArray();
        for (int r = 0; r < rows.length; r += 7) {
            rows[r][r % rows[r].length] = NAN;
        }
        Table holey = cancer.withRows(rows);
        TableTransform tt = TableTransform.fit(holey, Set.of("mean_area"));
        Table back = tt.fromModelSpace(tt.toModelSpace(holey));
        // common practice, no source: f^-1(f(x)) = x cell by cell, NaN stays NaN
        for (int r = 0; r < rows.length; r++) {
            for (int c = 0; c < rows[r].length; c++) {
                double x = holey.get(r, c);
                double y = back.get(r, c);
                if (Double.isNaN(x)) {
                    assertTrue(Double.isNaN(y), "row " + r + " column " + c);
                } else {
                    assertEquals(x, y, IDENTITY_TOL * Math.max(1, Math.abs(x)), "row " + r + " column " + c);
                }
            }
        }
        double[] logJac = tt.logJacobian(holey);
        // a missing cell adds nothing to the log-Jacobian: row 0 lacks column 0
        double full = tt.logJacobian(cancer.row(0));
        assertEquals(full + Math.log(tt.transform(0).scale()), logJac[0], IDENTITY_TOL * Math.abs(full));
    }

    @Test
    void modelSpacePutsContinuousFirstAndRoundsBinary() {
        Table t = Table.of(List.of("door_open", "temp_c", "alarm"), List.of(BINARY, CONTINUOUS, BINARY),
                new double[][] {{0, 1.0, 1}, {1, 3.0, 0}});
        TableTransform tt = TableTransform.fit(t, Set.of());
        double[][] z = tt.toModelSpace(t);
        // the layout documented on TableTransform: continuous (transformed) then binary, table order
        assertArrayEquals(new double[] {-1, 0, 1}, z[0]);
        assertArrayEquals(new double[] {1, 1, 0}, z[1]);
        Table back = tt.fromModelSpace(new double[][] {{0, 0.49, 0.5}, {5, 1.7, -0.2}, {NAN, NAN, 1}});
        // binary cells round at 0.5; continuous cells by x = mean + sd z
        assertArrayEquals(new double[] {0, 2.0, 1}, back.row(0));
        assertArrayEquals(new double[] {1, 7.0, 0}, back.row(1));
        assertArrayEquals(new double[] {NAN, NAN, 1}, back.row(2));
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> tt.fromModelSpace(new double[][] {{0, 1}})), "model[0]", "2 values", "expected 3");
    }

    @Test
    void layoutMismatchNamesTheFirstDifference() {
        TableTransform tt = TableTransform.fit(irisTraining(), Set.of());
        Table iris = OpenData.read("iris.csv");
        Table swapped = iris.selectColumns("sepal_length_cm", "petal_length_cm", "sepal_width_cm", "petal_width_cm");
        // common practice, no source: the message names both sides of the first difference
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> tt.toModelSpace(swapped)),
                "column 1", "'petal_length_cm'", "'sepal_width_cm'");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> tt.logJacobian(iris.selectColumns("sepal_length_cm"))), "1 columns", "expects 4");
        assertThrows(IllegalArgumentException.class, () -> tt.logJacobian(new double[3]));
    }

    @Test
    void rebuiltFromPartsEqualsTheFit() {
        Table cancer = OpenData.read("breast_cancer.csv");
        TableTransform fitted = TableTransform.fit(cancer, Set.of("worst_area"));
        TableTransform rebuilt = TableTransform.of(fitted.names(), fitted.kinds(), fitted.transforms());
        // common practice, no source: what a model file stores is enough to rebuild the transform
        assertEquals(fitted, rebuilt);
        assertEquals(fitted.hashCode(), rebuilt.hashCode());
        double[][] z = fitted.toModelSpace(cancer);
        assertArrayEquals(z[10], rebuilt.toModelSpace(cancer)[10]);
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> TableTransform.of(List.of("a"),
                List.of(BINARY), List.of(ColumnTransform.standardize(0, 1)))), "'a'", "IDENTITY");
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> TableTransform.of(List.of("a"),
                List.of(CONTINUOUS), List.of(ColumnTransform.identity()))), "'a'", "STANDARDIZE");
        assertThrows(IllegalArgumentException.class,
                () -> TableTransform.of(List.of("a", "b"), List.of(CONTINUOUS, CONTINUOUS),
                        List.of(ColumnTransform.identity())));
    }

    @Test
    void binaryDataAreLeftAsTheyAre() {
        Table digits = OpenData.read("digits_binary.csv");
        TableTransform tt = TableTransform.fit(digits, Set.of());
        // data/SOURCES.md: digits_binary is 0/1 pixels; every column is binary, so IDENTITY
        assertEquals(64, tt.modelledBinary().length);
        assertEquals(0, tt.modelledContinuous().length);
        assertTrue(tt.transforms().stream().allMatch(t -> t.kind() == ColumnTransform.Kind.IDENTITY));
        assertArrayEquals(digits.toArray()[17], tt.toModelSpace(digits)[17]);
        assertEquals(digits, tt.fromModelSpace(tt.toModelSpace(digits)));
    }

    @Test
    void aColumnWithoutObservedCellsCannotBeFitted() {
        Table t = Table.of(List.of("a", "b"), List.of(CONTINUOUS, CONTINUOUS), new double[][] {{1, NAN}, {2, NAN}});
        // common practice, no source: no value, no mean
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> TableTransform.fit(t, Set.of())),
                "'b'", "no observed cell");
    }
}
