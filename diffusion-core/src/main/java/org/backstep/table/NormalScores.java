package org.backstep.table;

import org.apache.commons.math3.special.Erf;

/**
 * The arithmetic of the {@link ColumnTransform.Kind#NORMAL_SCORES} map: the normal score
 * z = Phi^-1(F(x)) of a kernel-smoothed empirical distribution function
 * F(x) = (1/n) sum_i Phi((x - k_i) / h) of n knots k_i with Gaussian kernels of bandwidth h, and its
 * exact log-derivative log dz/dx = log f(x) - log phi(z), with the kernel density
 * f(x) = F'(x) = (1/(n h)) sum_i phi((x - k_i) / h) (Liu, Lafferty &amp; Wasserman 2009, "The
 * Nonparanormal", JMLR 10:2295-2328, section 3, with a smoothed in place of a winsorized
 * distribution function).
 *
 * <p>No value underflows for any finite x: F and 1 - F are each summed directly, or, between knots
 * far apart, as a log-sum-exp of log Phi terms; z is taken from whichever of the two is smaller
 * (z = Phi^-1(F) or z = -Phi^-1(1 - F)), by Newton's method on log Phi. Beyond all knots by more
 * than {@link #NEGLIGIBLE_U} bandwidths, z and log dz/dx are taken relative to the nearest knot's
 * u_0 = |x - k| / h (z = u_0 + d, with u_0^2 / 2 never formed), so both stay finite and exact to
 * rounding for every finite x with finite u_0; z is infinite only where u_0 itself exceeds the
 * double range (x beyond about h 1.8e308). Between two knots more than about 1.9e154 h apart the
 * log-density, below -1e308, is minus infinity.
 */
final class NormalScores {

    private static final double SQRT2 = Math.sqrt(2.0);
    private static final double HALF_LOG_2PI = 0.5 * Math.log(2.0 * Math.PI);
    /**
     * Below this u, log Phi(u) comes from its asymptotic series: there erfc(-u / sqrt 2) is near
     * 1e-198 and still a normal double, and the series' first omitted term, 135135 / u^14, is below
     * 3e-16 (Abramowitz &amp; Stegun 1964, eq. 26.2.12).
     */
    private static final double SERIES_BELOW = -30.0;
    /** Newton steps on log Phi stop when a step is below this times max(1, |z|). */
    private static final double NEWTON_TOL = 1e-15;
    private static final int MAX_NEWTON = 200;
    /** The inverse map stops when its bracket is narrower than this times (|x| + h). */
    private static final double INVERSE_TOL = 1e-14;
    private static final int MAX_INVERSE = 300;

    private NormalScores() {
    }

    /**
     * log Phi(u), the log of the standard normal distribution function, for every finite u: from
     * {@link #erfc}, Phi(u) = erfc(-u / sqrt 2) / 2, and below {@link #SERIES_BELOW} from the
     * asymptotic series Phi(u) = phi(u) / (-u) (1 - 1/u^2 + 3/u^4 - 15/u^6 + 105/u^8 - 945/u^10
     * + 10395/u^12) (Abramowitz &amp; Stegun 1964, eq. 26.2.12).
     *
     * Above {@link #NEGLIGIBLE_U}, Phi(-u) is below the smallest double and log Phi(u) is exactly 0.
     *
     * @param u any finite value, or plus or minus infinity
     * @return log Phi(u), at most 0; minus infinity where u^2 / 2 exceeds the double range
     *     (u below about -1.9e154) and for u = minus infinity; NaN for NaN
     */
    static double logCdf(double u) {
        if (u > NEGLIGIBLE_U) {
            return 0.0;
        }
        if (u < SERIES_BELOW) {
            if (u == Double.NEGATIVE_INFINITY) {
                return Double.NEGATIVE_INFINITY;
            }
            double r = 1.0 / (u * u);
            double series = 1 - r * (1 - 3 * r * (1 - 5 * r * (1 - 7 * r * (1 - 9 * r * (1 - 11 * r)))));
            return -0.5 * u * u - HALF_LOG_2PI - Math.log(-u) + Math.log(series);
        }
        double a = Math.abs(u) * INV_SQRT2;
        double half = 0.5 * erfc(a, expMinusSquare(a));   // Phi(-|u|)
        return u < 0 ? Math.log(half) : Math.log1p(-half);
    }

