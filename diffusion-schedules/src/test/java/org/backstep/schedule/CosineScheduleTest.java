package org.backstep.schedule;

import static org.backstep.schedule.NoiseScheduleContract.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** Worked values of the cosine schedule against Nichol &amp; Dhariwal 2021, eq. 17. */
class CosineScheduleTest {

    /** Relative tolerance against the formula evaluated here: about T roundings in a log-sum. */
    private static final double PUBLISHED_FORMULA_REL = 1e-12;

    /** f(t) = cos^2(((t/T) + s)/(1 + s) * pi/2) (Nichol &amp; Dhariwal 2021, eq. 17). */
    private static double f(int t, int steps, double s) {
        double c = Math.cos((t / (double) steps + s) / (1.0 + s) * Math.PI / 2.0);
        return c * c;
    }

    /** beta_t = min(1 - f(t)/f(t-1), 0.999) (Nichol &amp; Dhariwal 2021, section 3.2). */
    private static double beta(int t, int steps, double s) {
        return Math.min(1.0 - f(t, steps, s) / f(t - 1, steps, s), 0.999);
    }

    @Test
    void thousandStepsFollowEquationSeventeen() {
        int steps = 1000;
        double s = 0.008;   // Nichol & Dhariwal 2021, section 3.2
        NoiseSchedule schedule = NoiseSchedule.cosine(steps);
        assertEquals(NoiseSchedule.Kind.COSINE, schedule.kind());
        for (int t = 1; t < steps; t++) {
            // no beta before the last reaches the cap, so alpha-bar_t = f(t)/f(0) exactly (eq. 17)
            assertTrue(1.0 - f(t, steps, s) / f(t - 1, steps, s) < 0.999, "unclipped at t = " + t);
        }
        for (int t : new int[] {1, 500, 999}) {
            // Nichol & Dhariwal 2021, eq. 17: alpha-bar_t = f(t)/f(0)
            assertRelative(f(t, steps, s) / f(0, steps, s), schedule.alphaBar(t), PUBLISHED_FORMULA_REL,
                    "alpha-bar at t = " + t);
            // Nichol & Dhariwal 2021, section 3.2: beta_t = min(1 - alpha-bar_t / alpha-bar_{t-1}, 0.999)
            assertRelative(beta(t, steps, s), schedule.beta(t), PUBLISHED_FORMULA_REL, "beta at t = " + t);
        }
        // f(T) = cos^2(pi/2) = 0, so beta_T is clipped to 0.999 (section 3.2) and alpha-bar_T is
        // alpha-bar_{T-1} * 0.001, not f(T)/f(0)
        assertEquals(0.999, schedule.beta(1000), 0.0, "beta_T clipped");
        assertRelative(f(999, steps, s) / f(0, steps, s) * (1.0 - 0.999), schedule.alphaBar(1000),
                PUBLISHED_FORMULA_REL, "alpha-bar at T");
    }

    @Test
    void everyStepOfAShortScheduleAndAnotherOffset() {
        for (double s : new double[] {0.008, 0.1, 2.0}) {
            NoiseSchedule schedule = NoiseSchedule.cosine(7, s);
            double abar = 1.0;
            for (int t = 1; t <= 7; t++) {
                double b = beta(t, 7, s);
                abar *= 1.0 - b;
                // Nichol & Dhariwal 2021, eq. 17 and section 3.2
                assertRelative(b, schedule.beta(t), PUBLISHED_FORMULA_REL, "beta at t = " + t + ", s = " + s);
                assertRelative(abar, schedule.alphaBar(t), PUBLISHED_FORMULA_REL, "alpha-bar at t = " + t);
            }
        }
    }

    @Test
    void defaultOffsetIsThePublishedOne() {
        // Nichol & Dhariwal 2021, section 3.2: s = 0.008
        assertEquals(0.008, NoiseSchedule.COSINE_OFFSET, 0.0);
        assertEquals(NoiseSchedule.cosine(40, 0.008), NoiseSchedule.cosine(40));
    }
}
