package org.backstep.schedule;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.function.IntToDoubleFunction;
import org.junit.jupiter.api.Test;

/**
 * The contract every {@link NoiseSchedule} meets, whatever factory made it: the defining identities
 * of alpha-bar, 1 - alpha-bar, SNR, log-SNR and beta-tilde recomputed here by plain loops from the
 * schedule's own betas, value semantics, the printed forms, the smallest size (T = 1) and the
 * refusal of steps outside 1..T. Subclasses say which schedule to check.
 */
abstract class NoiseScheduleContract {

    /** Relative tolerance for identities recomputed by a plain loop (about T rounding errors). */
    static final double IDENTITY_REL = 1e-12;

    /** @return the schedule under test, built afresh on each call */
    protected abstract NoiseSchedule create();

    /** @return the same construction with a single step (T = 1) */
    protected abstract NoiseSchedule createSmallest();

    /**
     * Asserts |actual - expected| <= tol |expected|; infinities and zero must match exactly.
     */
    static void assertRelative(double expected, double actual, double tol, String what) {
        if (expected == 0.0 || Double.isInfinite(expected)) {
            assertEquals(expected, actual, 0.0, what);
            return;
        }
        assertTrue(Math.abs(actual - expected) <= tol * Math.abs(expected),
                () -> what + ": expected " + expected + " but was " + actual + " (relative error "
                        + Math.abs(actual - expected) / Math.abs(expected) + ", tolerance " + tol + ")");
    }

    /** alpha-bar_0..alpha-bar_T by a plain product loop over the schedule's own betas. */
    private static double[] loopAlphaBar(double[] beta) {
        double[] abar = new double[beta.length + 1];
        abar[0] = 1.0;
        for (int t = 1; t <= beta.length; t++) {
            abar[t] = abar[t - 1] * (1.0 - beta[t - 1]);
        }
        return abar;
    }

    /**
     * 1 - alpha-bar_0..T by the telescoping sum 1 - abar_t = (1 - abar_{t-1}) + abar_{t-1} beta_t,
     * a loop of positive terms with no cancellation (algebra of the product definition).
     */
    private static double[] loopOneMinusAlphaBar(double[] beta) {
        double[] abar = loopAlphaBar(beta);
        double[] m = new double[beta.length + 1];
        for (int t = 1; t <= beta.length; t++) {
            m[t] = m[t - 1] + abar[t - 1] * beta[t - 1];
        }
        return m;
    }

    @Test
    void betasLieInTheUnitIntervalAndOnlyABinomialLastStepReachesOne() {
        NoiseSchedule s = create();
        double[] b = s.betas();
        assertEquals(s.steps(), b.length);
        for (int t = 1; t <= b.length; t++) {
            boolean finalBinomial = s.kind() == NoiseSchedule.Kind.BINOMIAL && t == b.length;
            // Ho et al. 2020 section 2: 0 < beta_t < 1; Sohl-Dickstein et al. 2015 allow beta_T = 1 for binomial
            assertTrue(b[t - 1] > 0.0 && (b[t - 1] < 1.0 || finalBinomial && b[t - 1] == 1.0),
                    "beta at step " + t + " is " + b[t - 1]);
            assertEquals(b[t - 1], s.beta(t), 0.0, "beta(t) agrees with betas()");
            assertEquals(1.0 - b[t - 1], s.alpha(t), 0.0, "alpha_t = 1 - beta_t (Ho et al. 2020, eq. 4)");
        }
    }

    @Test
    void alphaBarIsTheCumulativeProductOfOneMinusBeta() {
        NoiseSchedule s = create();
        double[] abar = loopAlphaBar(s.betas());
        assertEquals(1.0, s.alphaBar(0), 0.0, "alpha-bar_0 = 1 (Ho et al. 2020, eq. 4, empty product)");
        assertEquals(0.0, s.logAlphaBar(0), 0.0, "log alpha-bar_0 = 0");
        double[] copy = s.alphaBars();
        for (int t = 1; t <= s.steps(); t++) {
            // Ho et al. 2020, eq. 4: alpha-bar_t = prod_{s<=t} (1 - beta_s)
            assertRelative(abar[t], s.alphaBar(t), IDENTITY_REL, "alpha-bar at t = " + t);
            assertRelative(abar[t], copy[t - 1], IDENTITY_REL, "alphaBars()[" + (t - 1) + "]");
            assertRelative(Math.log(abar[t]), s.logAlphaBar(t), IDENTITY_REL, "log alpha-bar at t = " + t);
            assertTrue(s.alphaBar(t) < s.alphaBar(t - 1), "alpha-bar falls strictly at t = " + t);
        }
    }

