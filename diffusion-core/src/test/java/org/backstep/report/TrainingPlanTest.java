package org.backstep.report;

import org.backstep.option.TrainingBudget;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The training plan's value on constructed rows: the recommendation rule of issue 6 ("the smallest
 * T whose held-out bound is within the tolerance of the best"), worked by hand; the text and CSV
 * forms as golden strings; and the refusals.
 */
class TrainingPlanTest {

    private static final TrainingBudget BUDGET = TrainingBudget.updates(2000);

    private static TrainingPlan.Row row(int t, double bound, double millis) {
        return new TrainingPlan.Row(t, 2000, 57.1, 12.3, bound, 0.01, 0.012, 0.35, 0.045, millis, false);
    }

    private static TrainingPlan.Row diverged(int t, double bound) {
        return new TrainingPlan.Row(t, 2000, 57.1, 12.3, bound, 0.01, Double.NaN, Double.NaN, Double.NaN, Double.NaN, true);
    }

    /** Bounds 1.50, 1.31, 1.30, 1.295 nats per dimension at T = 10, 25, 50, 100. */
    private static List<TrainingPlan.Row> fourRows() {
        return List.of(row(10, 1.50, 40), row(25, 1.31, 100), row(50, 1.30, 200), row(100, 1.295, 400));
    }

    @Test
    void recommendsTheSmallestTWithinToleranceOfTheBest() {
        // rule of issue 6, by hand: best 1.295 at T = 100; 1.295 + 0.02 = 1.315; T = 10 (1.50) is out,
        // T = 25 (1.31) is the smallest within
        assertEquals(25, new TrainingPlan(BUDGET, 0.02, fourRows()).recommended());
        // by hand: 1.295 + 0.006 = 1.301 admits T = 50 (1.30), not T = 25
        assertEquals(50, new TrainingPlan(BUDGET, 0.006, fourRows()).recommended());
        // by hand: tolerance 0 leaves only the best itself
        assertEquals(100, new TrainingPlan(BUDGET, 0.0, fourRows()).recommended());
        // by hand: a tolerance wider than every gap admits the smallest T
        assertEquals(10, new TrainingPlan(BUDGET, 1.0, fourRows()).recommended());
        // by hand: "within" includes the edge; 1.0 + 0.5 = 1.5 exactly in binary floating point
        assertEquals(10, new TrainingPlan(BUDGET, 0.5, List.of(row(10, 1.5, 1), row(20, 1.0, 2))).recommended());
    }

    @Test
    void aDivergedModelIsPassedOver() {
        List<TrainingPlan.Row> rows = List.of(diverged(10, 1.20), row(25, 1.31, 100), row(50, 1.30, 200));
        TrainingPlan plan = new TrainingPlan(BUDGET, 0.02, rows);
        // by hand: among finite models the best is 1.30 at T = 50; 1.31 lies within 0.02, so T = 25,
        // although the diverged T = 10 has the lowest bound
        assertEquals(25, plan.recommended());
        assertTrue(plan.reason().contains("passed over T = 10"), plan.reason());
        // by hand: when every chain diverged, the rule falls back to the bound alone
        TrainingPlan all = new TrainingPlan(BUDGET, 0.02, List.of(diverged(10, 1.40), diverged(20, 1.30)));
        assertEquals(20, all.recommended());
        assertTrue(all.reason().contains("rests on the bound alone"), all.reason());
    }

