package org.backstep.posterior;

import static org.backstep.posterior.Near.assertRelative;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.math.BigDecimal;
import java.math.MathContext;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

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

    @Test
    void priorTermIsAboutThreeHundredThousandthsOfABitPerDimension() {
        double abar = hoAlphaBarT();
        // Ho et al. 2020, eq. 4 and 5: q(x_T | x_0 = 1) = N(sqrt(abar_T), 1 - abar_T), KL against N(0, 1),
        // with the scalar KL of Divergence (itself checked against commons-math3 integration)
        double nats = Divergence.gaussianKl(Math.sqrt(abar), Math.log1p(-abar), 0.0, 0.0);
        double bits = nats / Math.log(2.0);
        GaussianDiffusion d = GaussianDiffusion.of(NoiseSchedule.linear(1000));
        assertRelative(nats, d.priorKl(1.0), PUBLISHED_FORMULA_REL, "L_T at x0 = 1 in nats");
        // the brief's figure, about 2.9e-5 bits (two digits)
        assertEquals(2.9e-5, bits, 0.05e-5, "L_T in bits per dimension");
        // Ho et al. 2020, section 4: L_T of order 1e-5 bits per dimension (value from memory of the paper)
        assertTrue(bits >= 1e-5 && bits < 1e-4, "order of 1e-5 bits: " + bits);
        // to leading order L_T = abar_T x0^2 / 2 (the abar^2 terms are 1e-5 of it): arithmetic, no source
        assertRelative(abar / 2, nats, 1e-4, "leading order");

        INDArray x0 = Nd4j.create(new double[][] {{1.0, -1.0, 0.0}, {0.5, 0.5, 0.5}});
        INDArray rows = d.priorKl(x0);
        assertRelative(2 * d.priorKl(1.0) + d.priorKl(0.0), rows.getDouble(0), Near.IDENTITY_REL, "row 0");
        assertRelative(3 * d.priorKl(0.5), rows.getDouble(1), Near.IDENTITY_REL, "row 1");
    }
}
