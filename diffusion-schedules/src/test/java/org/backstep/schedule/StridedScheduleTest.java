package org.backstep.schedule;

import static org.backstep.schedule.NoiseScheduleContract.assertRelative;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

/** Sub-schedules over fewer steps (Nichol &amp; Dhariwal 2021, section 4). */
class StridedScheduleTest {

    /** Relative tolerance for alpha-bar kept through a sub-schedule, on top of the beta-storage bound. */
    private static final double KEPT_ALPHA_BAR_REL = 1e-12;

    /**
     * How far a beta in [1/2, 1) stored in double can be from the exact 1 - alpha-bar ratio: one
     * ulp there, 2^-53. A sub-step that jumps far (beta near 1) keeps alpha = 1 - beta only to
     * 2^-53 / alpha relative, since the schedule stores betas alone (IEEE 754 rounding, no source).
     */
    private static final double BETA_STORAGE_ABS = Math.ulp(0.75);

    /** The relative tolerance of alpha-bar at sub-step i: identity tolerance plus the storage bound. */
    private static double keptTolerance(NoiseSchedule sub, int i) {
        double tol = KEPT_ALPHA_BAR_REL;
        for (int j = 1; j <= i; j++) {
            if (sub.alpha(j) > 0.0) {
                tol += BETA_STORAGE_ABS / sub.alpha(j);
            }
        }
        return tol;
    }

    private static final List<NoiseSchedule> SOURCES = List.of(NoiseSchedule.linear(1000),
            NoiseSchedule.cosine(1000), NoiseSchedule.binomial(1000), NoiseSchedule.linear(37));

    /** Asserts that every step of {@code sub} has the alpha-bar of its source step in {@code source}. */
    private static void assertKeepsAlphaBar(NoiseSchedule source, NoiseSchedule sub) {
        for (int i = 1; i <= sub.steps(); i++) {
            int src = sub.sourceStep(i);
            // Nichol & Dhariwal 2021, section 4: the sub-schedule keeps alpha-bar at the kept steps
            assertRelative(source.alphaBar(src), sub.alphaBar(i), keptTolerance(sub, i),
                    "alpha-bar at sub-step " + i + " (source step " + src + ")");
            double prev = i == 1 ? 1.0 : source.alphaBar(sub.sourceStep(i - 1));
            // section 4: beta_i = 1 - alpha-bar_{t_i} / alpha-bar_{t_{i-1}}, checked as alpha_i = the ratio
            // (the ratio, not 1 minus it, has no cancellation here)
            double ratio = source.alphaBar(src) / prev;
            double tol = ratio > 0.0 ? KEPT_ALPHA_BAR_REL + BETA_STORAGE_ABS / ratio : 0.0;
            assertRelative(ratio, sub.alpha(i), tol, "alpha at sub-step " + i);
        }
        assertEquals(source.kind(), sub.kind(), "a sub-schedule keeps its source's kind");
    }

    @Test
    void stridedKeepsAlphaBarAndBothEnds() {
        for (NoiseSchedule source : SOURCES) {
            int steps = source.steps();
            for (int count : new int[] {1, 2, 10, 25, steps - 1, steps}) {
                NoiseSchedule sub = source.strided(count);
                assertEquals(count, sub.steps());
                assertKeepsAlphaBar(source, sub);
                // evenly spaced t_i = round(1 + (T - 1) i / (count - 1)) (the Javadoc's rule)
                for (int i = 0; i < count; i++) {
                    long expected = count == 1 ? steps : Math.round(1.0 + (steps - 1.0) * i / (count - 1.0));
                    assertEquals(expected, sub.sourceStep(i + 1), "source of sub-step " + (i + 1));
                }
                assertEquals(steps, sub.sourceStep(count), "the last step is T, so sampling starts from the prior");
            }
        }
    }

    @Test
    void subsetKeepsAlphaBarAtTheChosenSteps() {
        for (NoiseSchedule source : SOURCES) {
            int steps = source.steps();
            int[] keep = {2, 3, steps / 3, steps / 2 + 1, steps - 1};
            NoiseSchedule sub = source.subset(keep);
            assertArrayEquals(keep, sub.sourceSteps());
            assertKeepsAlphaBar(source, sub);
            assertTrue(sub.isStrided());
        }
    }

    @Test
    void stridingAStridedScheduleComposesSourceSteps() {
        NoiseSchedule base = NoiseSchedule.cosine(1000);
        NoiseSchedule once = base.strided(100);
        NoiseSchedule twice = once.subset(1, 3, 50, 99, 100);
        // section 4's construction applied twice; the source of a source is the original step
        int[] expected = {once.sourceStep(1), once.sourceStep(3), once.sourceStep(50), once.sourceStep(99),
                once.sourceStep(100)};
        assertArrayEquals(expected, twice.sourceSteps());
        assertKeepsAlphaBar(base, twice);
        NoiseSchedule thrice = twice.strided(3);
        assertKeepsAlphaBar(base, thrice);
        assertEquals(1000, thrice.sourceStep(3));
    }

    @Test
    void stridedToEveryStepIsTheScheduleItself() {
        for (NoiseSchedule source : SOURCES) {
            NoiseSchedule all = source.strided(source.steps());
            assertFalse(all.isStrided());
            assertArrayEquals(source.sourceSteps(), all.sourceSteps());
            for (int t = 1; t <= source.steps(); t++) {
                // Nichol & Dhariwal 2021, section 4 with every step kept
                assertRelative(source.alphaBar(t), all.alphaBar(t), KEPT_ALPHA_BAR_REL, "alpha-bar at t = " + t);
                assertRelative(source.beta(t), all.beta(t), KEPT_ALPHA_BAR_REL, "beta at t = " + t);
            }
        }
    }
}
