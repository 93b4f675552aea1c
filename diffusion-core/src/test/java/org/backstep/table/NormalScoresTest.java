package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.math.BigDecimal;
import java.math.MathContext;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.apache.commons.math3.analysis.integration.IterativeLegendreGaussIntegrator;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.special.Erf;
import org.junit.jupiter.api.Test;

/** The NORMAL_SCORES column transform: z = Phi^-1(F(x)) of a kernel-smoothed distribution function. */
class NormalScoresTest {

    /** Relative agreement of two exact computations that round differently (sums of n terms, logs). */
    private static final double EXACT_TOL = 1e-11;
    /**
     * A central difference with step d = 1e-4 h: truncation error (d^2 / 6) z''' is about 1e-9
     * relative for these smooth maps, rounding eps |z| / d about 1e-11.
     */
    private static final double DERIVATIVE_TOL = 1e-7;
    /**
     * Round trips of the inverse to convergence, z -&gt; x -&gt; z relative to max(1, |z|) and x -&gt; z -&gt; x
     * relative to |x| + h: a few roundings of z amplified by the sums' conditioning.
     */
    private static final double EXACT_ROUND_TRIP_TOL = 1e-14;
    /** The inverse's evaluations: at most this many for any cell, at most the mean below on average. */
    private static final int MAX_INVERSE_EVALUATIONS = 8;
    private static final double MEAN_INVERSE_EVALUATIONS = 3.5;
    /** Round trips x -&gt; z -&gt; x, relative to |x| + h. */
    private static final double ROUND_TRIP_TOL = 1e-10;
    /** Cody's erfc against commons-math3's, beyond the latter's error from rounding a^2 (see the test). */
    private static final double ERFC_TOL = 1e-14;
    /**
     * Cody's erfc against a 50-digit reference: a few roundings in the rational function, exp and
     * exp(-a^2) (measured: at most 6.3e-16 on [0, 26.5] in steps of 1/256).
     */
    private static final double ERFC_WIDE_TOL = 1e-15;
    /** Gauss-Legendre integration of a smooth density to a relative accuracy of 1e-10. */
    private static final double INTEGRAL_TOL = 1e-9;

    private static final double SQRT2 = Math.sqrt(2.0);

    /** A skewed sample (exponential, with a lump of ties), the kind of column the map is for. */
    private static double[] skewedSample() {
        SplittableRandom rng = new SplittableRandom(20090101);
        double[] v = new double[60];
        for (int i = 0; i < v.length; i++) {
            v[i] = i < 10 ? 0.5 : -Math.log(1 - rng.nextDouble()) * 3.0;
        }
        return v;
    }

    private static ColumnTransform skewed() {
        double[] v = skewedSample();
        return ColumnTransform.normalScores(v, ColumnTransform.silvermanBandwidth(v));
    }

    /** (1/n) sum_i of commons-math3's N(k_i, h^2) distribution function at x. */
    private static double referenceCdf(ColumnTransform t, double x) {
        double sum = 0;
        for (double k : t.knots()) {
            sum += new NormalDistribution(k, t.scale()).cumulativeProbability(x);
        }
        return sum / t.knots().length;
    }

    /** (1/n) sum_i of commons-math3's N(k_i, h^2) density at x: the kernel density estimate. */
    private static double referenceDensity(ColumnTransform t, double x) {
        double sum = 0;
        for (double k : t.knots()) {
            sum += new NormalDistribution(k, t.scale()).density(x);
        }
        return sum / t.knots().length;
    }

    private static double[] probePoints(ColumnTransform t) {
        double[] k = t.knots();
        double lo = k[0] - 6 * t.scale();
        double hi = k[k.length - 1] + 6 * t.scale();
        double[] x = new double[101];
        for (int i = 0; i < x.length; i++) {
            x[i] = lo + (hi - lo) * i / (x.length - 1);
        }
        return x;
    }

