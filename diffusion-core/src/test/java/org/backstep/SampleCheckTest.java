package org.backstep;

import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.ModelRange;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplingPlan;
import org.backstep.option.StepInput;
import org.backstep.option.TrainingLoss;
import org.backstep.report.CheckedSample;
import org.backstep.report.SampleCheck;
import org.backstep.report.StepPlan;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.Provenance;
import org.junit.jupiter.api.Test;

import java.net.URISyntaxException;
import java.nio.file.Path;
import java.util.List;
import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Samples are checked against the training range in model space (see {@link SampleCheck}): the
 * count of rows beyond the stated bound, recomputed here from the definition on the returned
 * table (common practice, no source), a diverging chain caught while its values are still finite,
 * a trained model's samples not flagged, and the step planner marking step counts whose samples
 * diverge.
 */
class SampleCheckTest {

    private static final List<String> NAMES = List.of("a", "b");
    private static final List<ColumnKind> KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS);

    /**
     * A chain whose estimator predicts epsilon-hat = 0 on the default linear schedule at T = 20,
     * whose last beta is capped at 0.999: each reverse step divides by sqrt(alpha_t), so x_0 is
     * about x_T / sqrt(alpha-bar_T), a hundred times the prior's spread, far past a training range
     * of [-2, 2] but well inside the float range.
     */
    private static DiffusionModel diverging() {
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(NoiseSchedule.linear(20)).hidden(4)
                .timeEmbedding(2, StepInput.INPUT).variance(ReverseVariance.FIXED_POSTERIOR).loss(TrainingLoss.SIMPLE)
                .threads(1).options();
        TableTransform transform = TableTransform.of(NAMES, KINDS,
                List.of(ColumnTransform.standardize(10, 2), ColumnTransform.standardize(-5, 0.5)));
        Provenance p = new Provenance("test", "17", "", "", "", 0.0, 100, 100, 0, 0, 0, 0, "", List.of(), List.of());
        ModelRange range = new ModelRange(new double[] {-2, -2}, new double[] {2, 2}, 2, ModelRange.TRAINING_ROWS);
        return DiffusionModel.of(new ModelParts(options, transform, null, new ConstantEstimator(2, 2, 0f), p, range));
    }

    /** Rows of the table whose model-space value lies past the bound, from the definition in SampleCheck. */
    private static int beyond(DiffusionModel m, Table t, double[] min, double[] max) {
        double[][] z = m.transform().toModelSpace(t);
        int n = 0;
        for (double[] row : z) {
            boolean out = false;
            for (int j = 0; j < row.length; j++) {
                double w = max[j] - min[j];
                out |= row[j] < min[j] - SampleCheck.BOUND_WIDTHS * w || row[j] > max[j] + SampleCheck.BOUND_WIDTHS * w;
            }
            n += out ? 1 : 0;
        }
        return n;
    }

    @Test
    void aDivergingChainIsCaughtWhileItsValuesAreFinite() {
        DiffusionModel m = diverging();
        CheckedSample s = m.sampleChecked(400, SamplingPlan.ancestral(), 5);
        SampleCheck c = s.check();
        assertEquals(400, c.rows());
        assertEquals(beyond(m, s.table(), new double[] {-2, -2}, new double[] {2, 2}), c.rowsBeyond(),
                "rows beyond 10 widths, recounted from the returned table");
        assertTrue(c.shareBeyond() > 0.5, c.toString());
        assertTrue(c.diverged());
        assertTrue(c.largestExcess() > SampleCheck.BOUND_WIDTHS, c.toString());
        assertEquals(ModelRange.TRAINING_ROWS, c.rangeBasis());
        for (int r = 0; r < s.table().rows(); r++) {
            for (double v : s.table().row(r)) {
                assertTrue(Double.isFinite(v), "the values are still finite");
            }
        }
        // sample() draws the same rows (the check does not change the draws)
        assertArrayEquals(s.table().toArray(), m.sample(400, 5).toArray());
    }

    @Test
    void theStepPlannerMarksStepCountsWhoseSamplesDiverge() {
        DiffusionModel m = diverging();
        SplittableRandom rng = new SplittableRandom(3);
        double[][] rows = new double[60][2];
        for (double[] r : rows) {
            r[0] = 10 + 2 * rng.nextGaussian();
            r[1] = -5 + 0.5 * rng.nextGaussian();
        }
        StepPlan plan = m.planSteps(Table.of(NAMES, KINDS, rows), 0.0, 7, 5, 20);
        assertEquals(2, plan.rows().size());
        for (StepPlan.Row r : plan.rows()) {
            assertTrue(r.samplesDiverged(), "K = " + r.steps());
            assertTrue(r.shareBeyond() > 0.0 || Double.isNaN(r.shareBeyond()), "K = " + r.steps());
        }
        assertTrue(plan.reason().contains("every step count diverged"), plan.reason());
        assertTrue(plan.toCsv().contains(",true,"), plan.toCsv());
    }

    @Test
    void aTrainedModelsSamplesStayWithinTheBound() throws Exception {
        DiffusionModel m = DiffusionModel.load(golden(3));
        CheckedSample s = m.sampleChecked(500, SamplingPlan.ancestral(), 3);
        assertEquals(0, s.check().rowsBeyond(), s.check().toString());
        assertFalse(s.check().diverged());
        assertEquals(ModelRange.TRAINING_ROWS, s.check().rangeBasis());
        StepPlan plan = m.planSteps(s.table(), 0.05, 4, 20);
        assertFalse(plan.rows().get(0).samplesDiverged());
        // a file of format 2 has no stored range: Samuelson's bound of its training rows
        DiffusionModel old = DiffusionModel.load(golden(2));
        SampleCheck c = old.sampleChecked(50, SamplingPlan.ancestral(), 3).check();
        assertTrue(c.rangeBasis().startsWith("Samuelson bound of " + old.provenance().trainingRows()), c.rangeBasis());
    }

    @Test
    void theRangeOfAFitIsThatOfItsTrainingRowsInModelSpace() {
        SplittableRandom rng = new SplittableRandom(11);
        double[][] rows = new double[80][3];
        for (double[] r : rows) {
            r[0] = 20 + 3 * rng.nextGaussian();
            r[1] = Math.exp(rng.nextGaussian());
            r[2] = rng.nextDouble() < 0.3 ? 1 : 0;
        }
        Table t = Table.of(List.of("x", "y", "door"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.BINARY), rows);
        DiffusionModel m = Backstep.builder().steps(10).hidden(4).timeEmbedding(2, StepInput.INPUT).epochs(1)
                .checkpointFraction(0.0).logColumns("y").threads(1).fit(t);
        double[][] z = m.transform().toModelSpace(t);
        ModelRange range = m.parts().range();
        for (int j = 0; j < 3; j++) {
            float lo = Float.POSITIVE_INFINITY;
            float hi = Float.NEGATIVE_INFINITY;
            for (double[] row : z) {
                lo = Math.min(lo, (float) row[j]);
                hi = Math.max(hi, (float) row[j]);
            }
            assertEquals(lo, range.min()[j], "min of model column " + j + " (float32, as the trainer holds the rows)");
            assertEquals(hi, range.max()[j], "max of model column " + j);
        }
        assertEquals(2, range.continuous());
    }

    @Test
    void theCheckCountsRowsPastTenWidthsOnEitherSide() {
        // one continuous column of range [0, 1] and a binary column, which is not checked
        ModelRange r = new ModelRange(new double[] {0, 0}, new double[] {1, 1}, 1, ModelRange.TRAINING_ROWS);
        float[] x = {0.5f, 0, 11.0f, 1, 11.25f, 0, -10.5f, 1, 0.5f, 5};
        SampleCheck c = r.check(x, 5);
        assertEquals(2, c.rowsBeyond(), "11.25 and -10.5 lie past 10 widths; 11.0 lies at the bound");
        assertEquals(10.5, c.largestExcess(), 1e-6);
        assertEquals(0.4, c.shareBeyond(), 1e-12);
        // a range of width 0 counts in units of 1
        ModelRange flat = new ModelRange(new double[] {2}, new double[] {2}, 1, ModelRange.TRAINING_ROWS);
        assertEquals(1, flat.check(new float[] {12.5f, 11.5f}, 2).rowsBeyond());
        // no range: nothing lies beyond it
        assertEquals(0, ModelRange.none(1, 0).check(new float[] {1e30f}, 1).rowsBeyond());
    }

    private static Path golden(int version) throws URISyntaxException {
        java.net.URL url = SampleCheckTest.class.getResource("/golden/model-v" + version + ".backstep");
        assertNotNull(url);
        return Path.of(url.toURI());
    }
}