    /** log phi(u) = -u^2/2 - log(2 pi)/2. */
    static double logDensity(double u) {
        return -0.5 * u * u - HALF_LOG_2PI;
    }

    /**
     * The standard normal quantile z with log Phi(z) = {@code logP}, for log p &lt;= log(1/2), by
     * Newton's method on g(z) = log Phi(z) - log p, whose derivative is phi(z) / Phi(z). Since log
     * Phi is concave, every iterate after the first lies below the root and they rise to it
     * monotonically. Start: commons-math3's erfInv for p above 1e-13, else the leading terms of the
     * tail expansion, z = -sqrt(-2 log p - log(-2 log p) - log(2 pi)).
     *
     * @param logP log p, at most log(1/2) (larger values are answered for log(1/2))
     * @return z, at most 0; minus infinity for log p = minus infinity
     */
    static double quantileOfLog(double logP) {
        if (logP == Double.NEGATIVE_INFINITY || Double.isNaN(logP)) {
            return logP;
        }
        double lp = Math.min(logP, -Math.log(2.0));
        double z;
        if (lp > -30.0) {
            z = SQRT2 * Erf.erfInv(2.0 * Math.exp(lp) - 1.0);
        } else {
            double a = -2.0 * lp;
            z = -Math.sqrt(a - Math.log(a) - 2.0 * HALF_LOG_2PI);
        }
        for (int i = 0; i < MAX_NEWTON; i++) {
            double lc = logCdf(z);
            double step = (lc - lp) / Math.exp(logDensity(z) - lc);
            z -= step;
            if (Math.abs(step) <= NEWTON_TOL * Math.max(1.0, Math.abs(z))) {
                break;
            }
        }
        return Math.min(z, 0.0);
    }

    /**
     * z(x) and log dz/dx at x: {@link #sums} and {@link #finish}.
     *
     * @param knots the knots k_i, sorted ascending (not modified)
     * @param h the bandwidth, above 0
     * @param x a finite value
     * @return {z, log dz/dx}
     */
    static double[] evaluate(double[] knots, double h, double x) {
        double[] p = point(knots, h, x);
        return new double[] {p[0], p[1]};
    }

    /**
     * {z, log dz/dx, -h f'(x) / f(x)} at x: beyond all knots by more than {@link #NEGLIGIBLE_U}
     * bandwidths from {@link #farTail}, else from {@link #sums} and {@link #finish}.
     */
    private static double[] point(double[] knots, double h, double x) {
        int n = knots.length;
        if (x - NEGLIGIBLE_U * h > knots[n - 1]) {
            return farTail(knots, h, x, true);
        }
        if (x + NEGLIGIBLE_U * h < knots[0]) {
            return farTail(knots, h, x, false);
        }
        double[] s = sums(knots, h, x);
        double[] e = finish(s[0], s[1], s[2], n, h);
        return new double[] {e[0], e[1], s[3]};
    }