    @Test
    void scoresAreNormalQuantilesOfTheSmoothedDistributionFunction() {
        ColumnTransform t = skewed();
        NormalDistribution std = new NormalDistribution();
        for (double x : probePoints(t)) {
            double z = t.forward(x);
            double f = referenceCdf(t, x);
            // the definition z = Phi^-1(F(x)), F from commons-math3's normal distribution functions
            double phiZ = std.cumulativeProbability(z);
            double tail = Math.min(f, 1 - f);
            assertEquals(f, phiZ, EXACT_TOL * Math.max(tail, 1e-14) + 1e-15, "Phi(z) at x = " + x);
        }
    }

    @Test
    void pulledBackStandardNormalIsTheKernelDensity() {
        // change of variables (Dinh et al. 2017, section 3.1): phi(z(x)) dz/dx = F'(x) = f(x), the
        // kernel density estimate, here from commons-math3's normal densities
        ColumnTransform t = skewed();
        for (double x : probePoints(t)) {
            double[] zl = t.forwardWithLogJacobian(x);
            double logDensity = NormalScores.logDensity(zl[0]) + zl[1];
            assertEquals(Math.log(referenceDensity(t, x)), logDensity, EXACT_TOL * 50, "log f at x = " + x);
            assertEquals(t.logJacobian(x), zl[1], 0.0);
            assertEquals(t.forward(x), zl[0], 0.0);
        }
    }

    @Test
    void logJacobianMatchesACentralDifference() {
        ColumnTransform t = skewed();
        double d = 1e-4 * t.scale();
        for (double x : probePoints(t)) {
            // central difference (z(x + d) - z(x - d)) / 2d, common practice, no source
            double slope = (t.forward(x + d) - t.forward(x - d)) / (2 * d);
            assertEquals(Math.log(slope), t.logJacobian(x), DERIVATIVE_TOL * Math.max(1, Math.abs(Math.log(slope))),
                    "at x = " + x);
        }
    }

    @Test
    void transformedDensityIntegratesToOne() {
        // integral of phi(z(x)) |dz/dx| dx over the real line = integral of phi(z) dz = 1 (change of
        // variables); commons-math3's Gauss-Legendre integrator over the knots +- 12 bandwidths
        // (the mass left outside is below 1e-30)
        ColumnTransform t = skewed();
        double[] k = t.knots();
        double lo = k[0] - 12 * t.scale();
        double hi = k[k.length - 1] + 12 * t.scale();
        double integral = 0;
        int pieces = 40;
        int[] calls = {0};
        for (int i = 0; i < pieces; i++) {
            double a = lo + (hi - lo) * i / pieces;
            double b = lo + (hi - lo) * (i + 1) / pieces;
            IterativeLegendreGaussIntegrator integrator = new IterativeLegendreGaussIntegrator(16, 1e-11, 1e-13);
            integral += integrator.integrate(100_000, x -> {
                calls[0]++;
                double[] zl = t.forwardWithLogJacobian(x);
                return Math.exp(NormalScores.logDensity(zl[0]) + zl[1]);
            }, a, b);
        }
        assertEquals(1.0, integral, INTEGRAL_TOL, calls[0] + " evaluations");
    }

    @Test
    void inverseUndoesForwardInsideAndFarOutsideTheKnots() {
        ColumnTransform t = skewed();
        double h = t.scale();
        double[] k = t.knots();
        double[] xs = {k[0] - 500 * h, k[0] - 30 * h, k[0] - 3 * h, k[0], 0.5, 2.0, k[k.length - 1],
                k[k.length - 1] + 40 * h, k[k.length - 1] + 2000 * h};
        for (double x : xs) {
            double z = t.forward(x);
            assertTrue(Double.isFinite(z) && Double.isFinite(t.logJacobian(x)), "finite at x = " + x);
            // common practice, no source: f^-1(f(x)) = x
            assertEquals(x, t.inverse(z), ROUND_TRIP_TOL * (Math.abs(x) + h), "round trip at x = " + x + ", z = " + z);
        }
        for (double z = -9; z <= 9; z += 0.25) {
            assertEquals(z, t.forward(t.inverse(z)), ROUND_TRIP_TOL * Math.max(1, Math.abs(z)), "round trip at z = " + z);
        }
        assertTrue(Double.isNaN(t.inverse(Double.NaN)));
        assertTrue(Double.isNaN(t.forward(Double.NaN)));
    }

