package org.backstep;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.MersenneTwister;
import org.backstep.option.Conditioning;
import org.backstep.option.Coordinates;
import org.backstep.option.ImputationOptions;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The default whitened coordinates with training rows that miss cells (the mean and covariance by
 * EM, the gaps drawn from the fitted Gaussian's conditional at every use), and the defaults'
 * interactions: tables with zero or one real continuous column, the kernel-product conditioning.
 */
class WhitenedGapsTest {

    private static final double[] MU = {0.0, 1.0, -0.5};
    private static final double[][] SIGMA = {{1.0, 0.8, 0.3}, {0.8, 1.0, 0.5}, {0.3, 0.5, 1.0}};
    /**
     * Mean bounds over 400 held-out records of two fits that differ by the hidden cells (see the test;
     * measured 0.0065 apart).
     */
    private static final double FIT_AGREEMENT = 0.05;
    /**
     * A barely trained default model against the true density: the Gaussian fitted on 800 rows plus the
     * bound's gap (measured 0.012 above).
     */
    private static final double TRUE_DENSITY = 0.1;

    private static double[][] draws(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new MersenneTwister(seed), MU, SIGMA);
        double[][] rows = new double[n][];
        for (int r = 0; r < n; r++) {
            rows[r] = g.sample();
        }
        return rows;
    }

    private static Table table(double[][] rows) {
        return Table.of(rows, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS);
    }

    /** 30% of the rows lose one cell, at random (completely at random, seeded). */
    private static double[][] hide(double[][] rows, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] out = new double[rows.length][];
        for (int r = 0; r < rows.length; r++) {
            out[r] = rows[r].clone();
            if (rng.nextDouble() < 0.3) {
                out[r][rng.nextInt(3)] = Double.NaN;
            }
        }
        return out;
    }

    private static Backstep.Builder short20() {
        return Backstep.builder().steps(20).hidden(16).trainingSteps(300).seed(3).threads(2);
    }

    @Test
    void aDefaultFitOnRowsWithGapsIsDeterministicAndNearTheFitWithout() {
        double[][] full = draws(800, 21);
        Table gappy = table(hide(full, 22));
        Table held = table(draws(400, 23));
        DiffusionModel a = short20().fit(gappy);
        DiffusionModel b = short20().fit(gappy);
        DiffusionModel complete = short20().fit(table(full));
        assertEquals(Coordinates.WHITENED, a.options().coordinates());
        // common practice, no source: the provenance counts the rows with gaps and says how they were used
        assertTrue(a.provenance().rowsWithGaps() > 150, "rows with gaps " + a.provenance().rowsWithGaps());
        assertTrue(a.provenance().notes().stream().anyMatch(n -> n.contains("by EM for the normal with missing cells")),
                () -> "notes " + a.provenance().notes());
        // the project's determinism rule: same seed, same model, same numbers
        assertArrayEquals(a.bound(held, 5).nats(), b.bound(held, 5).nats());
        double withGaps = a.bound(held, 5).meanNats();
        double without = complete.bound(held, 5).meanNats();
        // common practice, no source: with a third of the rows missing one cell of three the EM estimate
        // moves by about its standard error, which moves the fitted Gaussian's mean log density by ~0.02
        assertEquals(without, withGaps, FIT_AGREEMENT, "with gaps " + withGaps + ", without " + without);
        MultivariateNormalDistribution truth = new MultivariateNormalDistribution(MU, SIGMA);
        double exact = 0.0;
        for (int r = 0; r < held.rows(); r++) {
            exact -= Math.log(truth.density(held.row(r)));
        }
        exact /= held.rows();
        // commons-math3's density of the generating normal; the models are in the standardized space of
        // the training rows, so their nats add sum_j log s_j (the column transforms' scales)
        double logScales = 0.0;
        for (int c = 0; c < 3; c++) {
            logScales += Math.log(a.transform().transform(c).scale());
        }
        assertEquals(exact, withGaps + logScales, TRUE_DENSITY, "bound in data units " + (withGaps + logScales));
    }

    @Test
    void oneRealContinuousColumnWithABinaryOneAndGapsInBoth() {
        SplittableRandom rng = new SplittableRandom(31);
        double[][] rows = new double[300][];
        for (int r = 0; r < rows.length; r++) {
            double bit = rng.nextDouble() < 0.4 ? 1.0 : 0.0;
            rows[r] = new double[] {2.0 * bit + rng.nextGaussian(), bit};
            if (r % 7 == 0) {
                rows[r][0] = Double.NaN;
            } else if (r % 11 == 0) {
                rows[r][1] = Double.NaN;
            }
        }
        Table t = Table.of(rows, ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        DiffusionModel m = short20().fit(t);
        DiffusionModel again = short20().fit(t);
        Table held = Table.of(new double[][] {{0.1, 0.0}, {2.2, 1.0}}, ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        // the project's determinism rule; common practice, no source: finite figures on a one-column whitening
        assertArrayEquals(m.bound(held, 2).nats(), again.bound(held, 2).nats());
        assertTrue(Double.isFinite(m.bound(held, 2).meanNats()));
        assertEquals(1, m.parts().whitening().dimensions());
    }

    @Test
    void noRealContinuousColumnFitsAtTheDefaults() {
        SplittableRandom rng = new SplittableRandom(41);
        double[][] rows = new double[200][];
        for (int r = 0; r < rows.length; r++) {
            double a = rng.nextDouble() < 0.3 ? 1.0 : 0.0;
            rows[r] = new double[] {a, rng.nextDouble() < 0.2 + 0.6 * a ? 1.0 : 0.0};
        }
        rows[5][1] = Double.NaN;
        Table t = Table.of(rows, ColumnKind.BINARY, ColumnKind.BINARY);
        DiffusionModel m = short20().fit(t);
        // common practice, no source: nothing to whiten, so no whitening, and the fit's figures are finite
        assertEquals(null, m.parts().whitening());
        assertTrue(Double.isFinite(m.bound(Table.of(new double[][] {{1, 1}}, ColumnKind.BINARY, ColumnKind.BINARY), 1)
                .meanNats()));
    }

    @Test
    void theKernelProductOnADefaultModelIsRefusedNamingBothOptions() {
        DiffusionModel m = Backstep.builder().steps(20).hidden(8).trainingSteps(20).seed(3).fit(table(draws(80, 51)));
        Table masked = table(new double[][] {{0.2, Double.NaN, 0.1}});
        ImputationOptions product = new ImputationOptions(2, 0.9, 10, 1, Conditioning.KERNEL_PRODUCT);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> m.impute(masked, product, 1));
        // common practice, no source: the refusal names the conditioning, the coordinates and the fix
        assertTrue(e.getMessage().contains("KERNEL_PRODUCT") && e.getMessage().contains("coordinates WHITENED")
                && e.getMessage().contains("coordinates(Coordinates.STANDARDIZED)"), e.getMessage());
        DiffusionModel standardized = Backstep.builder().coordinates(Coordinates.STANDARDIZED).steps(20).hidden(8)
                .trainingSteps(20).seed(3).fit(table(draws(80, 51)));
        assertTrue(Double.isFinite(standardized.impute(masked, product, 1).mean().get(0, 1)));
    }
}