    @Test
    void textAndCsvAreAsDocumented() {
        TrainingPlan plan = new TrainingPlan(BUDGET, 0.02, List.of(row(10, 1.50, 40), row(25, 1.31, 100),
                diverged(50, 1.30), row(100, 1.295, 400)));
        // golden strings (common practice, no source: a report's format is fixed by a test)
        String text = String.join("\n",
                "Budget per model: 2000 updates; tolerance 0.0200 nats per dimension",
                "     T  updates   epochs  train s bound nats/dim      +/-    energy      p  max KS   ms/1000",
                "    10     2000     57.1     12.3         1.5000   0.0100    0.0120  0.350   0.045      40.0",
                "    25     2000     57.1     12.3         1.3100   0.0100    0.0120  0.350   0.045     100.0  <- recommended",
                "    50     2000     57.1     12.3         1.3000   0.0100  diverged      -       -         -",
                "   100     2000     57.1     12.3         1.2950   0.0100    0.0120  0.350   0.045     400.0",
                "T = 25: its held-out bound, 1.3100 nats per dimension, is within 0.0200 of the best (1.2950 at T = 100); "
                        + "it draws 1,000 samples in 100 ms against 400 ms at T = 100; passed over T = 50, whose sampling "
                        + "chains diverged.",
                "");
        assertEquals(text, plan.toString());
        String csv = String.join("\n",
                "steps,updates,epochs,training_seconds,bound_nats_per_dim,bound_standard_error,energy_distance,"
                        + "energy_p_value,max_ks,ms_per_1000_samples,samples_diverged,share_beyond_bound,recommended",
                "10,2000,57.10,12.30,1.500000,0.010000,0.012000,0.3500,0.0450,40.0,false,0.0000,false",
                "25,2000,57.10,12.30,1.310000,0.010000,0.012000,0.3500,0.0450,100.0,false,0.0000,true",
                "50,2000,57.10,12.30,1.300000,0.010000,,,,,true,,false",
                "100,2000,57.10,12.30,1.295000,0.010000,0.012000,0.3500,0.0450,400.0,false,0.0000,false",
                "");
        assertEquals(csv, plan.toCsv().replace(System.lineSeparator(), "\n"));
    }

    @Test
    void theBestAtTheSmallestTSaysSo() {
        TrainingPlan plan = new TrainingPlan(BUDGET, 0.02, List.of(row(10, 1.2, 40), row(20, 1.3, 80)));
        assertEquals(10, plan.recommended());
        // common practice, no source: the sentence names the figures it rests on
        assertEquals("T = 10 has the best held-out bound, 1.2000 nats per dimension; it draws 1,000 samples in 40 ms "
                + "against 80 ms at T = 20.", plan.reason());
        TrainingPlan later = new TrainingPlan(BUDGET, 0.02, List.of(row(10, 1.5, 40), row(20, 1.3, 80)));
        assertEquals("T = 20 has the best held-out bound, 1.3000 nats per dimension, and no smaller T comes within "
                + "0.0200 of it; it draws 1,000 samples in 80 ms.", later.reason());
    }

    @Test
    void badValuesAreRefusedByName() {
        // common practice, no source: each message names the parameter
        assertMessage("tolerance", () -> new TrainingPlan(BUDGET, -0.1, fourRows()));
        assertMessage("number of rows", () -> new TrainingPlan(BUDGET, 0.02, List.of()));
        assertMessage("budget", () -> new TrainingPlan(null, 0.02, fourRows()));
        assertMessage("increasing T", () -> new TrainingPlan(BUDGET, 0.02, List.of(row(20, 1, 1), row(10, 1, 1))));
        assertMessage("boundNatsPerDimension", () -> row(10, Double.NaN, 1));
        assertMessage("energyDistance", () -> new TrainingPlan.Row(10, 1, 1, 1, 1, 0, Double.NaN, 0.5, 0.1, 1, false));
        assertMessage("updates", () -> TrainingBudget.updates(0));
        assertMessage("wallClock", () -> TrainingBudget.wallClock(java.time.Duration.ZERO));
        assertMessage("wallClock", () -> TrainingBudget.wallClock(java.time.Duration.ofSeconds(-1)));
    }

    private static void assertMessage(String part, org.junit.jupiter.api.function.Executable e) {
        IllegalArgumentException x = assertThrows(IllegalArgumentException.class, e);
        assertTrue(x.getMessage().contains(part), "message '" + x.getMessage() + "' does not name " + part);
    }

    @Test
    void modelsWhoseSamplesLieBeyondTheTrainingRangeArePassedOver() {
        // common practice, no source: a model whose samples diverge is not recommended while another is sound
        TrainingPlan.Row beyond = new TrainingPlan.Row(10, 2000, 57.1, 12.3, 1.2, 0.01, 0.5, 0.0, 0.9, 40, false, 0.3);
        TrainingPlan plan = new TrainingPlan(BUDGET, 0.02, List.of(beyond, row(20, 1.3, 80)));
        assertTrue(beyond.samplesBeyondBound());
        assertEquals(20, plan.recommended());
        assertTrue(plan.reason().contains("passed over T = 10"), plan.reason());
        assertTrue(plan.toString().contains("30.0% of samples beyond the training range"), plan.toString());
        TrainingPlan all = new TrainingPlan(BUDGET, 0.02, List.of(beyond));
        assertEquals(10, all.recommended());
        assertTrue(all.reason().contains("the samples of every model lay beyond the training range"), all.reason());
    }
}