    @Test
    void inverseTakesFewEvaluationsAndRoundTripsToRounding() {
        // Halley's method from the knots' sample quantile (NormalScores.inverse): common practice, no
        // source; the counts are this implementation's (Newton from the nearest knot took 4 to 6 on
        // average, and up to 48 between the skewed sample's sparse tail knots at c = 0.5)
        SplittableRandom rng = new SplittableRandom(7);
        double[] gaussian = new double[1000];
        for (int i = 0; i < gaussian.length; i++) {
            gaussian[i] = Math.sqrt(-2 * Math.log(1 - rng.nextDouble())) * Math.cos(2 * Math.PI * rng.nextDouble());
        }
        for (double[] v : new double[][] {skewedSample(), gaussian}) {
            double[] k = v.clone();
            Arrays.sort(k);
            for (double c : new double[] {0.5, 4}) {
                double h = c * ColumnTransform.silvermanBandwidth(k);
                int total = 0;
                int cells = 0;
                double worstZ = 0;
                double worstX = 0;
                for (double z = -4; z <= 4; z += 1.0 / 16) {
                    int[] count = {0};
                    double x = NormalScores.inverse(k, h, z, count);
                    assertTrue(count[0] <= MAX_INVERSE_EVALUATIONS, count[0] + " evaluations at z = " + z);
                    total += count[0];
                    cells++;
                    worstZ = Math.max(worstZ, Math.abs(NormalScores.evaluate(k, h, x)[0] - z) / Math.max(1, Math.abs(z)));
                    double back = NormalScores.inverse(k, h, NormalScores.evaluate(k, h, x)[0]);
                    worstX = Math.max(worstX, Math.abs(back - x) / (Math.abs(x) + h));
                }
                String at = k.length + " knots, c = " + c;
                assertTrue(total <= MEAN_INVERSE_EVALUATIONS * cells, total / (double) cells + " evaluations per cell, " + at);
                // the defining identity z(x(z)) = z, and x(z(x)) = x
                assertTrue(worstZ <= EXACT_ROUND_TRIP_TOL, "z round trip " + worstZ + ", " + at);
                assertTrue(worstX <= EXACT_ROUND_TRIP_TOL, "x round trip " + worstX + ", " + at);
            }
        }
    }

    @Test
    void scoresIncreaseStrictlyFarIntoBothTails() {
        ColumnTransform t = skewed();
        double h = t.scale();
        double[] k = t.knots();
        double previous = Double.NEGATIVE_INFINITY;
        for (double x = k[0] - 1e4 * h; x < k[k.length - 1] + 1e4 * h; x += 97.3 * h) {
            double z = t.forward(x);
            assertTrue(z > previous, "z(" + x + ") = " + z + " after " + previous);
            previous = z;
        }
    }

