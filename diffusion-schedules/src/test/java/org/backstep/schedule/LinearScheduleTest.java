package org.backstep.schedule;

import static org.backstep.schedule.NoiseScheduleContract.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.math.BigDecimal;
import java.math.MathContext;
import org.junit.jupiter.api.Test;

/** Worked values of the linear schedule against its published definition. */
class LinearScheduleTest {

    /**
     * Relative tolerance against a formula evaluated independently: the schedule sums up to 1000
     * logarithms of size up to 10 in double, so about 1000 roundings of 1e-15 each at worst.
     */
    private static final double PUBLISHED_FORMULA_REL = 1e-12;

    /** Exact decimal arithmetic, far beyond double, for the reference products. */
    private static final MathContext WIDE = new MathContext(60);

    /**
     * alpha-bar_t of the Ho et al. 2020 linear schedule in 60-digit decimal arithmetic:
     * prod_{s<=t} (1 - beta_s), beta_s = 1e-4 + (0.02 - 1e-4)(s - 1)/999.
     */
    private static double hoAlphaBar(int t) {
        BigDecimal first = new BigDecimal("0.0001");
        BigDecimal span = new BigDecimal("0.02").subtract(first);
        BigDecimal product = BigDecimal.ONE;
        for (int s = 1; s <= t; s++) {
            BigDecimal beta = first.add(span.multiply(BigDecimal.valueOf(s - 1)).divide(BigDecimal.valueOf(999), WIDE));
            product = product.multiply(BigDecimal.ONE.subtract(beta), WIDE);
        }
        return product.doubleValue();
    }

    @Test
    void hoDefaultsGiveThePublishedBetasAndAlphaBars() {
        NoiseSchedule s = NoiseSchedule.linear(1000);
        assertEquals(NoiseSchedule.Kind.LINEAR, s.kind());
        assertEquals(1000, s.steps());
        // Ho et al. 2020, section 4: "beta_1 = 1e-4 to beta_T = 0.02", T = 1000
        assertRelative(1e-4, s.beta(1), PUBLISHED_FORMULA_REL, "beta_1");
        assertRelative(0.02, s.beta(1000), PUBLISHED_FORMULA_REL, "beta_T");
        for (int t : new int[] {1, 250, 500, 750, 1000}) {
            // Ho et al. 2020, eq. 4 (alpha-bar as a product) with the section 4 betas, in BigDecimal
            assertRelative(hoAlphaBar(t), s.alphaBar(t), PUBLISHED_FORMULA_REL, "alpha-bar at t = " + t);
        }
        // Ho et al. 2020, section 4: the schedule makes x_T nearly pure noise; alpha-bar_T is
        // about 4e-5 (value from the BigDecimal product above, rounded)
        assertTrue(s.alphaBar(1000) > 4.0e-5 && s.alphaBar(1000) < 4.1e-5, "alpha-bar_T = " + s.alphaBar(1000));
    }

    @Test
    void otherStepCountsScaleBothEndsByThousandOverT() {
        for (int steps : new int[] {1, 2, 4, 10, 20, 21, 50, 100, 250, 999, 4000}) {
            NoiseSchedule s = NoiseSchedule.linear(steps);
            double scale = 1000.0 / steps;
            // Nichol & Dhariwal 2021, "Improved DDPM": the linear schedule's ends scaled by 1000/T,
            // and every beta capped at 0.999 (section 3.2)
            double first = Math.min(0.999, 1e-4 * scale);
            double last = Math.min(0.999, 0.02 * scale);
            for (int t = 1; t <= steps; t++) {
                double expected = steps == 1 ? first : first + (last - first) * (t - 1.0) / (steps - 1.0);
                assertRelative(expected, s.beta(t), PUBLISHED_FORMULA_REL, "beta at t = " + t + " of T = " + steps);
            }
        }
    }

    @Test
    void theCapAtPointNineNineNineBindsOnlyBelowTwentyOneSteps() {
        // 0.02 * 1000 / T > 0.999 exactly when T < 20.02 (arithmetic on Nichol & Dhariwal 2021's scaling)
        assertEquals(0.999, NoiseSchedule.linear(20).beta(20), 0.0);
        assertEquals(0.999, NoiseSchedule.linear(5).beta(5), 0.0);
        assertRelative(0.02 * 1000.0 / 21.0, NoiseSchedule.linear(21).beta(21), PUBLISHED_FORMULA_REL, "T = 21");
        assertTrue(NoiseSchedule.linear(21).beta(21) < 0.999);
    }

    @Test
    void explicitEndsAreSpacedLinearly() {
        NoiseSchedule s = NoiseSchedule.linear(5, 0.1, 0.5);
        double[] expected = {0.1, 0.2, 0.3, 0.4, 0.5};   // arithmetic, no source
        for (int t = 1; t <= 5; t++) {
            assertRelative(expected[t - 1], s.beta(t), PUBLISHED_FORMULA_REL, "beta at t = " + t);
        }
        assertEquals(0.3, NoiseSchedule.linear(1, 0.3, 0.9).beta(1), 0.0, "T = 1 keeps the first beta (Javadoc)");
    }
}