    /**
     * The map beyond all knots, relative to the nearest knot: above them (mirrored below),
     * u_i = u_0 + delta_i with u_0 = (x - k_n) / h and delta_i = (k_n - k_i) / h &gt;= 0, all u_i
     * &gt; 30. With log Phi(-u) = -u^2/2 - log(2 pi)/2 + L(u), L(u) = -log u + log(series) (the
     * series of {@link #logCdf}), log(1 - F) = -u_0^2/2 - log(2 pi)/2 + L(u_0) + R, where
     * R = log((1/n) sum_i exp(t_i)) and t_i = -delta_i (u_0 + delta_i / 2) + L(u_i) - L(u_0)
     * (t_i = 0 at the nearest knot, so R &gt;= -log n). Then z = u_0 + d solves
     * u_0 d + d^2 / 2 = L(u_0 + d) - L(u_0) - R, a contraction with factor about 1 / u_0^2 solved by
     * a few fixed-point steps from d = 0, and log dz/dx = log f - log phi(z)
     * = -log(n h) + log sum_i exp(-delta_i (u_0 + delta_i / 2)) + d (u_0 + d / 2). No term is
     * of the size of u_0^2, so nothing overflows or cancels for any finite u_0 (common practice,
     * no source: the log-sum-exp shifted by its largest term).
     */
    private static double[] farTail(double[] knots, double h, double x, boolean above) {
        int n = knots.length;
        double nearest = above ? knots[n - 1] : knots[0];
        double sign = above ? 1.0 : -1.0;
        double u0 = sign * (x - nearest) / h;
        if (u0 == Double.POSITIVE_INFINITY) {
            return new double[] {sign * u0, -Math.log(h), sign * u0};   // z beyond the double range
        }
        double l0 = tailLog(u0);
        double sumT = 0.0;
        double sumW = 0.0;
        double sumWD = 0.0;
        for (double k : knots) {
            double delta = sign * (nearest - k) / h;
            double w = Math.exp(-delta * (u0 + 0.5 * delta));
            if (w > 0) {
                sumW += w;
                sumWD += delta * w;
                sumT += w * Math.exp(tailLog(u0 + delta) - l0);
            }
        }
        double r = Math.log(sumT) - Math.log(n);
        double d = 0.0;
        for (int i = 0; i < 4; i++) {
            d = (tailLog(u0 + d) - l0 - r) / (u0 + 0.5 * d);
        }
        double logJ = Math.log(sumW) - Math.log(n) - Math.log(h) + d * (u0 + 0.5 * d);
        return new double[] {sign * (u0 + d), logJ, sign * (u0 + sumWD / sumW)};
    }

    /** L(u) = log Phi(-u) + u^2/2 + log(2 pi)/2 = -log u + log(series), for u &gt; 30 (see {@link #logCdf}). */
    private static double tailLog(double u) {
        double r = 1.0 / u / u;
        double series = 1 - r * (1 - 3 * r * (1 - 5 * r * (1 - 7 * r * (1 - 9 * r * (1 - 11 * r)))));
        return -Math.log(u) + Math.log(series);
    }

    /**
     * Beyond this |u| = |x - k| / h a knot's terms are exactly 0 and 1 in double: exp(-u^2 / 2)
     * underflows to 0 below -745.2 (38.7^2 / 2 = 748.8), and Phi(-|u|) &lt; exp(-u^2 / 2) with it.
     */
    private static final double NEGLIGIBLE_U = 38.7;
    private static final double INV_SQRT2 = 1.0 / Math.sqrt(2.0);

    /**
     * The sums of the map at x: {log sum Phi(u_i), log sum Phi(-u_i), log sum exp(-u_i^2 / 2),
     * sum u_i exp(-u_i^2 / 2) / sum exp(-u_i^2 / 2)} over u_i = (x - k_i) / h; the last is -h f'(x) / f(x).
     * Knots beyond {@link #NEGLIGIBLE_U} bandwidths (found by binary search in the sorted knots) add
     * exactly 1 to the first or second sum and nothing else, so they are counted, not summed. The
     * others are summed in linear space with one exp and one {@link #erfc} each (the smaller of
     * Phi(u) and Phi(-u) from erfc, the larger as 1 minus it); if a sum comes out below
     * {@link #LINEAR_FLOOR} (x so far outside the knots that its terms may underflow), a second pass
     * in log space.
     */
    private static double[] sums(double[] knots, double h, double x) {
        int n = knots.length;
        int from = firstAtLeast(knots, x - NEGLIGIBLE_U * h);
        int to = firstAtLeast(knots, x + NEGLIGIBLE_U * h);
        double invH = 1.0 / h;
        double sumLo = from;                         // the knots far below x: Phi(u) = 1, Phi(-u) = 0
        double sumHi = n - to;                       // the knots far above x
        double sumF = 0.0;
        double sumFU = 0.0;
        for (int i = from; i < to; i++) {
            double u = (x - knots[i]) * invH;
            double a = Math.abs(u) * INV_SQRT2;
            double g = expMinusSquare(a);            // exp(-u^2 / 2), the kernel
            double small = 0.5 * erfc(a, g);         // Phi(-|u|)
            if (u < 0) {
                sumLo += small;
                sumHi += 1.0 - small;
            } else {
                sumHi += small;
                sumLo += 1.0 - small;
            }
            sumF += g;
            sumFU += u * g;
        }
        if (sumLo > LINEAR_FLOOR && sumHi > LINEAR_FLOOR && sumF > LINEAR_FLOOR) {
            return new double[] {Math.log(sumLo), Math.log(sumHi), Math.log(sumF), sumFU / sumF};
        }
        return sumsInLogs(knots, h, x);
    }