    @Test
    void logCdfMatchesCommonsMathAndTheTailSeries() {
        NormalDistribution std = new NormalDistribution();
        for (double u = -37; u <= 8; u += 0.125) {
            // commons-math3's distribution function (erf-based), relative agreement
            double expected = Math.log(std.cumulativeProbability(u));
            assertEquals(expected, NormalScores.logCdf(u), EXACT_TOL * Math.max(1, Math.abs(expected)), "u = " + u);
        }
        for (double u : new double[] {-30.5, -33, -36}) {
            // the series branch against commons-math3's erfc where both are valid (Phi(u) = erfc(-u/sqrt 2) / 2)
            double expected = Math.log(0.5 * Erf.erfc(-u / SQRT2));
            assertEquals(expected, NormalScores.logCdf(u), EXACT_TOL * Math.abs(expected), "u = " + u);
        }
        // Mills' ratio to leading order far out: log Phi(u) ~ -u^2/2 - log(-u) - log(2 pi)/2
        // (Abramowitz & Stegun 1964, eq. 26.2.12), the rest of the series below 1e-6 at u = -1000
        double u = -1000;
        assertEquals(-u * u / 2 - Math.log(-u) - 0.5 * Math.log(2 * Math.PI), NormalScores.logCdf(u), 2e-6);
    }

    @Test
    void logCdfIsExactAtTheExtremes() {
        // Phi(-u) is below the smallest double beyond u = 38.7, so log Phi(u) = 0 exactly there and at
        // +inf; log Phi(u) = -u^2/2 - ... is below -1e308 at u = -1e200 (the class contract)
        for (double u : new double[] {40, 1e200, Double.MAX_VALUE, Double.POSITIVE_INFINITY}) {
            assertEquals(0.0, NormalScores.logCdf(u), 0.0, "u = " + u);
        }
        assertEquals(Double.NEGATIVE_INFINITY, NormalScores.logCdf(-1e200));
        assertEquals(Double.NEGATIVE_INFINITY, NormalScores.logCdf(Double.NEGATIVE_INFINITY));
        // exp(-a^2) underflows to 0 for a^2 > 745.2 (IEEE 754 double range), also at a = inf
        assertEquals(0.0, NormalScores.expMinusSquare(1e200), 0.0);
        assertEquals(0.0, NormalScores.expMinusSquare(Double.POSITIVE_INFINITY), 0.0);
    }

    @Test
    void hugeFiniteValuesGiveFiniteMonotoneScores() {
        // the class contract: every finite x gives a finite z and log-Jacobian; far beyond the knots
        // z -> (x - k) / h and log dz/dx -> -log h (the nearest kernel alone; common practice, no source)
        ColumnTransform t = skewed();
        double h = t.scale();
        double[] k = t.knots();
        double previous = Double.NEGATIVE_INFINITY;
        for (double x : new double[] {-1e308, -1e300, -1e200, -1e20, -1e4, 0, 1e4, 1e20, 1e200, 1e300, 1e308}) {
            double[] e = t.forwardWithLogJacobian(x);
            assertTrue(Double.isFinite(e[0]) && e[0] > previous, "z(" + x + ") = " + e[0] + " after " + previous);
            assertTrue(Double.isFinite(e[1]), "log-Jacobian at " + x + " is " + e[1]);
            assertEquals(e[0], t.forward(x), 0.0);
            assertEquals(e[1], t.logJacobian(x), 0.0);
            previous = e[0];
            if (Math.abs(x) >= 1e20) {
                double nearest = x > 0 ? k[k.length - 1] : k[0];
                assertEquals((x - nearest) / h, e[0], 1e-15 * Math.abs(e[0]), "x = " + x);
                assertEquals(-Math.log(h), e[1], 1e-12, "x = " + x);
                // and back: the inverse of the far tail (the contract of ColumnTransform.inverse)
                assertEquals(x, t.inverse(e[0]), 1e-14 * Math.abs(x), "x = " + x);
            }
        }
    }

    @Test
    void farTailMatchesTheLogSpaceSumsWhereBothHold() {
        // two exact computations of the same map (NormalScores' class Javadoc): the shifted far-tail
        // form just beyond 38.7 bandwidths against a central difference of z for the log-Jacobian
        ColumnTransform t = skewed();
        double h = t.scale();
        double[] k = t.knots();
        for (double c : new double[] {39, 60, 1e3, 1e6}) {
            for (double x : new double[] {k[k.length - 1] + c * h, k[0] - c * h}) {
                double d = 1e-4 * h;
                double numeric = Math.log((t.forward(x + d) - t.forward(x - d)) / (2 * d));
                assertEquals(numeric, t.logJacobian(x), DERIVATIVE_TOL * Math.max(1, c), "x = " + x);
            }
        }
    }

