package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.TermDraws;
import org.backstep.option.Baseline;
import org.backstep.option.BoundOptions;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * The steady bound's allocation of draws ({@link BoundOptions#steady}, {@code TermProfile}): the
 * profile is the model's own (measured on records the model draws from a fixed seed), so it and
 * every score are the same whatever records were scored before or beside; the same seed gives the
 * same bits; and the figure keeps the bound's expectation (an upper bound on the negative
 * log-likelihood), checked on a Gaussian of known density.
 */
class AllocatedBoundTest {

    private static DiffusionModel golden() throws Exception {
        return DiffusionModel.load(Path.of(AllocatedBoundTest.class.getResource("/golden/model-v3.backstep").toURI()));
    }

    @Test
    void theProfileDependsOnTheModelAloneNotOnTheRecordsScored() throws Exception {
        // two instances of one model; each scores other records first, so each measures its profile
        // beside other records: the profiles are the same bits, and so are a record's scores (the
        // project's determinism rule; common practice, no source)
        DiffusionModel a = golden();
        DiffusionModel b = golden();
        Table first = GoldenModelTest.sensorTable(30, 77);
        Table other = GoldenModelTest.sensorTable(7, 5);
        BoundOptions how = BoundOptions.steady(8);
        double[] aAll = a.bound(first, how, 11).nats();
        b.bound(other, how, 12);
        Engine ea = a.engine();
        Engine eb = b.engine();
        assertArrayEquals(ea.profile(ea.chain()).plainSpread(), eb.profile(eb.chain()).plainSpread());
        assertArrayEquals(ea.profile(ea.chain()).linearizedSpread(), eb.profile(eb.chain()).linearizedSpread());
        assertArrayEquals(aAll, b.bound(first, how, 11).nats());
        // with a seed per record, a record scores as it scores alone (up to the network's place rounding)
        long[] seeds = new long[first.rows()];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = 900L + i;
        }
        double[] perRow = a.bound(first, how, seeds).nats();
        for (int i = 0; i < 4; i++) {
            double alone = b.bound(first.selectRows(new int[] {i}), how, new long[] {seeds[i]}).nats()[0];
            assertEquals(alone, perRow[i], RowSeedBoundTest.PLACE_ROUNDING * Math.max(1.0, Math.abs(alone)), "record " + i);
        }
    }

    @Test
    void aFullChunkScoresItsRecordsAsTheyScoreAlone() throws Exception {
        // 256 records make a full chunk, whose steps of more than 16 draws go through the network in groups
        // (BoundEvaluator.MAX_CALL_ROWS): each record still scores as it scores alone, up to the network's
        // place rounding (RowSeedBoundTest.PLACE_ROUNDING; common practice, no source)
        DiffusionModel m = golden();
        Table records = GoldenModelTest.sensorTable(256, 8);
        long[] seeds = new long[records.rows()];
        for (int i = 0; i < seeds.length; i++) {
            seeds[i] = 40L + 3L * i;
        }
        BoundOptions how = BoundOptions.steady(32);
        Engine e = m.engine();
        TermDraws plan = e.drawPlan(how, e.chain());
        int most = 0;
        for (int s = 1; s <= e.chain().steps(); s++) {
            most = Math.max(most, plan.at(s));
        }
        assertTrue(most > 16, "some step draws more than one group: " + most);
        double[] all = m.bound(records, how, seeds).nats();
        for (int i : new int[] {0, 127, 255}) {
            double alone = m.bound(records.selectRows(new int[] {i}), how, new long[] {seeds[i]}).nats()[0];
            assertEquals(alone, all[i], RowSeedBoundTest.PLACE_ROUNDING * Math.max(1.0, Math.abs(alone)), "record " + i);
        }
    }

    @Test
    void theAllocationSpendsFewerEvaluationsThanUniformDrawsAndTheSameSeedGivesTheSameBits() throws Exception {
        DiffusionModel m = golden();
        Table records = GoldenModelTest.sensorTable(20, 3);
        Engine e = m.engine();
        TermDraws allocated = e.drawPlan(BoundOptions.steady(16), e.chain());
        TermDraws uniform = e.drawPlan(BoundOptions.steady(16).withAllocation(false), e.chain());
        int steps = e.chain().steps();
        long cost = 2L * e.chain().continuousColumns() + 1L + e.chain().binaryColumns();
        long allocatedEvals = allocated.total() + allocated.linearizedSteps() * cost;
        long uniformEvals = uniform.total() + uniform.linearizedSteps() * cost;
        assertEquals(16L * steps, uniform.total());
        assertEquals(steps, uniform.linearizedSteps());
        // Neyman allocation (Cochran 1977, Sampling Techniques, section 5.5) at the reference plan's predicted
        // variance never costs more than the reference
        // (the reference is one of the plans it chooses among; rounding adds at most half a draw per step)
        assertTrue(allocatedEvals <= uniformEvals + steps / 2, allocatedEvals + " against " + uniformEvals);
        // the project's determinism rule (same seed, same figures); common practice, no source
        assertArrayEquals(m.bound(records, BoundOptions.steady(16), 4).nats(), m.bound(records, BoundOptions.steady(16), 4).nats());
    }

    /**
     * On Gaussian data, the zero-correction model with the fitted Gaussian part N(m, S): the mean of
     * the allocated steady bound over records minus the fitted Gaussian's exact negative log-density
     * (commons-math3's MultivariateNormalDistribution) is the closed-form expected gap of
     * {@link GaussianBaselineTest#expectedGap} (Gaussian KL divergences, Bishop 2006, eq. 2.81 for
     * the conditioning), which is positive: the figure is an upper bound on the negative
     * log-likelihood, by the gap the variational bound predicts (Ho et al. 2020, eq. 5).
     */
    @Test
    void onAGaussianOfKnownDensityItIsAnUpperBoundByTheExpectedGap() {
        NoiseSchedule schedule = NoiseSchedule.linear(100);
        Table training = GaussianBaselineTest.gaussianRows(1424, 5);
        Table test = GaussianBaselineTest.gaussianRows(300, 9);
        DiffusionModel m = GaussianBaselineTest.zeroCorrection(training, Baseline.FITTED_GAUSSIAN, schedule);
        GaussianBaseline gb = m.parts().baseline();
        MultivariateNormalDistribution fitted = GaussianBaselineTest.fittedGaussianOriginalUnits(m);
        double[] nats = m.bound(test, BoundOptions.steady(16), 7).natsOriginalUnits();
        double[] gapAndSe = GaussianBaselineTest.gapMeanAndStandardError(nats, test, fitted);
        double meanGap = gapAndSe[0];
        double se = gapAndSe[1];
        double expected = GaussianBaselineTest.expectedGap(schedule, gb.mean(), gb.covariance());
        assertTrue(expected > 0.0, "the expected gap " + expected);
        assertEquals(expected, meanGap, GaussianBaselineTest.STANDARD_ERRORS * se + GaussianBaselineTest.FLOAT_NATS,
                "bound minus the Gaussian's NLL, mean over " + test.rows() + " records (se " + se + ")");
        assertTrue(meanGap > -GaussianBaselineTest.FLOAT_NATS, "the bound lies above the exact NLL on average: " + meanGap);
    }

    @Test
    void refusalsNameTheParameter() {
        // the project's rule that every entry point refuses bad input by name; common practice, no source
        IllegalArgumentException sampled = assertThrows(IllegalArgumentException.class,
                () -> new BoundOptions(true, 0, 4, 1, false, true));
        assertTrue(sampled.getMessage().contains("allocated"), sampled.getMessage());
        IllegalArgumentException plain = assertThrows(IllegalArgumentException.class,
                () -> new BoundOptions(false, 0, 0, 4, false, true));
        assertTrue(plain.getMessage().contains("allocated is true and linearized false"), plain.getMessage());
        // turning the linearization off turns the allocation off with it
        assertEquals(BoundOptions.exact().withTermDraws(4), BoundOptions.steady(4).withLinearization(false));
        IllegalArgumentException lengths = assertThrows(IllegalArgumentException.class,
                () -> TermDraws.allocated(TermDraws.Kind.SHIFTED_SOBOL, new int[] {0, 2, 2}, new boolean[2]));
        assertTrue(lengths.getMessage().contains("linear has 2 entries"), lengths.getMessage());
        // the variance target: above 0 and finite, on an allocated bound only, with a cap in range
        for (double bad : new double[] {0.0, -0.01, Double.NaN, Double.POSITIVE_INFINITY}) {
            IllegalArgumentException target = assertThrows(IllegalArgumentException.class,
                    () -> BoundOptions.steadyWithin(bad, 64));
            assertTrue(target.getMessage().contains("recordSd is " + bad), target.getMessage());
        }
        // the cap refused by its own name, below 1 and above MAX_TERM_DRAWS (BoundOptions Javadoc contract;
        // common practice, no source)
        IllegalArgumentException cap = assertThrows(IllegalArgumentException.class,
                () -> BoundOptions.steadyWithin(0.05, 0));
        assertTrue(cap.getMessage().contains("mostTermDraws is 0"), cap.getMessage());
        IllegalArgumentException over = assertThrows(IllegalArgumentException.class,
                () -> BoundOptions.steadyWithin(0.05, BoundOptions.MAX_TERM_DRAWS + 1));
        assertTrue(over.getMessage().contains("mostTermDraws is " + (BoundOptions.MAX_TERM_DRAWS + 1)), over.getMessage());
        IllegalArgumentException unallocated = assertThrows(IllegalArgumentException.class,
                () -> new BoundOptions(false, 0, 0, 4, true, false, 0.05));
        assertTrue(unallocated.getMessage().contains("recordSd is 0.05 and allocated false"), unallocated.getMessage());
        // turning the allocation off drops the target with it
        assertEquals(BoundOptions.steady(64).withAllocation(false),
                BoundOptions.steadyWithin(0.05, 64).withAllocation(false));
    }
}