    /** The first index i with knots[i] &gt;= v (knots.length if none), by binary search. */
    private static int firstAtLeast(double[] knots, double v) {
        int lo = 0;
        int hi = knots.length;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (knots[mid] < v) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo;
    }

    /** 2^27 + 1, Dekker's (1971) constant for splitting a double into two halves of 26 bits. */
    private static final double SPLIT = 134217729.0;

    /**
     * exp(-a^2) to about one rounding for a &gt;= 0: a^2 = s + e exactly, s = a^2 rounded and e its
     * rounding error by Dekker's (1971) product without a fused multiply-add (Dekker, "A
     * floating-point technique for extending the available precision", Numer. Math. 18:224-242,
     * section 5, mul12), then exp(-s) (1 - e), since |e| &lt;= ulp(s) / 2 makes e^2 negligible.
     * exp(-s) alone would be off by up to a^2 2^-53 relative, 8e-14 at a = 27.
     *
     * Above a^2 = 746 (and for a = infinity) exp(-a^2) is 0 in double and returned as such.
     *
     * @param a the argument, at least 0
     * @return exp(-a^2)
     */
    static double expMinusSquare(double a) {
        double s = a * a;
        if (s > 746.0) {
            return 0.0;
        }
        double c = SPLIT * a;
        double hi = c - (c - a);
        double lo = a - hi;
        double e = ((hi * hi - s) + 2.0 * hi * lo) + lo * lo;
        return Math.exp(-s) * (1.0 - e);
    }

    /** Up to here erfc = 1 - erf by Cody's first rational function, from here to 4 his second. */
    private static final double CODY_FIRST_TO = 0.46875;
    private static final double CODY_SECOND_TO = 4.0;
    /** 1 / sqrt(pi). */
    private static final double INV_SQRT_PI = 0.56418958354775628695;

    /**
     * erfc(a) for a &gt;= 0, given g = exp(-a^2) (from {@link #expMinusSquare}), by W. J. Cody's
     * rational Chebyshev approximations ("Rational Chebyshev approximations for the error function",
     * Math. Comp. 23 (1969) 631-637), with the coefficients and intervals of his Fortran routine
     * CALERF (netlib specfun, file erf, Argonne 1990; the same numbers stand in its public C and C++
     * translations): for a &lt;= 0.46875, erfc = 1 - a P4(a^2) / Q4(a^2); for a &lt;= 4,
     * erfc = g P8(a) / Q8(a); above, erfc = (g / a) (1/sqrt(pi) - r P5(r) / Q5(r)) with r = 1 / a^2
     * (P and Q polynomials of the degrees shown, Q monic). Cody states at least 18 significant
     * digits for the approximations; in double the result is within 6.3e-16 relative of a
     * 50-digit reference over [0, 26.5] (NormalScoresTest); commons-math3's Erf.erfc differs by up
     * to 8e-14 near a = 22.7 (its own rounding of a^2). It costs about 20 multiply-adds
     * and one or two divisions, where commons-math3's (a regularized incomplete gamma function)
     * costs about 0.85 microseconds. Where g underflows (a above about 26.6) the result is 0 or a
     * subnormal, which the map's callers handle in log space.
     *
     * @param a the argument, at least 0
     * @param g exp(-a^2)
     * @return erfc(a)
     */
    static double erfc(double a, double g) {
        if (a <= CODY_FIRST_TO) {
            double y = a * a;
            double num = (((1.85777706184603153e-1 * y + 3.16112374387056560e0) * y + 1.13864154151050156e2) * y
                    + 3.77485237685302021e2) * y + 3.20937758913846947e3;
            double den = (((y + 2.36012909523441209e1) * y + 2.44024637934444173e2) * y
                    + 1.28261652607737228e3) * y + 2.84423683343917062e3;
            return 1.0 - a * num / den;
        }
        if (a <= CODY_SECOND_TO) {
            double num = (((((((2.15311535474403846e-8 * a + 5.64188496988670089e-1) * a + 8.88314979438837594e0) * a
                    + 6.61191906371416295e1) * a + 2.98635138197400131e2) * a + 8.81952221241769090e2) * a
                    + 1.71204761263407058e3) * a + 2.05107837782607147e3) * a + 1.23033935479799725e3;
            double den = (((((((a + 1.57449261107098347e1) * a + 1.17693950891312499e2) * a
                    + 5.37181101862009858e2) * a + 1.62138957456669019e3) * a + 3.29079923573345963e3) * a
                    + 4.36261909014324716e3) * a + 3.43936767414372164e3) * a + 1.23033935480374942e3;
            return g * num / den;
        }
        double r = 1.0 / (a * a);
        double num = ((((1.63153871373020978e-2 * r + 3.05326634961232344e-1) * r + 3.60344899949804439e-1) * r
                + 1.25781726111229246e-1) * r + 1.60837851487422766e-2) * r + 6.58749161529837803e-4;
        double den = ((((r + 2.56852019228982242e0) * r + 1.87295284992346047e0) * r
                + 5.27905102951428412e-1) * r + 6.05183413124413191e-2) * r + 2.33520497626869185e-3;
        return g * (INV_SQRT_PI - r * num / den) / a;
    }