    @Test
    void valuesBeyondTheDoubleRangeAreRefusedNotNaN() {
        // the project rule: never a silent NaN or infinity; z = (x - k) / h exceeds 1.8e308 for a small h
        ColumnTransform t = ColumnTransform.normalScores(new double[] {0, 1, 2, 3}, 0.01);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> t.forward(1e308));
        assertTrue(e.getMessage().contains("1.0E308"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> t.forward(-1e308));
        // while dz/dx there, the nearest kernel's 1/h, is still a double
        assertEquals(-Math.log(0.01), t.logJacobian(-1e308), 1e-12);
        assertThrows(IllegalArgumentException.class, () -> t.forwardWithLogJacobian(1e308));
        // between two knots 1e300 apart the log-density (about -1e599) is below the double range
        ColumnTransform gap = ColumnTransform.normalScores(new double[] {0, 1e300}, 1.0);
        assertTrue(Double.isFinite(gap.forward(5e299)));
        assertThrows(IllegalArgumentException.class, () -> gap.logJacobian(5e299));
    }

    /** Digits of the high-precision erfc reference below. */
    private static final MathContext WIDE = new MathContext(50);
    private static final BigDecimal PI_50 = new BigDecimal("3.1415926535897932384626433832795028841971693993751");

    /** exp(y) for y &gt;= 0 to 50 digits: Taylor's series at y / 2^k &lt; 1/2, squared k times. */
    private static BigDecimal wideExp(BigDecimal y) {
        int k = 0;
        while (y.compareTo(BigDecimal.valueOf(0.5)) > 0) {
            y = y.divide(BigDecimal.valueOf(2), WIDE);
            k++;
        }
        BigDecimal sum = BigDecimal.ONE;
        BigDecimal term = BigDecimal.ONE;
        for (int n = 1; n < 60; n++) {
            term = term.multiply(y, WIDE).divide(BigDecimal.valueOf(n), WIDE);
            sum = sum.add(term, WIDE);
        }
        for (int i = 0; i < k; i++) {
            sum = sum.multiply(sum, WIDE);
        }
        return sum;
    }

    /**
     * erfc(a) for a double a &gt;= 0 to about 30 digits, from the definitions, no library: below 6,
     * 1 - erf(a) with erf's series of positive terms (Abramowitz &amp; Stegun 1964, eq. 7.1.6) at 50
     * digits; from 6 on, the continued fraction (eq. 7.1.14) with 300 terms.
     */
    private static double wideErfc(double a) {
        BigDecimal x = new BigDecimal(a);
        BigDecimal x2 = x.multiply(x, WIDE);
        BigDecimal g = BigDecimal.ONE.divide(wideExp(x2), WIDE);
        BigDecimal sqrtPi = PI_50.sqrt(WIDE);
        if (a < 6) {
            BigDecimal term = x;
            BigDecimal sum = x;
            BigDecimal twoX2 = x2.multiply(BigDecimal.valueOf(2), WIDE);
            for (int n = 1; term.compareTo(sum.movePointLeft(55)) > 0; n++) {
                term = term.multiply(twoX2, WIDE).divide(BigDecimal.valueOf(2L * n + 1), WIDE);
                sum = sum.add(term, WIDE);
            }
            BigDecimal erf = sum.multiply(g, WIDE).multiply(BigDecimal.valueOf(2), WIDE).divide(sqrtPi, WIDE);
            return BigDecimal.ONE.subtract(erf, WIDE).doubleValue();
        }
        BigDecimal f = x;
        for (int k = 300; k >= 1; k--) {
            f = x.add(BigDecimal.valueOf(k).divide(BigDecimal.valueOf(2), WIDE).divide(f, WIDE), WIDE);
        }
        return g.divide(sqrtPi.multiply(f, WIDE), WIDE).doubleValue();
    }

