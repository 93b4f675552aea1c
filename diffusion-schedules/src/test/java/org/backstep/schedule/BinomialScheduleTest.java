package org.backstep.schedule;

import static org.backstep.schedule.NoiseScheduleContract.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/** The binomial schedule against Sohl-Dickstein et al. 2015 (binomial diffusion). */
class BinomialScheduleTest {

    /** Relative tolerance for alpha-bar recovered through a sum of T logarithms. */
    private static final double PUBLISHED_FORMULA_REL = 1e-12;

    @Test
    void betaIsOneOverTheStepsLeftAndAlphaBarFallsLinearly() {
        for (int steps : new int[] {1, 2, 5, 1000}) {
            NoiseSchedule s = NoiseSchedule.binomial(steps);
            assertEquals(NoiseSchedule.Kind.BINOMIAL, s.kind());
            for (int t = 1; t <= steps; t++) {
                // Sohl-Dickstein et al. 2015, appendix (binomial diffusion): beta_t = 1/(T - t + 1)
                assertEquals(1.0 / (steps - t + 1), s.beta(t), 0.0, "beta at t = " + t);
                // product of (T - s)/(T - s + 1) telescopes to (T - t)/T
                assertRelative((steps - t) / (double) steps, s.alphaBar(t), PUBLISHED_FORMULA_REL,
                        "alpha-bar at t = " + t + " of T = " + steps);
                assertRelative(t / (double) steps, s.oneMinusAlphaBar(t), PUBLISHED_FORMULA_REL,
                        "1 - alpha-bar at t = " + t);
            }
            // the last step redraws every bit: x_T ~ Bernoulli(1/2) whatever x_0 was
            assertEquals(1.0, s.beta(steps), 0.0);
            assertEquals(0.0, s.alphaBar(steps), 0.0);
            assertEquals(Double.NEGATIVE_INFINITY, s.logAlphaBar(steps), 0.0);
            assertEquals(0.0, s.snr(steps), 0.0);
            assertEquals(Double.NEGATIVE_INFINITY, s.logSnr(steps), 0.0);
        }
    }
}
