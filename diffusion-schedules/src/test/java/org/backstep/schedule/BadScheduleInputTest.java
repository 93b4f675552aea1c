package org.backstep.schedule;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/**
 * Every refused input names the parameter and the value it had (STYLE.md, "failures are
 * specific"; common practice, no source).
 */
class BadScheduleInputTest {

    private static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment),
                    () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

    @Test
    void zeroStepsAreRefused() {
        assertRefused(() -> NoiseSchedule.linear(0), "steps is 0", "at least 1");
        assertRefused(() -> NoiseSchedule.linear(-3, 0.1, 0.2), "steps is -3");
        assertRefused(() -> NoiseSchedule.cosine(0), "steps is 0");
        assertRefused(() -> NoiseSchedule.cosine(0, 0.5), "steps is 0");
        assertRefused(() -> NoiseSchedule.binomial(0), "steps is 0");
        assertRefused(() -> NoiseSchedule.ofBetas(), "number of betas is 0");
    }

    @Test
    void badBetasAreRefusedNamingTheStepAndTheValue() {
        double[] betas = new double[20];
        Arrays.fill(betas, 0.01);
        betas[16] = 1.2;
        assertRefused(() -> NoiseSchedule.ofBetas(betas), "beta at step 17 is 1.2", "(0, 1)");
        betas[16] = 0.01;
        betas[2] = Double.NaN;
        assertRefused(() -> NoiseSchedule.ofBetas(betas), "beta at step 3 is NaN");
        assertRefused(() -> NoiseSchedule.ofBetas(0.0, 0.1), "beta at step 1 is 0.0");
        assertRefused(() -> NoiseSchedule.ofBetas(0.1, -0.1), "beta at step 2 is -0.1");
        assertRefused(() -> NoiseSchedule.ofBetas(0.1, 1.0), "beta at step 2 is 1.0");
        assertRefused(() -> NoiseSchedule.ofBetas(0.1, Double.POSITIVE_INFINITY), "beta at step 2 is Infinity");
        // only a binomial schedule's last beta may be 1
        assertEquals(2, NoiseSchedule.of(NoiseSchedule.Kind.BINOMIAL, new double[] {0.5, 1.0}, null).steps());
        assertRefused(() -> NoiseSchedule.of(NoiseSchedule.Kind.BINOMIAL, new double[] {1.0, 0.5}, null),
                "beta at step 1 is 1.0");
        assertRefused(() -> NoiseSchedule.of(NoiseSchedule.Kind.LINEAR, new double[] {0.5, 1.0}, null),
                "beta at step 2 is 1.0");
    }

    @Test
    void badRebuildArgumentsAreRefused() {
        assertRefused(() -> NoiseSchedule.of(null, new double[] {0.1}, null), "kind is null");
        assertRefused(() -> NoiseSchedule.of(NoiseSchedule.Kind.EXPLICIT, null, null), "betas is null");
        assertRefused(() -> NoiseSchedule.of(NoiseSchedule.Kind.EXPLICIT, new double[] {0.1, 0.2}, new int[] {1}),
                "sourceSteps has 1 entries", "2");
        assertRefused(() -> NoiseSchedule.of(NoiseSchedule.Kind.EXPLICIT, new double[] {0.1, 0.2}, new int[] {4, 4}),
                "sourceSteps[1] is 4 after 4");
    }

    @Test
    void badSubsetsAreRefusedNamingTheEntry() {
        NoiseSchedule s = NoiseSchedule.linear(100);
        assertRefused(() -> s.subset(1, 7, 5), "steps[2] is 5 after 7", "strictly increasing");
        assertRefused(() -> s.subset(3, 3), "steps[1] is 3 after 3");
        assertRefused(() -> s.subset(0, 5), "steps[0] is 0", "1 to 100");
        assertRefused(() -> s.subset(5, 101), "steps[1] is 101", "1 to 100");
        assertRefused(() -> s.subset(), "number of steps is 0");
        assertRefused(() -> s.subset((int[]) null), "steps is null");
    }

    @Test
    void badStrideCountsAreRefused() {
        NoiseSchedule s = NoiseSchedule.cosine(100);
        assertRefused(() -> s.strided(0), "count is 0", "1 to 100");
        assertRefused(() -> s.strided(101), "count is 101", "1 to 100");
        assertRefused(() -> s.strided(-2), "count is -2");
    }

    @Test
    void badCosineOffsetsAreRefused() {
        assertRefused(() -> NoiseSchedule.cosine(10, 0.0), "offset is 0.0");
        assertRefused(() -> NoiseSchedule.cosine(10, -0.1), "offset is -0.1");
        assertRefused(() -> NoiseSchedule.cosine(10, Double.NaN), "offset is NaN");
        assertRefused(() -> NoiseSchedule.cosine(10, Double.POSITIVE_INFINITY), "offset is Infinity");
        // so large an offset that f(t) is constant in double: it would give beta = 0 and NaN figures
        assertRefused(() -> NoiseSchedule.cosine(1000, 1e20), "offset is 1.0E20", "beta at step");
    }

    @Test
    void linearEndsOutsideTheOpenUnitIntervalAreRefused() {
        assertRefused(() -> NoiseSchedule.linear(10, 0.0, 0.02), "first is 0.0", "(0.0, 1.0)");
        assertRefused(() -> NoiseSchedule.linear(10, -1.0, 0.02), "first is -1.0");
        assertRefused(() -> NoiseSchedule.linear(10, 1.0, 0.02), "first is 1.0");
        assertRefused(() -> NoiseSchedule.linear(10, 1e-4, 1.0), "last is 1.0", "(0.0, 1.0)");
        assertRefused(() -> NoiseSchedule.linear(10, 1e-4, 0.0), "last is 0.0");
        assertRefused(() -> NoiseSchedule.linear(10, 1e-4, Double.NaN), "last is NaN");
    }

    @Test
    void badNearestStepTargetsAreRefused() {
        NoiseSchedule s = NoiseSchedule.linear(100);
        assertRefused(() -> s.nearestStep(0.0), "targetAlphaBar is 0.0");
        assertRefused(() -> s.nearestStep(1.0), "targetAlphaBar is 1.0");
        assertRefused(() -> s.nearestStep(Double.NaN), "targetAlphaBar is NaN");
    }
}
