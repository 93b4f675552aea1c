package org.backstep;

import org.apache.commons.math3.stat.StatUtils;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import org.backstep.report.BoundReport;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * The categorical chain checked with exact reverse kernels (no training): the bound of a known
 * categorical distribution equals its entropy plus the prior mismatch, sampling and imputation
 * give its probabilities, and only valid categories come out.
 */
class CategoricalIdentityTest {

    /** Monte Carlo checks pass within this many standard errors (common practice, no source). */
    private static final double STANDARD_ERRORS = 3.0;
    /** Share tolerance of 4,000 draws: 4 binomial standard errors at p = 1/2 (common practice, no source). */
    private static final double SHARE_TOLERANCE = 4 * Math.sqrt(0.25 / 4000);

    private static final double[] PI = {0.5, 0.25, 0.125, 0.0625, 0.0625};

    /** N rows in the exact proportions PI, category 0 first. */
    private static Table exactTable(int n) {
        double[][] rows = new double[n][1];
        int r = 0;
        for (int c = 0; c < PI.length; c++) {
            for (int i = 0; i < Math.round(n * PI[c]); i++) {
                rows[r++][0] = c;
            }
        }
        return Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k0", "k1", "k2", "k3", "k4")),
                java.util.Arrays.copyOf(rows, r));
    }

    @Test
    void exactKernelsGiveTheEntropy() {
        DiffusionModel model = CategoricalOracle.model(100, PI);
        Table data = exactTable(3200);
        BoundReport report = model.bound(data, 5);
        // Entropy of PI in nats: -sum pi log pi (Cover & Thomas 2006, eq. 2.1); 1.875 bits for these dyadic pi
        double entropy = 0.0;
        for (double p : PI) {
            entropy -= p * Math.log(p);
        }
        assertEquals(1.875 * Math.log(2), entropy, 1e-12);
        // Bound = E[-log q(x_0)] + KL(q(x_T) || Cat(1/K)) for exact reverse kernels (Sohl-Dickstein et al. 2015,
        // eq. 14 with p(x_{t-1} | x_t) = q(x_{t-1} | x_t)); the mismatch is at most the per-cell L_T, about 1e-9 here.
        double prior = model.chain().categorical(0).priorKl();
        assertTrue(prior < 1e-6, "prior term " + prior);
        double[] nats = report.nats();
        double[] gap = new double[nats.length];
        for (int i = 0; i < nats.length; i++) {
            gap[i] = nats[i] + Math.log(PI[(int) data.get(i, 0)]);
        }
        double meanGap = StatUtils.mean(gap);
        double seGap = Math.sqrt(StatUtils.variance(gap)) / Math.sqrt(gap.length);
        assertEquals(0.0, meanGap, STANDARD_ERRORS * seGap + 1e-4,
                "bound minus exact NLL; its standard error " + seGap);
        assertEquals(entropy, report.meanNats(), STANDARD_ERRORS * report.standardErrorOfMean() + 1e-4);
    }

    @Test
    void samplesAndImputationsFollowTheProbabilities() {
        DiffusionModel model = CategoricalOracle.model(100, PI);
        Table sample = model.sample(4000, 3);
        double[] share = new double[PI.length];
        for (int r = 0; r < sample.rows(); r++) {
            double v = sample.get(r, 0);
            assertTrue(v == Math.rint(v) && v >= 0 && v < PI.length, "sampled index " + v);
            share[(int) v] += 1.0 / sample.rows();
        }
        for (int c = 0; c < PI.length; c++) {
            assertEquals(PI[c], share[c], SHARE_TOLERANCE, "share of category " + c + " among samples");
        }
        double[][] missing = new double[1][1];
        missing[0][0] = Double.NaN;
        Table gap = Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k0", "k1", "k2", "k3", "k4")),
                missing);
        Imputation imp = model.impute(gap, Defaults.imputation().withDraws(400), 9);
        double[] shares = imp.categoryShares(0, 0);
        for (int c = 0; c < PI.length; c++) {
            assertEquals(PI[c], shares[c], 4 * Math.sqrt(0.25 / 400), "share of category " + c + " among draws");
        }
        assertEquals("k0", imp.mostLikely(0, 0));
    }

    @Test
    void labelsAreMatchedByTextAndAnUnseenOneIsNamed() {
        DiffusionModel model = CategoricalOracle.model(20, PI);
        Table reordered = Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k4", "k0")),
                new double[][] {{1}, {0}});
        Table same = Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k0", "k1", "k2", "k3", "k4")),
                new double[][] {{0}, {4}});
        assertEquals(model.bound(same, 1).nats()[0], model.bound(reordered, 1).nats()[0], 0.0);
        Table unseen = Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k9")),
                new double[][] {{0}});
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> model.bound(unseen, 1));
        assertTrue(e.getMessage().contains("column 'c'") && e.getMessage().contains("the category 'k9' is not among the 5 categories"), e.getMessage());
        // screening gives an unknown category the score of an unknown category: +infinity, with a note
        Table mixed = Table.of(List.of("c"), List.of(ColumnKind.CATEGORICAL), Map.of("c", List.of("k0", "k9")),
                new double[][] {{0}, {1}});
        org.backstep.report.AnomalyScreen screen = model.screen(same, mixed, 2);
        assertTrue(Double.isFinite(screen.scores()[0]));
        assertEquals(Double.POSITIVE_INFINITY, screen.scores()[1]);
        assertTrue(screen.notesFor(1).get(0).text().contains("the category 'k9' is not among the 5 categories"),
                screen.notesFor(1).toString());
        IllegalArgumentException d = assertThrows(IllegalArgumentException.class,
                () -> model.denoise(same, Defaults.denoising(0.1), 1));
        assertTrue(d.getMessage().contains("'c' is CATEGORICAL"), d.getMessage());
    }
}