    /**
     * Sums above this are exact to rounding even if some of their terms underflowed: a term lost to
     * underflow is below 1e-308, n of them below 1e-300 for any n below 1e8, which is 1e-20 of the sum.
     */
    private static final double LINEAR_FLOOR = 1e-280;

    /**
     * The same sums as log-sum-exp of log Phi terms, for x between knots far apart. A term of minus
     * infinity (u^2 / 2 beyond the double range) adds nothing and is skipped; if all density terms
     * are, the log-density sum is minus infinity and the last entry 0.
     */
    private static double[] sumsInLogs(double[] knots, double h, double x) {
        double maxLo = Double.NEGATIVE_INFINITY;
        double sumLo = 0.0;
        double maxHi = Double.NEGATIVE_INFINITY;
        double sumHi = 0.0;
        double maxF = Double.NEGATIVE_INFINITY;
        double sumF = 0.0;
        double sumFU = 0.0;
        for (double k : knots) {
            double u = (x - k) / h;
            double lo;
            double hi;
            if (u < 0) {
                lo = logCdf(u);
                hi = Math.log1p(-Math.exp(lo));
            } else {
                hi = logCdf(-u);
                lo = Math.log1p(-Math.exp(hi));
            }
            // streaming log-sum-exp: sum holds sum exp(term - max); -inf terms add nothing
            if (lo == Double.NEGATIVE_INFINITY) {
                // skip
            } else if (lo > maxLo) {
                sumLo = sumLo * Math.exp(maxLo - lo) + 1.0;
                maxLo = lo;
            } else {
                sumLo += Math.exp(lo - maxLo);
            }
            if (hi == Double.NEGATIVE_INFINITY) {
                // skip
            } else if (hi > maxHi) {
                sumHi = sumHi * Math.exp(maxHi - hi) + 1.0;
                maxHi = hi;
            } else {
                sumHi += Math.exp(hi - maxHi);
            }
            double f = -0.5 * u * u;
            if (f == Double.NEGATIVE_INFINITY) {
                continue;
            } else if (f > maxF) {
                double rescale = Math.exp(maxF - f);
                sumF = sumF * rescale + 1.0;
                sumFU = sumFU * rescale + u;
                maxF = f;
            } else {
                double w = Math.exp(f - maxF);
                sumF += w;
                sumFU += u * w;
            }
        }
        return new double[] {maxLo + Math.log(sumLo), maxHi + Math.log(sumHi), maxF + Math.log(sumF),
            sumF > 0 ? sumFU / sumF : 0.0};
    }

    /**
     * z and log dz/dx from log sum Phi(u_i), log sum Phi(-u_i) and log sum exp(-u_i^2 / 2):
     * log F = the first - log n, log (1 - F) = the second - log n, z from the smaller of the two,
     * log f = the third - log(2 pi)/2 - log(n h).
     */
    private static double[] finish(double logSumLo, double logSumHi, double logSumF, int n, double h) {
        double logN = Math.log(n);
        double logLower = logSumLo - logN;
        double logUpper = logSumHi - logN;
        double z = logLower <= logUpper ? quantileOfLog(logLower) : -quantileOfLog(logUpper);
        double logF = logSumF - HALF_LOG_2PI - logN - Math.log(h);
        return new double[] {z, logF - logDensity(z)};
    }

