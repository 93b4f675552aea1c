package org.backstep.posterior;

import static org.backstep.posterior.Near.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.math.BigDecimal;
import java.math.MathContext;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;

/**
 * The prior term L_T of the Ho, Jain &amp; Abbeel 2020 linear schedule (1e-4 to 0.02, T = 1000):
 * KL(q(x_T | x_0) || N(0, 1)) per dimension for x_0 at the edge of data scaled to [-1, 1].
 */
class HoPriorTermTest {

    /** alpha-bar_T from 60-digit decimals against the schedule's double log-sum: see LinearScheduleTest. */
    private static final double PUBLISHED_FORMULA_REL = 1e-11;

    /** alpha-bar_T of the Ho et al. 2020 linear schedule: prod (1 - beta_t), beta_t = 1e-4 + (0.02 - 1e-4)(t - 1)/999. */
    private static double hoAlphaBarT() {
        MathContext wide = new MathContext(60);
        BigDecimal first = new BigDecimal("0.0001");
        BigDecimal span = new BigDecimal("0.02").subtract(first);
        BigDecimal product = BigDecimal.ONE;
        for (int t = 1; t <= 1000; t++) {
            BigDecimal beta = first.add(span.multiply(BigDecimal.valueOf(t - 1)).divide(BigDecimal.valueOf(999), wide));
            product = product.multiply(BigDecimal.ONE.subtract(beta), wide);
        }
        return product.doubleValue();
    }

}
