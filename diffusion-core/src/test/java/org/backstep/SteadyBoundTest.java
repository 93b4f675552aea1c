package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.Set;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The steady exact bound ({@link BoundOptions#steady}: shifted Sobol draws of x_t, K per term on
 * average, and the control variates): the same number for the same seed, a seed-to-seed spread below
 * 0.05 nats per record, and the expectation of the plain exact bound (one draw per term), which is
 * the variational bound of Ho et al. 2020, eq. 5. The trained model is the golden format-3 file (a
 * float32 network, T = 20, two continuous columns and a binary one).
 */
class SteadyBoundTest {

    private static DiffusionModel model;
    private static Table records;

    @BeforeAll
    static void load() throws Exception {
        model = DiffusionModel.load(Path.of(SteadyBoundTest.class.getResource("/golden/model-v3.backstep").toURI()));
        records = GoldenModelTest.sensorTable(30, 77);
    }

    /** The root mean square over records of the sd of each record's figure over the seeds 1..seeds. */
    private static double recordSpread(BoundOptions how, int seeds) {
        double[][] nats = new double[seeds][];
        for (int b = 0; b < seeds; b++) {
            nats[b] = model.bound(records, how, b + 1L).nats();
        }
        double squares = 0;
        for (int i = 0; i < records.rows(); i++) {
            double mean = 0;
            for (int b = 0; b < seeds; b++) {
                mean += nats[b][i] / seeds;
            }
            double ss = 0;
            for (int b = 0; b < seeds; b++) {
                ss += (nats[b][i] - mean) * (nats[b][i] - mean);
            }
            squares += ss / (seeds - 1);
        }
        return Math.sqrt(squares / records.rows());
    }

    @Test
    void theSameSeedGivesTheSameBits() {
        // the project's determinism rule (same seed, same model, same figures); common practice, no source
        BoundOptions how = BoundOptions.steady(8);
        double[] first = model.bound(records, how, 5).nats();
        assertArrayEquals(first, model.bound(records, how, 5).nats());
        double[] other = model.bound(records, how, 6).nats();
        boolean differs = false;
        for (int i = 0; i < first.length; i++) {
            differs |= first[i] != other[i];
        }
        assertTrue(differs, "another seed draws other points");
    }

    @Test
    void theSeedToSeedSpreadIsBelowTheTarget() {
        // issue 11 item 1: below 0.05 nats per record. Measured on this model (5 seeds, 30 records): plain
        // exact bound 2.09; the control variates at every step, one draw per term 0.218; 32 Sobol draws per
        // term alone 0.079; K = 16 and 32 draws at every step 0.049 and 0.029; steady(16) and steady(32)
        // (allocated by the model's profile: 327 and 647 draws, the control variates on 16 and 18 of the
        // 20 steps) 0.051 and 0.030
        double plain = recordSpread(BoundOptions.exact(), 5);
        double steady = recordSpread(BoundOptions.steady(32), 5);
        assertTrue(plain > 1.0, "the plain bound's spread " + plain);
        assertTrue(steady < 0.05, "the steady bound's spread " + steady);
    }

    @Test
    void itKeepsTheExpectationOfThePlainBound() {
        // Both are unbiased estimates of the same sum of expectations (Ho et al. 2020, eq. 5; a control
        // variate with a known mean and shifted points uniform on the cube keep it: Glasserman 2003,
        // section 4.1; L'Ecuyer & Lemieux 2002): the means over many seeds agree within a few standard errors.
        // Both estimators take the same draws (one independent draw per term, the same row seeds), so the
        // difference of the means is the mean of E[Q] - Q(e), compared with its own standard error.
        // Measured (2,000 seeds): differences within 2.9 standard errors on 8 records; the one at 2.9
        // (record 5, -0.108 +/- 0.038) came to -0.002 +/- 0.009 with 30,000 seeds. The plain bound's draws
        // are skewed (median 2.26, mean 2.37, largest 10.0 nats on record 5), hence STANDARD_ERRORS_SKEWED.
        int seeds = 2000;
        Table record = records.selectRows(new int[] {0, 1, 2, 3, 4, 5, 6, 7});
        int n = record.rows();
        int[] repeat = new int[n * seeds];
        long[] rowSeeds = new long[n * seeds];
        for (int i = 0; i < repeat.length; i++) {
            repeat[i] = i % n;
            rowSeeds[i] = 1000L + i;
        }
        Table many = record.selectRows(repeat);
        double[] plain = model.bound(many, BoundOptions.exact(), rowSeeds).nats();
        // uniform (not allocated): one independent draw at every step, so that both take the same draws
        double[] steady = model.bound(many, BoundOptions.steady(1).withAllocation(false), rowSeeds).nats();
        for (int r = 0; r < n; r++) {
            double mp = 0;
            double ms = 0;
            for (int b = 0; b < seeds; b++) {
                mp += plain[b * n + r] / seeds;
                ms += steady[b * n + r] / seeds;
            }
            double md = ms - mp;
            double vd = 0;
            for (int b = 0; b < seeds; b++) {
                vd += Math.pow(steady[b * n + r] - plain[b * n + r] - md, 2) / (seeds - 1);
            }
            double se = Math.sqrt(vd / seeds);
            assertEquals(mp, ms, STANDARD_ERRORS_SKEWED * se, "record " + r);
        }
    }

    /**
     * On Gaussian data, the zero-correction model with the fitted Gaussian part: the steady bound
     * of every record equals the fitted Gaussian's negative log-density (commons-math3's
     * MultivariateNormalDistribution) plus the bound's expected gap
     * ({@link GaussianBaselineTest#expectedGap}), on average over the records (the gap of one record
     * depends on the record); the estimator is affine there, so the control variate is exact and
     * the figure does not depend on the seed beyond float rounding.
     */
    @Test
    void onGaussianDataItIsTheFittedGaussiansDensityPlusTheGap() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = GaussianBaselineTest.gaussianRows(1424, 5);
        Table test = GaussianBaselineTest.gaussianRows(400, 6);
        DiffusionModel m = GaussianBaselineTest.zeroCorrection(training, Baseline.FITTED_GAUSSIAN, schedule);
        GaussianBaseline gb = m.parts().baseline();
        double[][] s = gb.covariance();
        MultivariateNormalDistribution fitted = GaussianBaselineTest.fittedGaussianOriginalUnits(m);
        double[] nats = m.bound(test, BoundOptions.steady(2), 7).natsOriginalUnits();
        // another seed gives the same figures but for float32 rounding of the network's outputs at the other
        // seed's draws of x_t (relative 6e-8 each), carried through T = 100 terms of three cells: measured at
        // most 7.1e-6 nats over these 400 records; 1e-4 nats allows 14 times that (common practice, no source)
        assertArrayEquals(nats, m.bound(test, BoundOptions.steady(2), 8).natsOriginalUnits(), 1e-4);
        double expected = GaussianBaselineTest.expectedGap(schedule, gb.mean(), s);
        double[] gapAndSe = GaussianBaselineTest.gapMeanAndStandardError(nats, test, fitted);
        double meanGap = gapAndSe[0];
        double se = gapAndSe[1];
        // measured: 0.0416 +/- 0.0022 against the expected 0.0412 (GaussianBaselineTest: 0.0424 +/- 0.0007
        // with the plain bound on 4,000 records)
        assertEquals(expected, meanGap, GaussianBaselineTest.STANDARD_ERRORS * se + GaussianBaselineTest.FLOAT_NATS,
                "bound minus the fitted Gaussian's NLL, mean over " + test.rows() + " records (se " + se + ")");
    }


    @Test
    void aScreenScoresEachRecordAsItScoresAlone() {
        // a screen's steady scores: every record draws the same points (common random numbers), so a
        // record's score does not depend on the other records (up to the float32 network's place
        // rounding, RowSeedBoundTest.PLACE_ROUNDING); common practice, no source
        double[] all = model.screeningScores(records, BoundOptions.steady(4), 3);
        for (int i = 0; i < 5; i++) {
            double one = model.screeningScores(records.selectRows(new int[] {i}), BoundOptions.steady(4), 3)[0];
            assertEquals(one, all[i], RowSeedBoundTest.PLACE_ROUNDING * Math.max(1.0, Math.abs(one)), "record " + i);
        }
    }

    @Test
    void aSampledBoundRefusesTermDraws() {
        // the project's rule that every entry point refuses bad input; common practice, no source
        assertThrows(IllegalArgumentException.class, () -> new BoundOptions(true, 0, 4, 2, false, false));
        assertThrows(IllegalArgumentException.class, () -> BoundOptions.steady(0));
        assertThrows(IllegalArgumentException.class, () -> BoundOptions.exact().withTermDraws(BoundOptions.MAX_TERM_DRAWS + 1));
    }

    /**
     * Monte Carlo checks of eight means of skewed draws pass within this many standard errors (one of
     * eight passes 3 by chance about 2% of the time; common practice, no source).
     */
    private static final double STANDARD_ERRORS_SKEWED = 4.0;
}