    /**
     * The inverse stops, without evaluating again, after a step s whose Newton error estimate
     * |z''/(2 z')| s^2 is below this times (|x| + h) and which is below {@link #ACCEPT_STEP} h (so
     * that the third-order error of Halley's step, on the kernel's scale h, is below 1e-18 h).
     */
    private static final double ACCEPT_NEWTON = 1e-16;
    private static final double ACCEPT_STEP = 1e-6;

    /**
     * x with z(x) = {@code z}: Halley's method with the exact derivatives z' = f / phi(z) and
     * z'' = z' (f'/f + z z') (from log z' = log f - log phi(z)), inside a bracket (a, b) with
     * z(a) &lt; z &lt; z(b) that every evaluation narrows. Halley's step is s / (1 + c s) with the
     * Newton step s = (z - z(x)) / z' and c = z'' / (2 z') (Gander 1985, "On Halley's iteration
     * method", Amer. Math. Monthly 92:131-134); Newton's step replaces it where |c s| &gt;= 1/2.
     * Safeguards: a step is cut back to at most {@link #PAST_KNOT} bandwidths past the first knot on
     * its way (from a plateau of F between sparse knots a Newton step overshoots by far); a step
     * that would leave the bracket is replaced, while one end is still open, by a step of twice the
     * distance to the far knot plus h, else by the Newton step from the bracket's other end if that
     * lands inside (the steep side of a plateau's edge), else by the midpoint. The map is strictly
     * increasing, so the root is unique. Start: the sample quantile of the knots at p = Phi(z)
     * (knot i at (i + 1/2) / n, linear in between); beyond the outer knots, the quantile of the
     * outer kernel alone, x = k_1 + h Phi^-1(n p) (or k_n - h Phi^-1(n (1 - p))), the map's limit
     * far outside the knots. It stops at z(x) = z exactly, when the bracket is narrower than
     * {@link #INVERSE_TOL} (|x| + h), when a step is below that, or, without evaluating again, after
     * a step small enough for {@link #ACCEPT_NEWTON}. On average 2.7 to 2.9 evaluations per cell
     * (measured in NormalScoresTest for z in [-4, 4] on 60 and 1000 knots at 0.5 and 4 times
     * Silverman's bandwidth, which asserts a mean of at most 3.5 and at most 8 for any cell; Newton
     * from the nearest knot took 4 to 6 on average).
     *
     * @param knots the knots, sorted ascending (not modified)
     * @param h the bandwidth
     * @param z a finite score
     * @return x
     */
    static double inverse(double[] knots, double h, double z) {
        return inverse(knots, h, z, null);
    }

    /** {@link #inverse(double[], double, double)}, counting its evaluations in {@code evaluations[0]} if not null. */
    static double inverse(double[] knots, double h, double z, int[] evaluations) {
        int n = knots.length;
        double x = start(knots, h, z);
        double a = Double.NEGATIVE_INFINITY;
        double b = Double.POSITIVE_INFINITY;
        double span = knots[n - 1] - knots[0] + h;
        double stepA = 0.0;                        // the Newton step (z - z(a)) / z'(a) from a, and from b
        double stepB = 0.0;
        for (int i = 0; i < MAX_INVERSE; i++) {
            double[] e = point(knots, h, x);
            if (evaluations != null) {
                evaluations[0]++;
            }
            if (e[0] == z) {
                return x;
            }
            double slope = Math.exp(e[1]);
            double newton = (z - e[0]) / slope;
            if (e[0] < z) {
                a = x;
                stepA = newton;
            } else {
                b = x;
                stepB = newton;
            }
            double tol = INVERSE_TOL * (Math.abs(x) + h);
            if (b - a <= tol) {
                break;
            }
            double c = 0.5 * (e[0] * slope - e[2] / h);     // z'' / (2 z') = (f'/f + z z') / 2
            double cs = c * newton;
            double step = Math.abs(cs) < 0.5 ? newton / (1.0 + cs) : newton;
            double next = clampPastKnot(knots, h, x, x + step);
            if (Math.abs(step) <= tol) {
                return next;                       // z(x) is off by rounding only
            }
            if (!(next > a && next < b)) {
                if (Double.isInfinite(a)) {
                    next = x - 2 * span;
                    span *= 2;
                } else if (Double.isInfinite(b)) {
                    next = x + 2 * span;
                    span *= 2;
                } else if (x == a && b + stepB > a && b + stepB < b) {
                    next = b + stepB;              // overshot from the flat side: Newton from the other end
                } else if (x == b && a + stepA > a && a + stepA < b) {
                    next = a + stepA;
                } else {
                    next = 0.5 * (a + b);
                }
            } else if (Math.abs(c) * newton * newton <= ACCEPT_NEWTON * (Math.abs(x) + h)
                    && Math.abs(step) <= ACCEPT_STEP * h) {
                return next;
            }
            x = next;
        }
        return 0.5 * (a + b);
    }

