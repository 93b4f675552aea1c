package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.option.Marginals;
import org.backstep.option.StepInput;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.training.EpochRecord;
import org.backstep.training.TrainingProgress;
import org.junit.jupiter.api.Test;

/**
 * Early stopping ({@code patience}, {@link Defaults#PATIENCE}): a run stops after P checkpoint
 * evaluations without a lower score and keeps the best weights. Training is deterministic and the
 * learning-rate schedule depends on the planned updates only, so a run with patience P follows the
 * run without it update for update until it stops; where that run's best evaluation comes before the
 * stop, both keep the same weights, bit for bit. These tests derive the stop from the full run's
 * history and check the stopped run against it (common practice, no source: early stopping on a
 * held-out score, as in Prechelt 1998, "Early stopping - but when?", the rule "stop after P
 * evaluations without improvement").
 */
class EarlyStoppingTest {

    private static Table table(int rows, int seed) {
        double[][] sigma = {{1.0, 0.8, 0.3}, {0.8, 1.0, 0.5}, {0.3, 0.5, 1.0}};
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), new double[3], sigma);
        double[][] x = new double[rows][];
        for (int i = 0; i < rows; i++) {
            x[i] = g.sample();
            x[i][2] = Math.exp(x[i][2]); // a skewed column, so that the network has something to learn
        }
        return Table.of(List.of("a", "b", "c"), Collections.nCopies(3, ColumnKind.CONTINUOUS), x);
    }

    private static Backstep.Builder builder() {
        // a wide network, a high step size and few rows: overfits within a few epochs; standardized maps, so that
        // one fit is made (the chosen maps' comparison of two fits would keep either, stopped or not)
        return Backstep.builder().marginals(Marginals.STANDARDIZED).steps(20).hidden(64, 64).timeEmbedding(8, StepInput.INPUT).epochs(40).batchSize(8)
                .learningRate(1e-2).evaluateEvery(1).threads(1).seed(3L);
    }

    private static List<Double> curve(DiffusionModel m) {
        List<Double> out = new ArrayList<>();
        for (EpochRecord r : m.history()) {
            out.add(r.checkpointBound().orElseThrow());
        }
        return out;
    }

    /** The 1-based epoch at which a run with this patience stops, or the last epoch. */
    private static int stopEpoch(List<Double> full, int patience) {
        double best = Double.POSITIVE_INFINITY;
        int since = 0;
        for (int i = 0; i < full.size(); i++) {
            if (full.get(i) < best) {
                best = full.get(i);
                since = 0;
            } else if (++since >= patience) {
                return i + 1;
            }
        }
        return full.size();
    }

    @Test
    void aStoppedRunFollowsTheFullRunAndKeepsItsBestWeights() {
        Table train = table(40, 5);
        Table checkpoint = table(40, 6);
        DiffusionModel full = builder().patience(0).fit(train, checkpoint);
        List<Double> fullCurve = curve(full);
        assertEquals(40, fullCurve.size());
        // the curve first rises (the first updates at this step size leave the closed-form part's start) and
        // wanders before its least figure, so a short patience would stop before it; 12 waits for it
        int patience = 12;
        int stop = stopEpoch(fullCurve, patience);
        int best = fullCurve.indexOf(Collections.min(fullCurve)) + 1;
        // the fixture must overfit, or nothing here is tested
        assertTrue(stop < 40, "the full run's curve never rose for " + patience + " evaluations: " + fullCurve);
        assertTrue(best <= stop, "best epoch " + best + ", stop " + stop + ": " + fullCurve);

        List<TrainingProgress> heard = new ArrayList<>();
        DiffusionModel stopped = builder().patience(patience).listener(heard::add).fit(train, checkpoint);
        List<Double> stoppedCurve = curve(stopped);
        assertEquals(stop, stoppedCurve.size(), "epochs run");
        assertEquals(fullCurve.subList(0, stop), stoppedCurve, "the same run, update for update, until the stop");
        assertTrue(stopped.provenance().notes().stream().anyMatch(n -> n.startsWith("stopped early at epoch " + stop)),
                stopped.provenance().notes().toString());
        // the plan ends at the stop, so that a progress bar completes: the last report's totals are its own
        // steps and epochs (5 minibatches of 8 rows per epoch), and before it the totals were the planned ones
        TrainingProgress lastHeard = heard.get(heard.size() - 1);
        assertEquals(stop * 5L, lastHeard.step());
        assertEquals(lastHeard.step(), lastHeard.totalSteps());
        assertEquals(stop, lastHeard.epoch());
        assertEquals(stop, lastHeard.epochs());
        assertEquals(0.0, lastHeard.secondsLeft());
        assertEquals(40 * 5L, heard.get(heard.size() - 2).totalSteps());
        // the same kept weights: the same exact bound and the same samples, bit for bit
        assertArrayEquals(full.bound(checkpoint, 9L).nats(), stopped.bound(checkpoint, 9L).nats());
        assertArrayEquals(full.sample(16, 4L).toArray(), stopped.sample(16, 4L).toArray());
    }

    @Test
    void patienceZeroNeverStops() {
        Table train = table(40, 5);
        DiffusionModel m = builder().epochs(12).patience(0).fit(train, table(40, 6));
        assertEquals(12, m.history().size());
        assertTrue(m.provenance().notes().stream().noneMatch(n -> n.startsWith("stopped early")));
    }

    @Test
    void negativePatienceIsRefusedByName() {
        // the project's rule that bad input is refused by name (common practice, no source)
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> builder().patience(-1).fit(table(40, 5)));
        assertTrue(e.getMessage().contains("patience"), e.getMessage());
    }
}
