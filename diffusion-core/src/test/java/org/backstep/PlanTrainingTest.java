package org.backstep;


import org.backstep.internal.train.TrainingRun;
import org.backstep.internal.train.Trainer;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.backstep.option.StepInput;
import org.backstep.option.TrainingBudget;
import org.backstep.report.TrainingPlan;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.training.EpochRecord;
import org.backstep.training.TrainingListener;
import org.junit.jupiter.api.Test;

import java.time.Duration;
import java.util.List;
import java.util.concurrent.CancellationException;
import java.util.concurrent.atomic.AtomicInteger;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * {@link Backstep.Builder#planTraining}: its refusals before any work, its determinism under an
 * update budget, and its bounds against the exact entropy of a known Gaussian. Tiny networks and
 * a few hundred updates keep each plan to seconds.
 */
class PlanTrainingTest {

    /** Monte Carlo checks pass within this many standard errors (common practice, no source). */
    private static final double STANDARD_ERRORS = 3.0;
    /**
     * A model trained for 1,500 updates may lie this far above the entropy, nats per dimension.
     * Measured on this data (600 held-out rows): 0.22 at T = 10 and -0.03 +/- 0.04 at T = 40; with
     * 400 updates T = 10 lay 1.37 above. The check guards against a bound that is off by a whole
     * term, not against a weak model.
     */
    private static final double SHORT_TRAINING_GAP = 0.5;
    private static final double[] MU = {3.0, -1.0};
    private static final double[][] SIGMA = {{2.0, 0.9}, {0.9, 1.0}};

    private static Backstep.Builder tiny() {
        return Backstep.builder().hidden(32, 32).timeEmbedding(16, StepInput.EVERY_BLOCK).batchSize(128)
                .checkpointFraction(0.0).threads(2).seed(3);
    }

    private static Table gaussian(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), MU, SIGMA);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        return Table.of(List.of("a", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
    }

    @Test
    void everyBoundLiesAboveTheExactEntropy() {
        Table train = gaussian(2000, 11);
        Table held = gaussian(1000, 12);
        TrainingPlan plan = tiny().planTraining(train, held, TrainingBudget.updates(1500), 0.02, 40, 10);
        assertEquals(List.of(10, 40), plan.rows().stream().map(TrainingPlan.Row::steps).toList());
        // Differential entropy of a Gaussian, h = (1/2) ln((2 pi e)^d det Sigma) (Cover & Thomas 2006,
        // Theorem 8.4.1); determinant by commons-math3
        double det = new LUDecomposition(MatrixUtils.createRealMatrix(SIGMA)).getDeterminant();
        double entropy = 0.5 * Math.log(Math.pow(2 * Math.PI * Math.E, 2) * det);
        // In model space z_j = (x_j - m_j)/s_j with s_j the training rows' population sd (README), and
        // h(z) = h(x) - sum_j ln s_j (change of variables, Cover & Thomas 2006, Theorem 8.6.4);
        // population sd by commons-math3
        double modelSpace = entropy;
        for (int j = 0; j < 2; j++) {
            modelSpace -= Math.log(new StandardDeviation(false).evaluate(train.column(j)));
        }
        double perDimension = modelSpace / 2;
        for (TrainingPlan.Row r : plan.rows()) {
            // E[bound] >= E[-log p_model(x)] >= h (the bound bounds the NLL, Ho et al. 2020, eq. 3;
            // cross-entropy is at least the entropy, Gibbs' inequality)
            assertTrue(r.boundNatsPerDimension() >= perDimension - STANDARD_ERRORS * r.boundStandardError(),
                    "T = " + r.steps() + ": bound " + r.boundNatsPerDimension() + " below the entropy " + perDimension
                            + " by more than " + STANDARD_ERRORS + " standard errors (" + r.boundStandardError() + ")");
            assertTrue(r.boundNatsPerDimension() <= perDimension + SHORT_TRAINING_GAP,
                    "T = " + r.steps() + ": bound " + r.boundNatsPerDimension() + " far above the entropy " + perDimension);
            // common practice, no source: the update budget is spent exactly
            assertEquals(1500, r.updates());
            // 2,000 rows in minibatches of 128 is 15 minibatches per epoch (Trainer: floor(n / batch))
            assertEquals(100.0, r.epochs(), 1e-12);
            assertTrue(r.boundStandardError() > 0, "a standard error from 1,000 records");
        }
    }

    @Test
    void anUpdateBudgetGivesTheSameTableForTheSameSeed() {
        Table train = gaussian(600, 7);
        Table held = gaussian(200, 8);
        TrainingPlan a = tiny().planTraining(train, held, TrainingBudget.updates(60), 0.02, 5, 20);
        TrainingPlan b = tiny().planTraining(train, held, TrainingBudget.updates(60), 0.02, 5, 20);
        // Determinism is a project rule (STYLE.md): equal except the timing columns
        assertEquals(withoutTimes(a), withoutTimes(b));
        TrainingPlan c = tiny().seed(4).planTraining(train, held, TrainingBudget.updates(60), 0.02, 5, 20);
        assertNotEquals(withoutTimes(a), withoutTimes(c), "another seed, another table");
    }

    private static List<TrainingPlan.Row> withoutTimes(TrainingPlan p) {
        return p.rows().stream().map(r -> new TrainingPlan.Row(r.steps(), r.updates(), r.epochs(), 0.0,
                r.boundNatsPerDimension(), r.boundStandardError(), r.energyDistance(), r.energyPValue(), r.maxKs(),
                r.samplesDiverged() ? Double.NaN : 0.0, r.samplesDiverged())).toList();
    }

    @Test
    void badArgumentsAreRefusedByNameBeforeAnyWork() {
        Table train = gaussian(100, 1);
        Table held = gaussian(20, 2);
        AtomicInteger heard = new AtomicInteger();
        TrainingListener l = p -> heard.incrementAndGet();
        TrainingBudget budget = TrainingBudget.updates(10);
        // common practice, no source: each message names the parameter
        assertMessage("stepCounts[1]", () -> tiny().listener(l).planTraining(train, held, budget, 0.02, 10, 1));
        assertMessage("stepCounts lists T = 10 twice", () -> tiny().listener(l).planTraining(train, held, budget, 0.02, 10, 20, 10));
        assertMessage("number of stepCounts", () -> tiny().listener(l).planTraining(train, held, budget, 0.02));
        assertMessage("tolerance", () -> tiny().listener(l).planTraining(train, held, budget, -0.01, 10));
        assertMessage("tolerance", () -> tiny().listener(l).planTraining(train, held, budget, Double.NaN, 10));
        assertMessage("budget", () -> tiny().listener(l).planTraining(train, held, null, 0.02, 10));
        assertMessage("training", () -> tiny().listener(l).planTraining(null, held, budget, 0.02, 10));
        assertMessage("heldOut", () -> tiny().listener(l).planTraining(train, null, budget, 0.02, 10));
        Table other = Table.of(List.of("a", "c"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), held.toArray());
        assertMessage("heldOut has columns [a, c]", () -> tiny().listener(l).planTraining(train, other, budget, 0.02, 10));
        assertMessage("complete rows of heldOut", () -> tiny().listener(l).planTraining(train, held.selectRows(new int[] {0}),
                budget, 0.02, 10));
        assertMessage("continuousSchedule", () -> tiny().continuousSchedule(NoiseSchedule.linear(50)).listener(l)
                .planTraining(train, held, budget, 0.02, 10));
        assertMessage("hidden[0]", () -> tiny().hidden(0).listener(l).planTraining(train, held, budget, 0.02, 10));
        assertMessage("logColumns", () -> tiny().logColumns("nope").listener(l).planTraining(train, held, budget, 0.02, 10));
        assertEquals(0, heard.get(), "no training happened");
    }

    @Test
    void aStopRequestCancelsThePlan() {
        Table train = gaussian(300, 1);
        Table held = gaussian(50, 2);
        AtomicInteger polls = new AtomicInteger();
        // common practice, no source: a cancelled plan says so rather than returning a partial table
        CancellationException e = assertThrows(CancellationException.class, () -> tiny()
                .stopWhen(() -> polls.incrementAndGet() > 5).planTraining(train, held, TrainingBudget.updates(20), 0.02, 5, 10));
        assertTrue(e.getMessage().contains("stopped on request"), e.getMessage());
    }

    @Test
    void aWallClockBudgetStopsTraining() {
        Table train = gaussian(300, 1);
        Table held = gaussian(50, 2);
        Duration budget = Duration.ofMillis(300);
        TrainingPlan plan = tiny().planTraining(train, held, TrainingBudget.wallClock(budget), 0.02, 5);
        TrainingPlan.Row r = plan.rows().get(0);
        // TrainingBudget's contract: training stops after the first update that reaches the budget
        assertTrue(r.trainingSeconds() >= budget.toNanos() / 1e9, "trained " + r.trainingSeconds() + " s");
        assertTrue(r.updates() >= 1);
        assertTrue(!plan.budget().isDeterministic());
    }

    @Test
    void pausingAFitDoesNotChangeIt() {
        Table t = gaussian(700, 9);
        org.backstep.option.FitOptions options = tiny().steps(20).checkpointFraction(0.1).epochs(12).options();
        for (TrainingBudget budget : new TrainingBudget[] {null, TrainingBudget.updates(50)}) {
            Trainer.Fitted whole = Trainer.fit(options, t, null, TrainingListener.NONE, () -> false, budget);
            Trainer.Fitted paused;
            try (TrainingRun run = new TrainingRun(options, t, null, TrainingListener.NONE, () -> false, budget)) {
                run.advance(7);       // inside the second epoch (5 minibatches of 128 per epoch)
                run.advance(7);       // nothing to do
                run.advance(33);
                run.advance(Long.MAX_VALUE);
                paused = run.finish();
            }
            // Determinism is a project rule (STYLE.md): the planner's turns must not change a model
            assertArrayEquals(whole.parts().network().parameters(), paused.parts().network().parameters(),
                    "budget " + budget);
            assertEquals(whole.updates(), paused.updates());
            assertEquals(whole.parts().provenance().history().stream().map(EpochRecord::loss).toList(),
                    paused.parts().provenance().history().stream().map(EpochRecord::loss).toList());
        }
    }

    @Test
    void aStoppedFitKeepsEvaluatedWeights() {
        Table t = gaussian(2000, 8);
        AtomicInteger polls = new AtomicInteger();
        // stopped after 3 updates, long before the first scheduled held-out evaluation (epoch 5 of 100)
        DiffusionModel m = tiny().checkpointFraction(0.1).epochs(100).stopWhen(() -> polls.incrementAndGet() >= 3).fit(t);
        // common practice, no source: the model returned on a stop is the evaluated average of the
        // updates done, not the untrained starting weights
        assertTrue(m.history().get(m.history().size() - 1).checkpointBound().isPresent(), "the stop is evaluated");
        assertTrue(m.provenance().notes().stream().anyMatch(n -> n.startsWith("kept the averaged weights")
                && !n.contains("Infinity")), m.provenance().notes().toString());
    }

    private static void assertMessage(String part, org.junit.jupiter.api.function.Executable e) {
        IllegalArgumentException x = assertThrows(IllegalArgumentException.class, e);
        assertTrue(x.getMessage().contains(part), "message '" + x.getMessage() + "' does not name " + part);
    }
}
