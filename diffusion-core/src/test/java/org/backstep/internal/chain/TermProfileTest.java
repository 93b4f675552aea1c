package org.backstep.internal.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * The allocation of {@link TermProfile#allocate} on given profiles: Neyman allocation (Cochran
 * 1977, "Sampling Techniques", section 5.5: n_h proportional to N_h S_h, here K_t proportional to the
 * term's spread s_t) and the choice of the steps that take the control variates by the cost they
 * save (the class comment's Lagrangian).
 */
class TermProfileTest {

    /** Rounding each K_t to a whole draw: at most half a draw per step (common practice, no source). */
    private static final double HALF_A_DRAW = 0.5;

    @Test
    void withoutControlVariatesTheDrawsFollowTheSpreadAndKeepTheTotal() {
        // four steps, spreads 4 : 2 : 1 : 1, no control variate (cost 0): K_t = K T s_t / sum s = 32 x (4, 2, 1, 1) / 8
        // (Neyman allocation, K_t proportional to s_t: Cochran 1977, Sampling Techniques, section 5.5)
        double[] spread = {0, 4, 2, 1, 1};
        TermDraws plan = TermProfile.of(spread, spread, 0).allocate(8);
        assertEquals(16, plan.at(1));
        assertEquals(8, plan.at(2));
        assertEquals(4, plan.at(3));
        assertEquals(4, plan.at(4));
        assertEquals(32, plan.total());
        assertEquals(0, plan.linearizedSteps());
    }

    @Test
    void theControlVariateGoesWhereItSavesMoreDrawsThanItCosts() {
        // step 1: the control variate takes the spread from 10 to 0.1; steps 2 to 4: from 0.2 to 0.19 (it saves
        // almost nothing there), at a cost of 5 evaluations per step; which steps take it: the class comment's
        // Lagrangian, common practice, no source
        double[] plain = {0, 10, 0.2, 0.2, 0.2};
        double[] linear = {0, 0.1, 0.19, 0.19, 0.19};
        TermDraws plan = TermProfile.of(plain, linear, 5).allocate(4);
        assertTrue(plan.linearizes(1));
        assertFalse(plan.linearizes(2));
        assertFalse(plan.linearizes(4));
        // the predicted variance sum s_t^2 / K_t is at most the reference's, (sum l_t)^2 / (K T), but for rounding
        // (the variance of a sum of independent means and its Neyman minimum: Cochran 1977, section 5.5)
        double reference = Math.pow(0.1 + 3 * 0.19, 2) / (4 * 4);
        double predicted = 0.1 * 0.1 / plan.at(1) + 3 * 0.2 * 0.2 / plan.at(2);
        assertTrue(predicted <= reference * (1 + HALF_A_DRAW / plan.at(2)), predicted + " against " + reference);
        // and it costs fewer evaluations than the reference (common practice, no source), every step linearized with 4 draws: 4 x (4 + 5)
        assertTrue(plan.total() + 5L * plan.linearizedSteps() < 4L * (4 + 5), "evaluations " + plan.total());
    }

    @Test
    void aProfileWithoutNoiseDrawsKAtEveryStep() {
        // no spread anywhere: the uniform plan, K at every step (common practice, no source)
        double[] none = {0, 0, 0, 0};
        TermDraws plan = TermProfile.of(none, none, 3).allocate(5);
        for (int s = 1; s <= 3; s++) {
            assertEquals(5, plan.at(s));
        }
    }

    @Test
    void aVarianceTargetSetsTheDrawsByNeymansFormula() {
        // spreads 4 : 2 : 1 : 1, no control variate, target V = 0.25: Neyman allocation with a fixed variance
        // (Cochran 1977, section 5.5): N = (sum s_t)^2 / V = 64 / 0.25 = 256, K_t = N s_t / sum s = 32 x (4, 2, 1, 1),
        // and the predicted variance sum s_t^2 / K_t = 16/128 + 4/64 + 1/32 + 1/32 = 0.25 = V exactly
        double[] spread = {0, 4, 2, 1, 1};
        TermProfile profile = TermProfile.of(spread, spread, 0);
        TermDraws plan = profile.allocateTo(0.25, 1000);
        assertEquals(128, plan.at(1));
        assertEquals(64, plan.at(2));
        assertEquals(32, plan.at(3));
        assertEquals(32, plan.at(4));
        assertEquals(256, plan.total());
        assertEquals(0.25, profile.predictedVariance(plan), 1e-12);
        // a looser target on the same profile: V = 1.0, four times the variance, a quarter of the draws,
        // N = 64 / 1.0 = 64 (the same formula)
        assertEquals(64, profile.allocateTo(1.0, 1000).total());
    }

    @Test
    void aTargetPastTheCapFallsBackToTheCapsPlan() {
        // N = 256 draws would be 64 per step; a cap of 8 per step on average gives allocate(8), whose predicted
        // variance (sum s)^2 / (8 T) = 2 is above the target (common practice, no source)
        double[] spread = {0, 4, 2, 1, 1};
        TermProfile profile = TermProfile.of(spread, spread, 0);
        TermDraws capped = profile.allocateTo(0.25, 8);
        assertEquals(32, capped.total());
        assertEquals(2.0, profile.predictedVariance(capped), 1e-12);
        // with control variates: the predicted variance at the target is V but for rounding (half a draw per step)
        double[] plain = {0, 10, 0.2, 0.2, 0.2};
        double[] linear = {0, 0.1, 0.19, 0.19, 0.19};
        TermProfile withControls = TermProfile.of(plain, linear, 5);
        TermDraws plan = withControls.allocateTo(0.01, 1000);
        double predicted = withControls.predictedVariance(plan);
        assertEquals(0.01, predicted, 0.01 * HALF_A_DRAW / plan.at(2), "predicted " + predicted);
    }
}
