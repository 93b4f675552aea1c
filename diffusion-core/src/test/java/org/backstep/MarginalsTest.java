package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.List;
import java.util.Set;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.internal.chain.ModelParts;
import org.backstep.option.ImputationOptions;
import org.backstep.option.Marginals;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The maps of the real continuous columns chosen at fit time ({@link Marginals}): skewed columns get
 * normal scores and a density in the caller's units, Gaussian columns keep standardization, the
 * choice is deterministic and recorded, and the paths that make no choice make none.
 */
class MarginalsTest {

    /** Correlation of the Gaussian copula behind the skewed columns. */
    private static final double[][] SIGMA = {{1, 0.6, 0.3}, {0.6, 1, 0.2}, {0.3, 0.2, 1}};
    /** The skewed marginal: 0.7 N(0, 0.5^2) + 0.3 N(3, 1), scaled by SCALE (skewness about 1, two modes, normal tails). */
    private static final double[] WEIGHT = {0.7, 0.3};
    private static final NormalDistribution[] PARTS = {new NormalDistribution(0, 0.5), new NormalDistribution(3, 1)};
    private static final double[] SCALE = {100.0, 0.5};
    private static final NormalDistribution STANDARD = new NormalDistribution();
    /**
     * A short fit's held-out bound above the true density: the copula's kernel-smoothed marginals and
     * correlation estimated from 400 rows and the bound's gap with a briefly trained network
     * (measured 0.15 to 0.3 nats; common practice, no source for the margin).
     */
    private static final double SHORT_FIT_EXCESS = 0.5;

    private static double mixtureCdf(double y) {
        return WEIGHT[0] * PARTS[0].cumulativeProbability(y) + WEIGHT[1] * PARTS[1].cumulativeProbability(y);
    }

    private static double mixtureDensity(double y) {
        return WEIGHT[0] * PARTS[0].density(y) + WEIGHT[1] * PARTS[1].density(y);
    }

