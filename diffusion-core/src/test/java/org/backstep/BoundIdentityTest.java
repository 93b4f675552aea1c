package org.backstep;

import org.apache.commons.math3.stat.StatUtils;

import org.backstep.option.BoundOptions;
import org.backstep.report.BoundReport;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The bound machinery checked with exact reverse kernels of Gaussian data (no training): the bound
 * must equal the exact negative log-likelihood plus the prior mismatch KL(q(x_T) || N(0, 1)).
 */
class BoundIdentityTest {

    /** Monte Carlo checks pass within this many standard errors (common practice, no source). */
    private static final double STANDARD_ERRORS = 3.0;

    private static final double MEAN = 2.0;
    private static final double SD = 0.5;

    private static Table draws(int n, long seed) {
        NormalDistribution normal = new NormalDistribution(new Well19937c(seed), MEAN, SD);
        double[][] rows = new double[n][1];
        for (int i = 0; i < n; i++) {
            rows[i][0] = normal.sample();
        }
        return Table.of(List.of("x0"), List.of(ColumnKind.CONTINUOUS), rows);
    }

    @Test
    void exactKernelsGiveEntropyPlusPriorMismatch() {
        NoiseSchedule schedule = NoiseSchedule.linear(1000);
        DiffusionModel model = GaussianOracle.model(schedule, new double[] {MEAN}, new double[][] {{SD * SD}},
                ColumnTransform.Kind.STANDARDIZE);
        Table data = draws(4000, 11);
        BoundReport report = model.bound(data, 5);
        // Entropy of N(2, 0.5^2): 0.5 log(2 pi e sigma^2) (textbook closed form, e.g. Cover & Thomas 2006, thm 8.4.1)
        double entropy = 0.5 * Math.log(2 * Math.PI * Math.E * SD * SD);
        assertEquals(0.7257914, entropy, 1e-7); // value given in the bound-machinery issue
        // Prior mismatch: KL(N(sqrt(abar_T) 2, abar_T 0.25 + 1 - abar_T) || N(0, 1)), Gaussian KL closed form
        double abarT = schedule.alphaBar(1000);
        double m = Math.sqrt(abarT) * MEAN;
        double var = abarT * SD * SD + 1 - abarT;
        double prior = 0.5 * (var + m * m - 1 - Math.log(var));
        assertEquals(0.7258721, entropy + prior, 1e-7); // value given in the bound-machinery issue
        // Per record, bound - (-log q(x_0)) removes the spread of x_0; its mean is the prior mismatch.
        NormalDistribution q = new NormalDistribution(MEAN, SD);
        double[] nats = report.nats();
        double[] gap = new double[nats.length];
        for (int i = 0; i < nats.length; i++) {
            gap[i] = nats[i] + q.logDensity(data.get(i, 0));
        }
        double meanGap = StatUtils.mean(gap);
        double seGap = Math.sqrt(StatUtils.variance(gap)) / Math.sqrt(gap.length);
        assertTrue(Math.abs(meanGap - prior) < STANDARD_ERRORS * seGap + 1e-4,
                "bound minus exact NLL is " + meanGap + " +/- " + seGap + "; expected the prior mismatch " + prior);
        assertEquals(entropy + prior, report.meanNats(), STANDARD_ERRORS * report.standardErrorOfMean());
    }

    /** Per-step terms averaged over 20,000 records: their Monte Carlo error measured about 0.004 nats. */
    private static final double PER_STEP_TOLERANCE = 0.015;

    @Test
    void everyStepTermMatchesItsClosedForm() {
        // A short schedule reaches betas near 1 (linear(20) rescaled by 1000/20, capped at 0.999), where an
        // error in the reverse mean's coefficients shows at once.
        NoiseSchedule s = NoiseSchedule.linear(20);
        double sig2 = SD * SD;
        DiffusionModel model = GaussianOracle.model(s, new double[] {MEAN}, new double[][] {{sig2}},
                ColumnTransform.Kind.STANDARDIZE);
        double[] per = model.bound(draws(20000, 13), 7).perStepMean();
        for (int t = 1; t <= s.steps(); t++) {
            // Closed forms for 1-D Gaussian data (Gaussian conditioning, e.g. Bishop 2006, eq. 2.81-2.82):
            // V_t = abar_t sig2 + 1 - abar_t; exact reverse variance C = V_{t-1} - alpha_t V_{t-1}^2 / V_t;
            // Var(x_0 | x_t) = sig2 - abar_t sig2^2 / V_t. With the exact reverse kernel the expected term is
            // t = 1:  E[-log N(x_0; E[x_0|x_1], C)] = (log(2 pi C) + 1)/2
            // t > 1:  E KL(N(mu~, beta~) || N(E[x_{t-1}|x_t], C)) = (log C - log beta~ + (beta~ + c0^2 Var(x_0|x_t))/C - 1)/2
            // with c0 the x_0 coefficient of the posterior mean (Ho et al. 2020, eq. 7).
            double abar = s.alphaBar(t);
            double abarPrev = s.alphaBar(t - 1);
            double v1 = abarPrev * sig2 + 1 - abarPrev;
            double v2 = abar * sig2 + 1 - abar;
            double c = v1 - s.alpha(t) * v1 * v1 / v2;
            double expected;
            if (t == 1) {
                expected = 0.5 * (Math.log(2 * Math.PI * c) + 1);
            } else {
                double bt = s.posteriorVariance(t);
                double c0 = Math.sqrt(abarPrev) * s.beta(t) / (1 - abar);
                double varX0 = sig2 - abar * sig2 * sig2 / v2;
                expected = 0.5 * (Math.log(c) - Math.log(bt) + (bt + c0 * c0 * varX0) / c - 1);
            }
            assertEquals(expected, per[t], PER_STEP_TOLERANCE, "term of step " + t);
        }
    }

    @Test
    void monteCarloAgreesWithExact() {
        NoiseSchedule schedule = NoiseSchedule.cosine(200);
        DiffusionModel model = GaussianOracle.model(schedule, new double[] {MEAN}, new double[][] {{SD * SD}},
                ColumnTransform.Kind.STANDARDIZE);
        Table data = draws(2000, 12);
        BoundReport exact = model.bound(data, 1);
        BoundReport mc = model.bound(data, BoundOptions.sampled(16), 2);
        double[] a = exact.nats();
        double[] b = mc.nats();
        double[] diff = new double[a.length];
        for (int i = 0; i < a.length; i++) {
            diff[i] = a[i] - b[i];
        }
        double se = Math.sqrt(StatUtils.variance(diff)) / Math.sqrt(diff.length);
        // Unbiasedness of the Monte Carlo estimate (Ho et al. 2020, eq. 5 with t drawn uniformly): common practice, no source
        assertEquals(0.0, StatUtils.mean(diff), STANDARD_ERRORS * se, "exact minus Monte Carlo, mean over records");
        assertEquals(schedule.steps() + 1, exact.perStepMean().length);
    }
}