    @Test
    void oneMinusAlphaBarMatchesATelescopingSum() {
        NoiseSchedule s = create();
        double[] m = loopOneMinusAlphaBar(s.betas());
        assertEquals(0.0, s.oneMinusAlphaBar(0), 0.0, "1 - alpha-bar_0 = 0");
        assertEquals(Double.doubleToRawLongBits(0.0), Double.doubleToRawLongBits(s.oneMinusAlphaBar(0)),
                "1 - alpha-bar_0 is +0.0, not -0.0 (common practice, no source)");
        for (int t = 1; t <= s.steps(); t++) {
            // algebra of Ho et al. 2020 eq. 4, summed without cancellation
            assertRelative(m[t], s.oneMinusAlphaBar(t), IDENTITY_REL, "1 - alpha-bar at t = " + t);
        }
    }

    @Test
    void snrAndLogSnrFollowFromAlphaBar() {
        NoiseSchedule s = create();
        double[] abar = loopAlphaBar(s.betas());
        double[] m = loopOneMinusAlphaBar(s.betas());
        for (int t = 1; t <= s.steps(); t++) {
            // Kingma et al. 2021, "Variational Diffusion Models", eq. 2: SNR = alpha^2 / sigma^2
            assertRelative(abar[t] / m[t], s.snr(t), IDENTITY_REL, "SNR at t = " + t);
            double logSnr = Math.log(abar[t]) - Math.log(m[t]);
            if (Double.isInfinite(logSnr)) {
                assertEquals(logSnr, s.logSnr(t), 0.0, "log-SNR at t = " + t);
            } else {
                // absolute-or-relative, since log-SNR crosses zero
                assertEquals(logSnr, s.logSnr(t), IDENTITY_REL * Math.max(1.0, Math.abs(logSnr)),
                        "log-SNR at t = " + t);
            }
        }
    }

    @Test
    void posteriorVarianceIsBetaTilde() {
        NoiseSchedule s = create();
        double[] b = s.betas();
        double[] m = loopOneMinusAlphaBar(b);
        // Ho et al. 2020, eq. 7: beta-tilde_1 = 0 since alpha-bar_0 = 1
        assertEquals(Double.doubleToRawLongBits(0.0), Double.doubleToRawLongBits(s.posteriorVariance(1)),
                "beta-tilde_1 is +0.0");
        for (int t = 2; t <= s.steps(); t++) {
            // Ho et al. 2020, eq. 7: beta-tilde_t = (1 - abar_{t-1}) / (1 - abar_t) beta_t
            assertRelative(b[t - 1] * m[t - 1] / m[t], s.posteriorVariance(t), IDENTITY_REL,
                    "beta-tilde at t = " + t);
            assertTrue(s.posteriorVariance(t) <= s.beta(t), "beta-tilde_t <= beta_t (Ho et al. 2020, section 3.2)");
        }
    }

    @Test
    void rowsRepeatThePerStepFigures() {
        NoiseSchedule s = create();
        List<StepRow> rows = s.rows();
        assertEquals(s.steps(), rows.size());
        for (int t = 1; t <= s.steps(); t++) {
            StepRow r = rows.get(t - 1);
            // common practice, no source: the table row is the per-step figures, bit for bit
            assertEquals(new StepRow(t, s.sourceStep(t), s.beta(t), s.alpha(t), s.alphaBar(t), s.snr(t),
                    s.logSnr(t), s.posteriorVariance(t)), r);
            assertEquals(r, s.row(t));
        }
    }

    @Test
    void nearestStepFindsEachStepsOwnAlphaBar() {
        NoiseSchedule s = create();
        for (int t = 1; t <= s.steps(); t += Math.max(1, s.steps() / 7)) {
            double a = s.alphaBar(t);
            if (a > 0.0 && a < 1.0) {
                // log-SNR strictly decreasing (Kingma et al. 2021, section 3), so the match is unique
                assertEquals(t, s.nearestStep(a), "nearest step to alpha-bar(" + t + ")");
            }
        }
    }

    @Test
    void returnedArraysAreCopies() {
        NoiseSchedule s = create();
        double[] b = s.betas();
        double[] a = s.alphaBars();
        int[] src = s.sourceSteps();
        double b0 = b[0];
        double a0 = a[0];
        int src0 = src[0];
        b[0] = 0.5 * b0 + 0.25;
        a[0] = -1.0;
        src[0] = -7;
        // common practice, no source (immutable values; /work/shared/STYLE.md)
        assertEquals(b0, s.betas()[0], 0.0);
        assertEquals(a0, s.alphaBars()[0], 0.0);
        assertEquals(src0, s.sourceSteps()[0]);
        assertEquals(b0, s.beta(1), 0.0);
    }