    /** The mixture's quantile by bisection on its distribution function (to 1e-12). */
    private static double mixtureQuantile(double p) {
        double lo = -10;
        double hi = 15;
        while (hi - lo > 1e-12) {
            double mid = 0.5 * (lo + hi);
            if (mixtureCdf(mid) < p) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        return 0.5 * (lo + hi);
    }

    /**
     * Rows of a Gaussian copula (Liu, Lafferty &amp; Wasserman 2009) with correlation SIGMA: columns a and
     * b are the skewed mixture (scaled by 100 and 0.5), c is normal.
     */
    private static Table skewedRows(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), new double[3], SIGMA);
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            double[] u = g.sample();
            rows[i] = new double[] {SCALE[0] * mixtureQuantile(STANDARD.cumulativeProbability(u[0])),
                SCALE[1] * mixtureQuantile(STANDARD.cumulativeProbability(u[1])), u[2]};
        }
        return Table.of(List.of("a", "b", "c"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.CONTINUOUS), rows);
    }

    /**
     * -log p(x) of the true density: the copula density of u_j = Phi^-1(G(x_j / s_j)) times the
     * marginal densities g(x_j / s_j) / s_j (Sklar's theorem; Liu et al. 2009, eq. 2).
     */
    private static double trueNats(double[] x) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new double[3], SIGMA);
        double[] u = new double[3];
        double marginals = 0;
        for (int j = 0; j < 2; j++) {
            double y = x[j] / SCALE[j];
            u[j] = STANDARD.inverseCumulativeProbability(mixtureCdf(y));
            marginals += Math.log(mixtureDensity(y) / SCALE[j]) - Math.log(STANDARD.density(u[j]));
        }
        u[2] = x[2];
        return -Math.log(g.density(u)) - marginals;
    }

    private static Backstep.Builder shortFit() {
        return Backstep.builder().steps(20).hidden(32, 32).trainingSteps(300).seed(4).threads(2);
    }

    /** Rows of a 6-D normal with correlated columns, named x0..x5 (drawn by {@link ScreeningCases#gaussianRows}). */
    private static Table gaussianRows(int n, long seed) {
        int d = 6;
        double[][] cov = new double[d][d];
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                cov[a][b] = a == b ? 1.0 + 0.1 * a : 0.4 * Math.pow(0.7, Math.abs(a - b));
            }
        }
        return ScreeningCases.gaussianRows(n, seed, new double[d], cov, -1, 0.0);
    }

    @Test
    void skewedBimodalColumnsGetNormalScoresAndTheDensityIsInTheCallersUnits() {
        Table train = skewedRows(400, 1);
        Table test = skewedRows(300, 2);
        List<long[]> heard = new java.util.ArrayList<>();
        DiffusionModel model = shortFit().steps(100)
                .listener(p -> heard.add(new long[] {p.step(), p.totalSteps(), p.epoch(), p.epochs()})).fit(train);
        // the listener hears the two fits as one plan: steps rise to the planned total, which covers both
        // fits from the first report on (2 x 300 updates) and shrinks only where a run stops early (default
        // patience), so that the last report completes the plan (common practice, no source: a progress
        // bar's contract)
        assertEquals(600, heard.get(0)[1]);
        for (int i = 1; i < heard.size(); i++) {
            assertTrue(heard.get(i)[0] > heard.get(i - 1)[0], "step " + i);
            assertTrue(heard.get(i)[0] <= heard.get(i)[1] && heard.get(i)[2] <= heard.get(i)[3], "progress " + i);
            assertTrue(heard.get(i)[1] <= heard.get(i - 1)[1] && heard.get(i)[3] <= heard.get(i - 1)[3], "plan " + i);
        }
        long[] last = heard.get(heard.size() - 1);
        assertEquals(last[1], last[0]);
        assertEquals(last[3], last[2]);
        TableTransform t = model.transform();
        assertEquals(ColumnTransform.Kind.NORMAL_SCORES, t.transform(0).kind(), model.provenance().notes().toString());
        assertEquals(ColumnTransform.Kind.NORMAL_SCORES, t.transform(1).kind(), t.toString());
        List<String> notes = model.provenance().notes();
        assertTrue(notes.stream().anyMatch(n -> n.startsWith("marginals CHOSEN: cross-validated")), notes.toString());
        assertTrue(notes.stream().anyMatch(n -> n.startsWith("marginals CHOSEN: exact bound")
                && n.contains("normal scores kept")), notes.toString());
        assertEquals(Marginals.CHOSEN, model.options().marginals());
        double[] nats = model.bound(test, 3).natsOriginalUnits();
        double model1 = 0;
        double truth = 0;
        for (int r = 0; r < test.rows(); r++) {
            model1 += nats[r] / test.rows();
            truth += trueNats(test.row(r)) / test.rows();
        }
        // the bound in original units against the exact density (commons-math3's normal densities,
        // Sklar's theorem): a bound, so above the truth up to the test rows' noise, and within the short
        // fit's excess; without the maps' log-Jacobian it would be off by about log 100 + log 0.5 = 3.9 nats
        assertTrue(model1 > truth - 0.1 && model1 < truth + SHORT_FIT_EXCESS, "model " + model1 + ", truth " + truth);
    }

    @Test
    void gaussianColumnsKeepStandardization() {
        Table train = gaussianRows(400, 7);
        DiffusionModel model = shortFit().trainingSteps(20).fit(train);
        // Gaussian columns: the standardized maps are already their exact marginals, so normal scores
        // cannot gain the criterion's 0.05 nats (Marginals.CHOSEN Javadoc contract; common practice, no source)
        for (ColumnTransform c : model.transform().transforms()) {
            assertEquals(ColumnTransform.Kind.STANDARDIZE, c.kind(), model.transform().toString());
        }
        assertTrue(model.provenance().notes().stream().anyMatch(n -> n.contains("standardized maps taken")),
                model.provenance().notes().toString());
    }

    @Test
    void sameSeedSameChoiceSameBits(@TempDir Path dir) throws Exception {
        Table train = skewedRows(150, 3);
        Table test = skewedRows(20, 4);
        DiffusionModel a = shortFit().trainingSteps(40).fit(train);
        DiffusionModel b = shortFit().trainingSteps(40).fit(train);
        // same seed, same choice, same bits (the project's determinism rule; common practice, no source)
        assertEquals(a.transform(), b.transform());
        assertArrayEquals(a.bound(test, 1).natsOriginalUnits(), b.bound(test, 1).natsOriginalUnits());
        // the model file keeps the knots and the option; the reloaded model scores the same bits
        // (Marginals Javadoc contract; common practice, no source)
        Path file = dir.resolve("chosen.zip");
        a.save(file);
        DiffusionModel loaded = DiffusionModel.load(file);
        assertEquals(a.transform(), loaded.transform());
        assertEquals(Marginals.CHOSEN, loaded.options().marginals());
        assertArrayEquals(a.bound(test, 1).natsOriginalUnits(), loaded.bound(test, 1).natsOriginalUnits());
        // imputation and sampling decode the normal scores back to the caller's units
        Table sample = a.sample(50, 5);
        for (int r = 0; r < sample.rows(); r++) {
            // the kernel-smoothed map's support is the whole line, so a draw may fall below 0: finite is the
            // check (Marginals Javadoc contract; common practice, no source)
            assertTrue(Double.isFinite(sample.get(r, 0)) && Double.isFinite(sample.get(r, 1)), "row " + r);
        }
        double[][] masked = test.toArray();
        masked[0][0] = Double.NaN;
        double imputed = a.impute(Table.of(test.names(), test.kinds(), masked), 6).mean().get(0, 0);
        // decoded to the caller's units, a finite value (Marginals Javadoc contract; common practice, no source)
        assertTrue(Double.isFinite(imputed), "imputed " + imputed);
    }

    @Test
    void normalScoreRowsDecodeToTheSameBitsOnAnyThreadCount() {
        Table train = skewedRows(150, 8);
        Table test = skewedRows(130, 9);
        // more rows than one chunk of the parallel decoding (64), so that several threads decode them
        DiffusionModel three = shortFit().trainingSteps(20).marginals(Marginals.NORMAL_SCORES).threads(3).fit(train);
        // the same parts with the options of one thread (training itself depends on the thread count)
        DiffusionModel one = DiffusionModel.of(new ModelParts(
                shortFit().trainingSteps(20).marginals(Marginals.NORMAL_SCORES).threads(1).options(), three.transform(),
                three.parts().network(), three.parts().estimator(), three.parts().provenance(), three.parts().range(),
                three.parts().whitening()));
        double[][] masked = test.toArray();
        for (int r = 0; r < masked.length; r++) {
            masked[r][r % 2] = Double.NaN;
        }
        Table gappy = Table.of(test.names(), test.kinds(), masked);
        ImputationOptions how = Defaults.imputation().withDraws(3);
        // the result does not depend on the thread count (the project's determinism rule; common practice, no source)
        assertArrayEquals(one.sample(150, 5).toArray(), three.sample(150, 5).toArray());
        Imputation a = one.impute(gappy, how, 6);
        Imputation b = three.impute(gappy, how, 6);
        assertArrayEquals(a.mean().toArray(), b.mean().toArray());
        for (int k = 0; k < 3; k++) {
            assertArrayEquals(a.draws().get(k).toArray(), b.draws().get(k).toArray());
        }
        // observed cells come back exactly as given (Imputer copies them from the records, so this guards the
        // contract, not the masking), missing ones decoded (ImputationOptions Javadoc; common practice, no source)
        for (int r = 0; r < masked.length; r++) {
            assertEquals(test.get(r, 1 - r % 2), a.mean().get(r, 1 - r % 2), 0.0, "row " + r);
            assertTrue(Double.isFinite(a.mean().get(r, r % 2)), "row " + r);
        }
    }

    @Test
    void givenTransformsAndStandardizedMapsMakeNoChoice() {
        Table train = skewedRows(150, 5);
        TableTransform given = TableTransform.fit(train, Set.of());
        DiffusionModel m = shortFit().trainingSteps(10).fit(train, given);
        // given transforms are used as given, STANDARDIZED standardizes, log columns stay log-standardized
        // and NORMAL_SCORES fits once (Marginals and Builder.marginals Javadoc contract; common practice, no source)
        assertEquals(given, m.transform());
        assertTrue(m.provenance().notes().stream().noneMatch(n -> n.startsWith("marginals")));
        DiffusionModel s = shortFit().trainingSteps(10).marginals(Marginals.STANDARDIZED).fit(train);
        assertEquals(ColumnTransform.Kind.STANDARDIZE, s.transform().transform(0).kind());
        DiffusionModel logs = shortFit().trainingSteps(10).logColumns("a").fit(train);
        assertEquals(ColumnTransform.Kind.LOG_STANDARDIZE, logs.transform().transform(0).kind());
        assertEquals(ColumnTransform.Kind.NORMAL_SCORES, logs.transform().transform(1).kind());
        // only the criterion decides for NORMAL_SCORES: one fit, no comparison
        DiffusionModel scores = shortFit().trainingSteps(10).marginals(Marginals.NORMAL_SCORES).fit(train);
        assertEquals(ColumnTransform.Kind.NORMAL_SCORES, scores.transform().transform(2).kind());
        assertTrue(scores.provenance().notes().stream().noneMatch(n -> n.contains("exact bound")));
    }

    @Test
    void denoisingNamesTheBuilderOption() {
        Table train = skewedRows(150, 6);
        DiffusionModel m = shortFit().trainingSteps(10).marginals(Marginals.NORMAL_SCORES).fit(train);
        String message = assertThrows(IllegalArgumentException.class,
                () -> m.denoise(train.selectRows(new int[] {0, 1}), Defaults.denoising(0.1, 0.1, 0.1), 1)).getMessage();
        assertTrue(message.contains("marginals(Marginals.STANDARDIZED)"), message);
        assertTrue(assertThrows(IllegalArgumentException.class, () -> Backstep.builder().marginals(null))
                .getMessage().contains("marginals"));
    }
}