    @Test
    void erfcMatchesAWideReferenceAndCommonsMath() {
        for (double a = 0; a <= 26.5; a += 1.0 / 64) {
            double ours = NormalScores.erfc(a, NormalScores.expMinusSquare(a));
            // a 50-digit evaluation of A&S eqs. 7.1.6 and 7.1.14 (wideErfc above): relative error
            double wide = wideErfc(a);
            assertEquals(wide, ours, ERFC_WIDE_TOL * wide, "a = " + a);
            // commons-math3's erfc (a regularized incomplete gamma function: its own convergence
            // threshold 1e-15, and exp(-a^2 + ...) from sums of size a^2, a few roundings of a^2 2^-53
            // relative each; measured up to 8e-14 at a = 22.7 where the wide reference is within 4e-16)
            double expected = Erf.erfc(a);
            assertEquals(expected, ours, (ERFC_TOL + a * a * 0x1p-51) * expected, "a = " + a);
        }
    }

    @Test
    void quantileOfLogInvertsLogCdf() {
        NormalDistribution std = new NormalDistribution();
        for (double p : new double[] {0.5, 0.3, 0.05, 1e-3, 1e-7}) {
            // commons-math3's inverse distribution function (its 2p - 1 loses digits as p shrinks: at
            // p = 1e-12 it is 3e-6 off, so the identity below checks the far tail)
            assertEquals(std.inverseCumulativeProbability(p), NormalScores.quantileOfLog(Math.log(p)), 1e-6, "p = " + p);
        }
        for (double logP = -0.7; logP > -1e5; logP *= 1.7) {
            double z = NormalScores.quantileOfLog(logP);
            // the defining identity log Phi(z) = log p
            assertEquals(logP, NormalScores.logCdf(z), EXACT_TOL * Math.abs(logP), "log p = " + logP);
        }
        assertEquals(0.0, NormalScores.quantileOfLog(Math.log(0.5)), 1e-15);
    }

    @Test
    void silvermanWorkedValue() {
        // by hand: values 1..5, population sd sqrt(2), type-7 quartiles 2 and 4, IQR / 1.34 = 1.4925,
        // h = 0.9 sqrt(2) 5^(-1/5) = 0.922486...
        assertEquals(0.9 * Math.sqrt(2) * Math.pow(5, -0.2), ColumnTransform.silvermanBandwidth(new double[] {5, 1, 4, 2, 3}),
                1e-15);
        // IQR of 0 (more than half the values tied): the sd alone
        double[] tied = {1, 1, 1, 1, 1, 1, 9};
        double mean = 15.0 / 7;
        double sd = Math.sqrt((6 * (1 - mean) * (1 - mean) + (9 - mean) * (9 - mean)) / 7);
        assertEquals(0.9 * sd * Math.pow(7, -0.2), ColumnTransform.silvermanBandwidth(tied), 1e-14);
    }

    @Test
    void knotsAreSortedCopiedAndCompared() {
        double[] v = {3, 1, 2};
        ColumnTransform t = ColumnTransform.normalScores(v, 0.5);
        v[0] = 100;
        assertArrayEquals(new double[] {1, 2, 3}, t.knots());
        t.knots()[0] = -7;
        assertArrayEquals(new double[] {1, 2, 3}, t.knots());
        // records compare arrays by reference; this one compares the knots' values
        assertEquals(t, ColumnTransform.normalScores(new double[] {2, 3, 1}, 0.5));
        assertEquals(t.hashCode(), ColumnTransform.normalScores(new double[] {2, 3, 1}, 0.5).hashCode());
        assertNotEquals(t, ColumnTransform.normalScores(new double[] {2, 3, 1.5}, 0.5));
        assertNotEquals(t, ColumnTransform.normalScores(new double[] {2, 3, 1}, 0.25));
        assertEquals(0, ColumnTransform.standardize(0, 1).knots().length);
        assertEquals(ColumnTransform.standardize(2, 3), new ColumnTransform(ColumnTransform.Kind.STANDARDIZE, 2, 3));
    }

