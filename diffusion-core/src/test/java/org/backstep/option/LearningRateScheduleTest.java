package org.backstep.option;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The learning-rate schedules against their formulas. */
class LearningRateScheduleTest {

    /** Identities evaluated in double. */
    private static final double IDENTITY = 1e-12;

    @Test
    void cosineFollowsItsFormula() {
        // Loshchilov & Hutter 2017, "SGDR", eq. 5 with eta_min = 0, one cycle: eta (1 + cos(pi s / S)) / 2
        assertEquals(0.01, LearningRateSchedule.COSINE.rate(0.01, 0, 100), IDENTITY);
        assertEquals(0.005, LearningRateSchedule.COSINE.rate(0.01, 50, 100), IDENTITY);
        assertEquals(0.01 * (1 + Math.cos(Math.PI * 0.25)) / 2, LearningRateSchedule.COSINE.rate(0.01, 25, 100),
                IDENTITY);
        // our floor at base / 1000 (documented in the method), so the last step still moves
        assertEquals(1e-5, LearningRateSchedule.COSINE.rate(0.01, 100, 100), IDENTITY);
        // common practice, no source: a constant schedule is constant
        assertEquals(0.01, LearningRateSchedule.CONSTANT.rate(0.01, 77, 100), IDENTITY);
    }

    @Test
    void badArgumentsAreRefusedByName() {
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> LearningRateSchedule.COSINE.rate(0, 1, 10)).getMessage().contains("base"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> LearningRateSchedule.COSINE.rate(0.1, -1, 10)).getMessage().contains("step"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> LearningRateSchedule.COSINE.rate(0.1, 1, -10)).getMessage().contains("total"));
    }
}
