package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

import org.backstep.internal.chain.Estimator;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.store.ModelFile;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.report.BoundReport;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * The closed-form part ({@link Baseline}) on a mixed table: two continuous columns, an integer
 * count, a binary flag and a categorical column (invented container readings: supply and return
 * temperatures whose level depends on one of three sites, door openings per hour, a defrost flag).
 * The baseline acts on the continuous and integer model columns only; the model-space rows are
 * [continuous, integer | binary | category index], the network's input one-hot. Fits, bounds,
 * samples, saves and loads with each baseline; the exact bound's control variate is checked
 * against the plain exact bound on the same draws. Common practice, no source.
 */
class MixedBaselineTest {

    private static final List<String> SITES = List.of("dock", "yard", "ship");
    private static final List<String> NAMES = List.of("supply_c", "return_c", "openings", "defrost", "site");

    static Table containers(int n, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] rows = new double[n][5];
        for (int r = 0; r < n; r++) {
            int site = rng.nextInt(3);
            double supply = 2.0 + 1.5 * site + 0.6 * rng.nextGaussian();
            rows[r][0] = supply;
            rows[r][1] = supply + 1.0 + 0.3 * rng.nextGaussian();
            rows[r][2] = Math.min(12, (int) Math.floor(-Math.log(1.0 - rng.nextDouble()) * (1.0 + site)));
            rows[r][3] = rng.nextDouble() < 0.2 + 0.2 * site ? 1 : 0;
            rows[r][4] = site;
        }
        return Table.of(NAMES, List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.INTEGER,
                ColumnKind.BINARY, ColumnKind.CATEGORICAL), Map.of("site", SITES), rows);
    }

    private static DiffusionModel fit(Baseline baseline) {
        return Backstep.builder().steps(30).hidden(16, 16).batchSize(50).epochs(15).threads(2).seed(7)
                .baseline(baseline).fit(containers(300, 1));
    }

    @ParameterizedTest
    @EnumSource(value = Baseline.class, names = {"STANDARD_NORMAL", "FITTED_GAUSSIAN"})
    void fitsScoresSamplesAndRoundTripsWithCategoricalColumns(Baseline baseline, @TempDir Path dir) throws IOException {
        DiffusionModel model = fit(baseline);
        assertEquals(baseline, model.options().baseline());
        GaussianBaseline part = model.parts().baseline();
        assertNotNull(part, "a baseline over the continuous columns");
        // supply, return and the integer count are the continuous model columns; the flag and the site are not
        assertEquals(3, part.continuousColumns());
        assertEquals(3, model.transform().modelledContinuous().length);

        // the same fit twice gives the same bits (determinism)
        DiffusionModel again = fit(baseline);
        Table records = containers(40, 9);
        BoundReport bound = model.bound(records, BoundOptions.exact(), 3);
        assertArrayEquals(bound.nats(), again.bound(records, BoundOptions.exact(), 3).nats(), 0.0);
        assertArrayEquals(bound.nats(), model.bound(records, BoundOptions.exact(), 3).nats(), 0.0);
        for (int r = 0; r < records.rows(); r++) {
            assertTrue(Double.isFinite(bound.nats()[r]), "row " + r + ": " + bound.nats()[r]);
        }

        // samples: every category one of the labels' indices, every count a whole number >= 0, flags 0/1
        Table samples = model.sample(200, 4);
        assertEquals(samples, again.sample(200, 4));
        for (int r = 0; r < samples.rows(); r++) {
            double site = samples.get(r, 4);
            assertTrue(site == Math.rint(site) && site >= 0 && site < SITES.size(), "row " + r + " site " + site);
            double openings = samples.get(r, 2);
            assertTrue(openings == Math.rint(openings) && openings >= 0, "row " + r + " openings " + openings);
            double flag = samples.get(r, 3);
            assertTrue(flag == 0.0 || flag == 1.0, "row " + r + " defrost " + flag);
            assertTrue(Double.isFinite(samples.get(r, 0)) && Double.isFinite(samples.get(r, 1)), "row " + r);
        }

        // save, load: the same numbers; saved again, the same entries byte for byte
        Path f = dir.resolve("m.backstep");
        model.save(f);
        DiffusionModel back = DiffusionModel.load(f);
        assertEquals(baseline, back.options().baseline());
        assertEquals(model.transform(), back.transform());
        assertArrayEquals(bound.nats(), back.bound(records, BoundOptions.exact(), 3).nats(), 0.0);
        assertEquals(samples, back.sample(200, 4));
        Path f2 = dir.resolve("again.backstep");
        back.save(f2);
        Map<String, byte[]> first = ModelFileTest.entries(f);
        Map<String, byte[]> second = ModelFileTest.entries(f2);
        assertEquals(first.keySet(), second.keySet());
        for (String name : first.keySet()) {
            assertArrayEquals(first.get(name), second.get(name), name);
        }
        String manifest = new String(first.get(ModelFile.MANIFEST), java.nio.charset.StandardCharsets.UTF_8);
        assertTrue(manifest.contains("\"baseline\" : \"" + baseline.name() + "\""), "option in the manifest");
        assertEquals(baseline == Baseline.FITTED_GAUSSIAN, manifest.contains("\"gaussianBaseline\""));
        assertTrue(manifest.contains("\"categories\" : [ \"dock\", \"yard\", \"ship\" ]"), "labels in the manifest");
    }

    /**
     * The control variate changes the noise of the exact bound, not its expectation: on the same
     * draws (it draws nothing of its own), the bound with it minus the bound without it is
     * -L_lin(x_t) + E[L_lin] summed over steps, zero-mean per record. Over 1,500 records its mean
     * must lie within 4 standard errors of 0 (a normal-theory check; common practice, no source).
     * An integer column's decoder term, a discretized mass, is left out of the control variate;
     * taking its expectation as a Gaussian density biased the mean (measured when it did: -1.4
     * nats, 30 standard errors, on both baselines).
     * And per-row seeds: a record scored in a batch draws as it does alone.
     */
    @ParameterizedTest
    @EnumSource(value = Baseline.class, names = {"STANDARD_NORMAL", "FITTED_GAUSSIAN"})
    void theControlVariateKeepsTheExactBoundsExpectation(Baseline baseline) {
        DiffusionModel model = fit(baseline);
        Estimator own = model.parts().estimator();
        Estimator hidden = new Estimator() {
            @Override
            public int inputs() {
                return own.inputs();
            }

            @Override
            public int outputs() {
                return own.outputs();
            }

            @Override
            public void predict(INDArray xt, int[] steps, INDArray out) {
                own.predict(xt, steps, out);   // the same predictions, baseline() null: no control variate
            }
        };
        // the model's own parts (its default whitening included) over the estimator without a baseline
        DiffusionModel plain = DiffusionModel.of(new org.backstep.internal.chain.ModelParts(model.options(),
                model.transform(), null, hidden, model.provenance(), model.parts().range(), model.parts().whitening()));
        Table records = containers(1500, 21);
        double[] with = model.bound(records, BoundOptions.exact(), 5).nats();
        double[] without = plain.bound(records, BoundOptions.exact(), 5).nats();
        double[] diff = new double[with.length];
        for (int r = 0; r < with.length; r++) {
            diff[r] = with[r] - without[r];
        }
        // mean and sample sd by commons-math3's StatUtils
        double mean = org.apache.commons.math3.stat.StatUtils.mean(diff);
        double sd = Math.sqrt(org.apache.commons.math3.stat.StatUtils.variance(diff));
        double se = sd / Math.sqrt(with.length);
        assertTrue(Math.abs(mean) < 4.0 * se + 1e-9, "mean difference " + mean + " nats, standard error " + se);
        assertTrue(sd > 0.0, "the control variate changes the draws' noise");

        long[] seeds = {11L, -3L, 987654321L};
        Table three = records.selectRows(new int[] {0, 1, 2});
        double[] batch = model.bound(three, BoundOptions.exact(), seeds).nats();
        for (int i = 0; i < 3; i++) {
            double alone = model.bound(records.selectRows(new int[] {i}), BoundOptions.exact(), new long[] {seeds[i]})
                    .nats()[0];
            // RowSeedBoundTest.PLACE_ROUNDING: the float32 network rounds with a row's place in the batch
            assertEquals(alone, batch[i], RowSeedBoundTest.PLACE_ROUNDING * Math.max(1.0, Math.abs(alone)), "record " + i);
        }
    }
}
