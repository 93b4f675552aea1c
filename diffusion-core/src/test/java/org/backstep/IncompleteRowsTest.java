package org.backstep;

import org.backstep.option.Conditioning;
import org.backstep.option.ImputationOptions;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.junit.jupiter.api.Test;

import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Training on rows with missing cells (stochastic EM, {@code internal.train.GapFilling}): a table
 * in which every row lacks a cell fits, the same seed gives the same weights, a table without gaps
 * trains as it did before gaps were trained on, and on Gaussian data with gaps at random the
 * fitted model's imputations follow the exact conditional distribution (the Schur complement).
 */
class IncompleteRowsTest {

    /**
     * The imputed means may miss the exact conditional means by this much on average, in exact
     * conditional sd (the imputation issue's target for a mean, 0.1 sd).
     */
    private static final double MEAN_ERROR = 0.1;
    /**
     * The slope of the imputed means on the exact conditional means may fall this far short of 1.
     * Measured with this test's data and settings (2,000 updates; on one machine, shared): 0.84
     * for this fit; 0.89 for the same fit on the rows before gaps were made, 0.84 to 0.89 on the
     * complete rows alone, and 0.72 when the start's draws of the missing cells were never drawn
     * again from the model. Fits of this size differ by a few hundredths from seed to seed or
     * machine to machine. (Our choice: between the last and the others.)
     */
    private static final double SLOPE_SHORTFALL = 0.22;
    /**
     * The draws' spread about the exact mean, over the exact conditional variance: within 25% (the
     * imputation issue's target is 20% with exact kernels; measured 1.07 here, 1.22 without the
     * model's draws, 1.0 to 1.2 on the complete rows alone).
     */
    private static final double VARIANCE_TOLERANCE = 0.25;
    /** Column statistics recomputed with commons-math3 agree to rounding (common practice, no source). */
    private static final double STATISTIC_TOLERANCE = 1e-12;

    /** Small network, few updates: seconds per fit. */
    private static Backstep.Builder small() {
        return Backstep.builder().steps(100).hidden(64, 64).batchSize(128).threads(2).seed(3);
    }