    @Test
    void equalsAndHashCodeFollowKindBetasAndSourceSteps() {
        NoiseSchedule s = create();
        NoiseSchedule again = create();
        // common practice, no source: value equality
        assertEquals(s, again);
        assertEquals(s.hashCode(), again.hashCode());
        NoiseSchedule rebuilt = NoiseSchedule.of(s.kind(), s.betas(), s.sourceSteps());
        assertEquals(s, rebuilt, "rebuilt from kind, betas and source steps");
        assertEquals(s.hashCode(), rebuilt.hashCode());
        assertEquals(s.toTableText(), rebuilt.toTableText());

        double[] nudged = s.betas();
        nudged[0] = Math.nextDown(nudged[0]);
        assertNotEquals(s, NoiseSchedule.of(s.kind(), nudged, s.sourceSteps()), "one beta one ulp lower");

        int[] shifted = s.sourceSteps();
        for (int i = 0; i < shifted.length; i++) {
            shifted[i] += 1;
        }
        assertNotEquals(s, NoiseSchedule.of(s.kind(), s.betas(), shifted), "other source steps");

        if (s.kind() != NoiseSchedule.Kind.BINOMIAL) {
            NoiseSchedule.Kind other = s.kind() == NoiseSchedule.Kind.EXPLICIT
                    ? NoiseSchedule.Kind.LINEAR : NoiseSchedule.Kind.EXPLICIT;
            assertNotEquals(s, NoiseSchedule.of(other, s.betas(), s.sourceSteps()), "other kind");
        }
        assertNotEquals(s, null);
        assertNotEquals(s, (Object) s.toString());
    }

    @Test
    void toStringNamesKindAndSteps() {
        NoiseSchedule s = create();
        String text = s.toString();
        // common practice, no source
        assertTrue(text.contains(s.kind().name().toLowerCase(java.util.Locale.ROOT)), text);
        assertTrue(text.contains("T=" + s.steps() + ","), text);
        assertEquals(s.isStrided(), text.contains("strided"), text);
    }

    @Test
    void toTableHasAHeaderAndOneLinePerStep() {
        NoiseSchedule s = create();
        String table = s.toTableText();
        List<String> lines = table.lines().toList();
        // common practice, no source
        assertEquals(s.steps() + 1, lines.size(), "T + 1 lines");
        assertTrue(lines.get(0).contains("alpha-bar") && lines.get(0).contains("beta-tilde"), lines.get(0));
        for (int t = 1; t <= s.steps(); t++) {
            String[] cells = lines.get(t).trim().split("\\s+");
            assertEquals(7, cells.length, lines.get(t));
            assertEquals(Integer.toString(t), cells[0], "first column is t");
            assertEquals(Integer.toString(s.sourceStep(t)), cells[1], "second column is the source step");
        }
        assertFalse(table.contains("-0.000000e+00"), "no negative zero printed");
        assertFalse(table.contains("NaN"), "no NaN printed");
    }

    @Test
    void theSmallestScheduleHasOneStep() {
        NoiseSchedule s = createSmallest();
        assertEquals(1, s.steps());
        double b = s.beta(1);
        // Ho et al. 2020, eq. 4 with T = 1
        assertRelative(1.0 - b, s.alphaBar(1), IDENTITY_REL, "alpha-bar_1 = 1 - beta_1");
        assertRelative(b, s.oneMinusAlphaBar(1), IDENTITY_REL, "1 - alpha-bar_1 = beta_1");
        assertEquals(0.0, s.posteriorVariance(1), 0.0, "beta-tilde_1 = 0 (Ho et al. 2020, eq. 7)");
        assertArrayEquals(new double[] {b}, s.betas(), 0.0);
        assertEquals(2, s.toTableText().lines().count());
        assertEquals(s, NoiseSchedule.of(s.kind(), s.betas(), s.sourceSteps()));
        assertEquals(1, s.strided(1).steps());
        assertRelative(s.alphaBar(1), s.strided(1).alphaBar(1), IDENTITY_REL, "strided(1) of T = 1");
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> s.beta(2));
        assertTrue(e.getMessage().contains("t is 2"), e.getMessage());
    }

    @Test
    void stepsOutsideOneToTAreRefusedNamingTheStep() {
        NoiseSchedule s = create();
        int big = s.steps() + 1;
        List<IntToDoubleFunction> fromOne = List.of(s::beta, s::alpha, s::snr, s::logSnr,
                s::posteriorVariance, t -> s.sourceStep(t), t -> s.row(t).beta());
        for (IntToDoubleFunction f : fromOne) {
            for (int bad : new int[] {0, big, -1}) {
                IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> f.applyAsDouble(bad));
                // the message names the step and the range (STYLE.md: failures are specific)
                assertTrue(e.getMessage().contains("t is " + bad), e.getMessage());
                assertTrue(e.getMessage().contains("1 to " + s.steps()), e.getMessage());
            }
        }
        List<IntToDoubleFunction> fromZero = List.of(s::alphaBar, s::logAlphaBar, s::oneMinusAlphaBar);
        for (IntToDoubleFunction f : fromZero) {
            for (int bad : new int[] {big, -1}) {
                IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> f.applyAsDouble(bad));
                assertTrue(e.getMessage().contains("t is " + bad), e.getMessage());
            }
        }
    }
}
