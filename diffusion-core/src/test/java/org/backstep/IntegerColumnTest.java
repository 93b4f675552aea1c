package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import org.apache.commons.math3.distribution.PascalDistribution;
import org.apache.commons.math3.distribution.PoissonDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.report.BoundReport;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * An integer column of Poisson counts (drawn with commons-math3, mean 3) beside a continuous
 * reading that rises with the count: the integer column's decoder is the discretized Gaussian of
 * Ho et al. 2020 (eq. 13), so its part of the bound is a probability mass, compared with the exact
 * mass of the Poisson fitted to the training counts (commons-math3 PoissonDistribution).
 */
class IntegerColumnTest {

    private static final double RATE = 3.0;
    /**
     * The model's held-out bound of the counts may exceed the fitted Poisson's exact NLL by this much
     * (nats per record): a regression guard, not a target met. Measured: 3.08 against 1.91 at 200
     * epochs, and 3.11 at 600, so more training of this small network does not close the gap. Nearly
     * all of it lies in the steps just above the decoder (the term of t = 2 alone is 0.93 nats): there
     * x_t sits within a bin of its integer, and the network must predict epsilon as a sawtooth of x_t
     * with the bins' period to match the narrow posterior, which it does not learn at this size.
     */
    private static final double MASS_MARGIN = 1.5;
    /** A probability mass of a discrete variable is at most 1: the bound is at least the entropy, less noise. */
    private static final double BELOW_ENTROPY = 0.05;

    private static Table train;
    private static Table test;
    private static DiffusionModel model;

    static Table counts(int n, long seed) {
        PoissonDistribution p = new PoissonDistribution(new Well19937c(seed), RATE,
                PoissonDistribution.DEFAULT_EPSILON, PoissonDistribution.DEFAULT_MAX_ITERATIONS);
        double[][] rows = new double[n][1];
        for (double[] r : rows) {
            r[0] = p.sample();
        }
        return Table.of(List.of("openings"), List.of(ColumnKind.INTEGER), rows);
    }

    @BeforeAll
    static void fit() {
        train = counts(1500, 1);
        test = counts(500, 2);
        model = Backstep.builder().steps(50).hidden(32, 32).batchSize(100).epochs(200).learningRate(5e-3)
                .threads(2).seed(4).fit(train);
    }

    @Test
    void scoreIsAProbabilityMassBesideTheFittedPoisson() {
        double lambda = java.util.Arrays.stream(train.column(0)).average().orElseThrow();
        PoissonDistribution fitted = new PoissonDistribution(lambda);
        double poissonNll = 0;
        for (double v : test.column(0)) {
            poissonNll -= fitted.logProbability((int) v) / test.rows();
        }
        BoundReport bound = model.bound(test, 3);
        // no change of variables for a mass: original units and model space agree
        assertArrayEquals(bound.nats(), bound.natsOriginalUnits(), 1e-12);
        double nats = bound.meanNats();
        assertTrue(nats > poissonNll - BELOW_ENTROPY && nats < poissonNll + MASS_MARGIN, "held-out bound " + nats
                + " nats per record; the fitted Poisson's exact NLL " + poissonNll);
    }

    /**
     * Overdispersed counts (negative binomial, r = 2, p = 0.4: mean 3, variance 7.5, drawn with
     * commons-math3's PascalDistribution) against the exact mass of the negative binomial fitted to
     * the training counts: r over 1..20 by maximum likelihood, p = r / (r + mean) (the maximum-likelihood
     * p for a given r). Measured: bound 2.87 nats per record against the fitted negative binomial's 2.22
     * (r = 2) and the Poisson's 2.49.
     */
    @Test
    void overdispersedCountsBesideTheFittedNegativeBinomial() {
        PascalDistribution truth = new PascalDistribution(new Well19937c(8), 2, 0.4);
        double[][] rows = new double[2000][1];
        for (double[] r : rows) {
            r[0] = truth.sample();
        }
        Table all = Table.of(List.of("openings"), List.of(ColumnKind.INTEGER), rows);
        Table nbTrain = all.filterRows(i -> i % 4 != 0);
        Table nbTest = all.filterRows(i -> i % 4 == 0);
        double mean = java.util.Arrays.stream(nbTrain.column(0)).average().orElseThrow();
        PascalDistribution best = null;
        double bestLl = Double.NEGATIVE_INFINITY;
        for (int r = 1; r <= 20; r++) {
            PascalDistribution nb = new PascalDistribution(r, r / (r + mean));
            double ll = 0;
            for (double v : nbTrain.column(0)) {
                ll += nb.logProbability((int) v);
            }
            if (ll > bestLl) {
                bestLl = ll;
                best = nb;
            }
        }
        double nbNll = 0;
        double poissonNll = 0;
        PoissonDistribution poisson = new PoissonDistribution(mean);
        for (double v : nbTest.column(0)) {
            nbNll -= best.logProbability((int) v) / nbTest.rows();
            poissonNll -= poisson.logProbability((int) v) / nbTest.rows();
        }
        assertTrue(nbNll < poissonNll, "the negative binomial fits overdispersed counts better than the Poisson");
        DiffusionModel m = Backstep.builder().steps(50).hidden(32, 32).batchSize(100).epochs(200).learningRate(5e-3)
                .threads(2).seed(4).fit(nbTrain);
        double nats = m.bound(nbTest, 3).meanNats();
        assertTrue(nats > nbNll - BELOW_ENTROPY && nats < nbNll + MASS_MARGIN, "held-out bound " + nats
                + " nats per record; the fitted negative binomial's exact NLL " + nbNll + " (r = "
                + best.getNumberOfSuccesses() + "), the Poisson's " + poissonNll);
    }

    @Test
    void samplesAndImputationsAreCounts(@TempDir Path dir) throws IOException {
        Table sample = model.sample(300, 5);
        double mean = 0;
        for (int r = 0; r < sample.rows(); r++) {
            double v = sample.get(r, 0);
            assertTrue(v == Math.rint(v) && v >= 0, "sampled count " + v);
            mean += v / sample.rows();
        }
        // the mean of 300 Poisson(3) draws lies within 4 standard errors of 3 (common practice, no source)
        assertEquals(RATE, mean, 4 * Math.sqrt(RATE / 300));
        double[][] gap = {{Double.NaN}, {2}};
        Imputation imp = model.impute(Table.of(List.of("openings"), List.of(ColumnKind.INTEGER), gap),
                Defaults.imputation().withDraws(20), 6);
        for (Table t : imp.draws()) {
            double v = t.get(0, 0);
            assertTrue(v == Math.rint(v) && v >= 0, "imputed count " + v);
        }
        Path f = dir.resolve("counts.backstep");
        model.save(f);
        DiffusionModel back = DiffusionModel.load(f);
        assertEquals(model.transform(), back.transform());
        assertEquals(model.transform().lowest(), java.util.Map.of("openings", 0L));
        assertArrayEquals(model.bound(test, 3).nats(), back.bound(test, 3).nats());
    }
}