    /** Rows of the 2-D Gaussian of {@link ImputationCases}, drawn with commons-math3. */
    private static double[][] gaussianRows(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed),
                ImputationCases.MU, ImputationCases.SIGMA);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        return rows;
    }

    private static Table table(double[][] rows, ColumnKind... kinds) {
        List<String> names = List.of("x0", "x1", "b").subList(0, kinds.length);
        return Table.of(names, List.of(kinds), rows);
    }

    /** Two Gaussian columns and a binary one that depends on them; every row lacks exactly one cell. */
    private static Table everyRowHasAGap() {
        double[][] g = gaussianRows(600, 11);
        SplittableRandom rng = new SplittableRandom(12);
        double[][] rows = new double[g.length][];
        for (int i = 0; i < g.length; i++) {
            double b = rng.nextDouble() < (g[i][0] > ImputationCases.MU[0] ? 0.8 : 0.2) ? 1.0 : 0.0;
            rows[i] = new double[] {g[i][0], g[i][1], b};
            rows[i][i % 3] = Double.NaN;
        }
        return table(rows, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY);
    }

    @Test
    void aTableInWhichEveryRowLacksACellFits() {
        Table t = everyRowHasAGap();
        assertEquals(0, t.completeRows().rows());
        DiffusionModel model = small().trainingSteps(300).fit(t);

        // the seeded split has no complete checkpoint row, so every row is trained on (our design)
        assertEquals(600, model.provenance().trainingRows());
        assertEquals(0, model.provenance().checkpointRows());
        assertTrue(model.provenance().notes().stream().anyMatch(n -> n.startsWith("600 of 600 training rows had a missing cell (600 cells)")),
                () -> "notes " + model.provenance().notes());
        assertTrue(model.provenance().notes().stream().anyMatch(n -> n.contains("drawn from the model 10 times")),
                () -> "notes " + model.provenance().notes());
        // the same counts as fields, kept by the model file (common practice, no source)
        assertEquals(600, model.provenance().rowsWithGaps());
        assertEquals(600, model.provenance().filledCells());
        assertEquals(10, model.provenance().refills());
        try {
            java.nio.file.Path file = java.nio.file.Files.createTempFile("gaps", ".backstep");
            model.save(file);
            org.backstep.training.Provenance back = DiffusionModel.load(file).provenance();
            java.nio.file.Files.deleteIfExists(file);
            assertEquals(600, back.rowsWithGaps());
            assertEquals(600, back.filledCells());
            assertEquals(10, back.refills());
        } catch (java.io.IOException e) {
            throw new java.io.UncheckedIOException(e);
        }

        // each column's transform comes from its observed cells: mean and population sd by commons-math3
        for (int c = 0; c < 2; c++) {
            double[] observed = Arrays.stream(t.column(c)).filter(v -> !Double.isNaN(v)).toArray();
            assertEquals(400, observed.length);
            ColumnTransform f = model.transform().transform(c);
            assertEquals(new Mean().evaluate(observed), f.shift(), STATISTIC_TOLERANCE * Math.abs(f.shift()) + STATISTIC_TOLERANCE);
            assertEquals(new StandardDeviation(false).evaluate(observed), f.scale(), STATISTIC_TOLERANCE * f.scale());
        }

        // the fitted model imputes the table's own gaps: binary cells 0 or 1, continuous cells finite
        Imputation imp = model.impute(t, new ImputationOptions(4, 0.9, 20, 1, Conditioning.REPLACEMENT), 5);
        for (Table draw : imp.draws()) {
            assertFalse(draw.hasMissing());
            for (int i = 0; i < draw.rows(); i++) {
                assertTrue(Double.isFinite(draw.get(i, 0)) && Double.isFinite(draw.get(i, 1)));
                assertTrue(draw.get(i, 2) == 0.0 || draw.get(i, 2) == 1.0, "binary cell " + draw.get(i, 2));
            }
        }
    }

    @Test
    void sameSeedGivesTheSameWeightsWithGaps() {
        Table t = everyRowHasAGap();
        DiffusionModel a = small().trainingSteps(120).fit(t);
        DiffusionModel b = small().trainingSteps(120).fit(t);
        // Determinism is a project rule (STYLE.md): the gaps' draws are seeded too
        assertArrayEquals(a.parts().network().parameters(), b.parts().network().parameters());
        DiffusionModel c = small().seed(4).trainingSteps(120).fit(t);
        assertFalse(Arrays.equals(a.parts().network().parameters(), c.parts().network().parameters()),
                "another seed, other weights");
    }

    /**
     * A table without gaps takes the complete-rows path: rows with no observed cell at all are left
     * out before anything else is done, so appending such rows to a complete table must give the
     * weights of the complete table bit for bit, and the complete table must not hear of gaps.
     */
    @Test
    void aTableWithoutGapsTrainsAsBefore() {
        double[][] rows = gaussianRows(300, 13);
        Table complete = table(rows, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS);
        double[][] padded = Arrays.copyOf(rows, rows.length + 2);
        padded[rows.length] = new double[] {Double.NaN, Double.NaN};
        padded[rows.length + 1] = new double[] {Double.NaN, Double.NaN};
        Table withEmptyRows = table(padded, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS);

        DiffusionModel a = small().checkpointFraction(0.0).trainingSteps(60).fit(complete);
        DiffusionModel b = small().checkpointFraction(0.0).trainingSteps(60).fit(withEmptyRows);
        // our design: rows without an observed cell carry nothing to train on
        assertArrayEquals(a.parts().network().parameters(), b.parts().network().parameters());
        assertEquals(a.transform(), b.transform());
        assertTrue(a.provenance().notes().stream().noneMatch(n -> n.contains("missing cell")),
                () -> "notes " + a.provenance().notes());
        assertEquals(0, a.provenance().rowsWithGaps());
        assertEquals(0, a.provenance().filledCells());
    }

    /**
     * 2-D Gaussian, 30% of the training rows missing one cell (either column) completely at
     * random; the fitted model imputes x2 given x1 on fresh records, compared with the exact
     * conditional distribution N(mu_2 + s_21/s_11 (x1 - mu_1), s_22 - s_21^2/s_11) (the Schur
     * complement; Bishop 2006, eq. 2.81-2.82, computed by {@link ImputationCases#gaussian}). The
     * imputation runs 5 resampling rounds so that the job's own slope deficit (plain replacement
     * follows the observed cell with slope 0.77 even with the exact kernels,
     * imputation-methods.txt) does not hide what training did.
     */
    @Test
    void gaussianImputationsFollowTheSchurComplement() {
        double[][] rows = gaussianRows(4000, 14);
        SplittableRandom rng = new SplittableRandom(15);
        for (double[] r : rows) {
            if (rng.nextDouble() < 0.3) {
                r[rng.nextInt(2)] = Double.NaN;
            }
        }
        Table t = table(rows, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS);
        DiffusionModel model = small().trainingSteps(2000).fit(t);
        ImputationCases.Case c = ImputationCases.gaussian(400, 16);
        Imputation imp = model.impute(c.records(), new ImputationOptions(40, 0.9, 100, 5, Conditioning.REPLACEMENT), 17);
        ImputationCases.Continuous f = ImputationCases.continuous(imp, c);
        assertEquals(0.0, f.meanError(), MEAN_ERROR, "mean error " + f);
        assertTrue(f.slope() >= 1.0 - SLOPE_SHORTFALL && f.slope() <= 1.0 + MEAN_ERROR, "slope " + f);
        assertEquals(1.0, f.varianceRatio(), VARIANCE_TOLERANCE, "variance " + f);
    }
}