    @Test
    void invalidParametersAreRefused() {
        // common practice, no source: the compact constructor checks the NORMAL_SCORES parameters
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.normalScores(new double[] {1, 2}, 0));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.normalScores(new double[] {1, 2}, Double.NaN));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.normalScores(new double[] {1, 1, 1}, 1));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.normalScores(new double[] {1}, 1));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> ColumnTransform.normalScores(new double[] {1, Double.NaN, 3}, 1));
        assertTrue(e.getMessage().contains("NaN"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.normalScores(null, 1));
        assertThrows(IllegalArgumentException.class,
                () -> new ColumnTransform(ColumnTransform.Kind.NORMAL_SCORES, 0, 1, new double[] {2, 1}));
        assertThrows(IllegalArgumentException.class,
                () -> new ColumnTransform(ColumnTransform.Kind.NORMAL_SCORES, 1, 1, new double[] {1, 2}));
        assertThrows(IllegalArgumentException.class,
                () -> new ColumnTransform(ColumnTransform.Kind.STANDARDIZE, 0, 1, new double[] {1, 2}));
        ColumnTransform t = ColumnTransform.normalScores(new double[] {1, 2, 3}, 1);
        assertThrows(IllegalArgumentException.class, () -> t.forward(Double.POSITIVE_INFINITY));
        assertThrows(IllegalArgumentException.class, () -> t.logJacobian(Double.NaN));
        assertThrows(IllegalArgumentException.class, () -> t.inverse(Double.NEGATIVE_INFINITY));
        assertThrows(IllegalArgumentException.class, () -> ColumnTransform.silvermanBandwidth(new double[] {4, 4}));
    }

    @Test
    void tableFitMapsEachContinuousColumnAndRoundTrips() {
        // data/SOURCES.md, "A fixed split": training rows of iris (BSD-3-Clause, scikit-learn)
        Table all = OpenData.read("iris.csv");
        Table train = all.filterRows(i -> i % 5 != 0);
        Table test = all.filterRows(i -> i % 5 == 0);
        TableTransform tt = TableTransform.fitNormalScores(train, 1.0);
        for (int c = 0; c < train.columns(); c++) {
            ColumnTransform t = tt.transform(c);
            assertEquals(ColumnTransform.Kind.NORMAL_SCORES, t.kind());
            double[] sorted = train.column(c).clone();
            Arrays.sort(sorted);
            assertArrayEquals(sorted, t.knots());
            assertEquals(ColumnTransform.silvermanBandwidth(sorted), t.scale(), 0.0);
        }
        double[][] z = tt.toModelSpace(test);
        Table back = tt.fromModelSpace(z);
        double[] lj = tt.logJacobian(test);
        for (int r = 0; r < test.rows(); r++) {
            double sum = 0;
            for (int c = 0; c < test.columns(); c++) {
                double x = test.get(r, c);
                assertEquals(x, back.get(r, c), ROUND_TRIP_TOL * (Math.abs(x) + tt.transform(c).scale()));
                sum += tt.transform(c).logJacobian(x);
            }
            assertEquals(sum, lj[r], EXACT_TOL * Math.max(1, Math.abs(sum)));
        }
        // rebuilt from its parts (as a model file would), the transform is equal
        assertEquals(tt, TableTransform.of(tt.names(), tt.kinds(), tt.transforms()));
        assertThrows(IllegalArgumentException.class, () -> TableTransform.fitNormalScores(train, 0));
    }
}
