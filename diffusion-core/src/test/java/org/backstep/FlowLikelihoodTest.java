package org.backstep;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.JDKRandomGenerator;
import org.backstep.option.FlowOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepInput;
import org.backstep.option.TrainingLoss;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.FlowLikelihood;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

import java.util.Collections;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The probability-flow likelihood ({@link DiffusionModel#flowLikelihood}) on Gaussian data with the
 * exact epsilon-hat ({@link ExactGaussianFlow}): the flow's density at step 1 is that of
 * x_1 ~ N(a mu, a^2 Sigma + s^2 I) (a^2 = alpha-bar_1, s^2 = 1 - alpha-bar_1), checked against
 * commons-math3's {@link MultivariateNormalDistribution}; and its determinism.
 */
class FlowLikelihoodTest {

    /**
     * Flow against the closed-form density, nats per record: absolute plus relative to the figure.
     * The flow holds eps-hat at the nearest step between steps (100 steps); measured errors (with
     * tolerances of 1e-5 and of 1e-9 alike, so they are not the integrator's) 2e-4 to 3.5e-3 nats
     * for the records drawn from the data, 0.033 for the tail record at 23 nats (0.017 with eps-hat
     * interpolated between neighbouring steps; at T = 1000 both 0.004).
     */
    private static final double DENSITY_TOLERANCE = 5e-3;
    private static final double DENSITY_RELATIVE_TOLERANCE = 2e-3;
    private static final double[] MU = {0.5, -1.0, 2.0};
    private static final double[][] SIGMA = {{1.0, 0.6, -0.3}, {0.6, 2.0, 0.4}, {-0.3, 0.4, 0.5}};
    private static final List<String> NAMES = List.of("a", "b", "c");
    private static final int STEPS = 100;

    /**
     * Linear betas from 1e-3 to 0.3 over 100 steps: alpha-bar_T = 3e-7, so that the N(0, I) prior
     * the flow ends at is within 1e-3 nats of the exact x_T marginal and the check sees the
     * integration alone (with the default 0.2 as the last beta, alpha-bar_T = 4e-5 and the prior's
     * mean sqrt(alpha-bar_T) mu alone moves these records by 0.005 to 0.05 nats).
     */
    private static NoiseSchedule schedule() {
        return NoiseSchedule.linear(STEPS, 1e-3, 0.3);
    }

    private static DiffusionModel model(int threads) {
        NoiseSchedule schedule = schedule();
        List<ColumnKind> kinds = Collections.nCopies(3, ColumnKind.CONTINUOUS);
        // model space = data space: each column's transform is the identity map
        TableTransform transform = TableTransform.of(NAMES, kinds, Collections.nCopies(3, ColumnTransform.standardize(0, 1)));
        return DiffusionModel.withEstimator(Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(schedule)
                        .variance(ReverseVariance.FIXED_POSTERIOR).loss(TrainingLoss.SIMPLE)
                        .timeEmbedding(2, StepInput.INPUT).hidden(1).threads(threads).options(),
                transform, new ExactGaussianFlow(schedule, MU, SIGMA));
    }

    private static double[][] records(int n) {
        JDKRandomGenerator random = new JDKRandomGenerator(17);
        double[][] rows = new MultivariateNormalDistribution(random, MU, SIGMA).sample(n);
        rows[0] = new double[] {4.0, -5.0, 0.0};       // far in the tail
        return rows;
    }

    @Test
    void equalsTheClosedFormGaussianDensity() {
        double[][] rows = records(12);
        FlowLikelihood flow = model(2).flowLikelihood(Table.of(NAMES, Collections.nCopies(3, ColumnKind.CONTINUOUS), rows));
        NoiseSchedule schedule = schedule();
        double abar = schedule.alphaBar(1);
        double[] mean = new double[3];
        double[][] cov = new double[3][3];
        for (int i = 0; i < 3; i++) {
            mean[i] = Math.sqrt(abar) * MU[i];
            for (int j = 0; j < 3; j++) {
                cov[i][j] = abar * SIGMA[i][j] + (i == j ? 1 - abar : 0);
            }
        }
        MultivariateNormalDistribution exact = new MultivariateNormalDistribution(mean, cov);   // commons-math3
        double[] nats = flow.nats();
        for (int r = 0; r < rows.length; r++) {
            double expected = -Math.log(exact.density(rows[r]));
            assertEquals(expected, nats[r], DENSITY_TOLERANCE + DENSITY_RELATIVE_TOLERANCE * Math.abs(expected), "row " + r);
        }
        assertArrayEquals(nats, flow.natsOriginalUnits(), 0.0, "identity transforms: both spaces agree");
        for (int e : flow.evaluations()) {
            assertTrue(e >= 7 * STEPS, "at least one Dormand-Prince step per segment: " + e);
        }
    }

    @Test
    void sameRecordSameFigureWhateverTheBatch() {
        // common practice, no source: a deterministic score does not depend on its neighbours
        double[][] rows = records(9);
        List<ColumnKind> kinds = Collections.nCopies(3, ColumnKind.CONTINUOUS);
        double[] all = model(2).flowLikelihood(Table.of(NAMES, kinds, rows)).nats();
        double[][] reversed = new double[rows.length][];
        for (int r = 0; r < rows.length; r++) {
            reversed[r] = rows[rows.length - 1 - r];
        }
        double[] back = model(1).flowLikelihood(Table.of(NAMES, kinds, reversed)).nats();
        for (int r = 0; r < rows.length; r++) {
            double alone = model(1).flowLikelihood(Table.of(NAMES, kinds, new double[][] {rows[r]})).nats()[0];
            assertEquals(Double.doubleToLongBits(all[r]), Double.doubleToLongBits(alone), "row " + r + " alone");
            assertEquals(Double.doubleToLongBits(all[r]), Double.doubleToLongBits(back[rows.length - 1 - r]),
                    "row " + r + " in reversed order on one thread");
        }
    }

    @Test
    void aNetworkModelGivesEachRecordTheSameBitsAloneAndInABatch() {
        // common practice, no source: the network's tangents, not only an exact estimator
        List<ColumnKind> kinds = Collections.nCopies(3, ColumnKind.CONTINUOUS);
        TableTransform transform = TableTransform.of(NAMES, kinds, Collections.nCopies(3, ColumnTransform.standardize(0, 1)));
        double[][] rows = records(5);
        double[] all = null;
        for (int threads : new int[] {2, 1}) {
            org.backstep.option.FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).steps(20).variance(ReverseVariance.LEARNED)
                    .hidden(16, 16).threads(threads).options();
            org.backstep.internal.net.ReverseNetwork network = org.backstep.internal.net.ReverseNetwork.create(
                    new org.backstep.internal.net.NetworkShape(3, new int[] {16, 16}, 6, options.embeddingSize(),
                            options.stepInput()), 20, 5);
            DiffusionModel m = DiffusionModel.of(new org.backstep.internal.chain.ModelParts(options, transform, network,
                    new org.backstep.internal.chain.NetworkEstimator(network), model(1).provenance()));
            double[] batch = m.flowLikelihood(Table.of(NAMES, kinds, rows)).nats();
            if (all == null) {
                all = batch;
            }
            for (int r = 0; r < rows.length; r++) {
                double alone = m.flowLikelihood(Table.of(NAMES, kinds, new double[][] {rows[r]})).nats()[0];
                assertEquals(Double.doubleToLongBits(all[r]), Double.doubleToLongBits(alone), "row " + r + " alone");
                assertEquals(Double.doubleToLongBits(all[r]), Double.doubleToLongBits(batch[r]), "row " + r + ", " + threads + " threads");
            }
        }
    }

    @Test
    void aScreenByTheFlowScoresEachRecordByItsFlowLikelihood() {
        // common practice, no source: the screen's scores are the figures of the method it names
        List<ColumnKind> kinds = Collections.nCopies(3, ColumnKind.CONTINUOUS);
        double[][] rows = records(6);
        Table held = Table.of(NAMES, kinds, java.util.Arrays.copyOfRange(rows, 1, 6));
        Table screened = Table.of(NAMES, kinds, java.util.Arrays.copyOf(rows, 2));
        DiffusionModel m = model(2);
        AnomalyScreen s = m.screen(held, screened, Defaults.screening().withQuantile(0.5).withFlow(Defaults.flow())
                .withSurprisal(SurprisalOptions.none()), 3);
        assertArrayEquals(m.flowLikelihood(screened).nats(), s.scores(), 0.0);
        assertArrayEquals(m.flowLikelihood(held).nats(), s.heldOutScores(), 0.0);
        assertArrayEquals(new int[] {0}, s.flagged(), "the tail record is flagged");
    }

    @Test
    void tighterTolerancesMoveTheFigureLittle() {
        // common practice, no source: an adaptive integrator converges as its tolerance shrinks
        double[][] rows = records(4);
        Table t = Table.of(NAMES, Collections.nCopies(3, ColumnKind.CONTINUOUS), rows);
        double[] loose = model(2).flowLikelihood(t, FlowOptions.of(1e-3, 1e-3)).nats();
        double[] tight = model(2).flowLikelihood(t, FlowOptions.of(1e-9, 1e-9)).nats();
        for (int r = 0; r < rows.length; r++) {
            assertEquals(tight[r], loose[r], 1e-2, "row " + r);
        }
    }

    @Test
    void refusesBadTolerancesByName() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> FlowOptions.of(0, 1e-5));
        assertEquals("relativeTolerance is 0.0; expected a number in (0, 0.1]", e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> FlowOptions.of(1e-5, Double.NaN));
        assertEquals("absoluteTolerance is NaN; expected a number in (0, 0.1]", e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> FlowOptions.of(0.5, 1e-5));
        assertEquals("relativeTolerance is 0.5; expected a number in (0, 0.1]", e.getMessage());
    }
}