    /**
     * Where F changes, within a few bandwidths of a knot: a step from x to {@code next} may pass the
     * first knot on its way by at most this many bandwidths. Beyond, a Newton step taken on a plateau
     * of F (between knots more than a few bandwidths apart) would cross the knot's rise and more.
     */
    private static final double PAST_KNOT = 4.0;

    /** {@code next}, moved back to at most {@link #PAST_KNOT} bandwidths past the first knot from x towards it. */
    private static double clampPastKnot(double[] knots, double h, double x, double next) {
        if (next < x) {
            int i = firstAtLeast(knots, x) - 1;    // the largest knot below x
            return i >= 0 ? Math.max(next, knots[i] - PAST_KNOT * h) : next;
        }
        int i = firstAtLeast(knots, x);
        while (i < knots.length && knots[i] == x) {
            i++;
        }
        return i < knots.length ? Math.min(next, knots[i] + PAST_KNOT * h) : next;
    }

    /** The inverse's starting point (see {@link #inverse(double[], double, double)}). */
    private static double start(double[] knots, double h, double z) {
        int n = knots.length;
        double logN = Math.log(n);
        if (z <= 0) {
            double logP = logCdf(z);
            if (logP == Double.NEGATIVE_INFINITY) {
                return knots[0] + h * z;           // |z| beyond 1.9e154: z = u_0 to rounding (farTail)
            }
            double pos = Math.exp(logP + logN) - 0.5;
            if (pos <= 0) {
                return knots[0] + h * quantileOfLog(logP + logN);
            }
            int i = (int) pos;
            return knots[i] + (pos - i) * (knots[i + 1] - knots[i]);
        }
        double logQ = logCdf(-z);
        if (logQ == Double.NEGATIVE_INFINITY) {
            return knots[n - 1] + h * z;
        }
        double pos = Math.exp(logQ + logN) - 0.5;
        if (pos <= 0) {
            return knots[n - 1] - h * quantileOfLog(logQ + logN);
        }
        int i = (int) pos;
        return knots[n - 1 - i] - (pos - i) * (knots[n - 1 - i] - knots[n - 2 - i]);
    }

    /**
     * Silverman's rule of thumb for a Gaussian kernel, h = 0.9 min(sd, IQR / 1.34) n^(-1/5)
     * (Silverman 1986, "Density Estimation for Statistics and Data Analysis", eq. 3.31), with the
     * population sd and the interquartile range of the sorted values (quartiles by linear
     * interpolation, Hyndman &amp; Fan 1996 type 7); the sd alone when the IQR is 0.
     *
     * @param sorted the values, sorted ascending, at least two distinct (not modified)
     * @return h, above 0
     */
    static double silverman(double[] sorted) {
        int n = sorted.length;
        double mean = TableTransform.mean(sorted);
        double sd = Math.sqrt(TableTransform.populationVariance(sorted, mean));
        double iqr = quantile(sorted, 0.75) - quantile(sorted, 0.25);
        double spread = iqr > 0 ? Math.min(sd, iqr / 1.34) : sd;
        return 0.9 * spread * Math.pow(n, -0.2);
    }

    private static double quantile(double[] sorted, double q) {
        double pos = (sorted.length - 1) * q;
        int lo = (int) Math.floor(pos);
        int hi = Math.min(sorted.length - 1, lo + 1);
        return sorted[lo] + (pos - lo) * (sorted[hi] - sorted[lo]);
    }
}
