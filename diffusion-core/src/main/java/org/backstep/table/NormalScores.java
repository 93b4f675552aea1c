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
 * <p>No value underflows for any finite x: F and 1 - F are each summed directly, or, far outside
 * the knots, as a log-sum-exp of log Phi terms; z is taken from whichever of the two is smaller
 * (z = Phi^-1(F) or z = -Phi^-1(1 - F)), by Newton's method on log Phi.
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
     * commons-math3's erfc, Phi(u) = erfc(-u / sqrt 2) / 2, and below {@link #SERIES_BELOW} from the
     * asymptotic series Phi(u) = phi(u) / (-u) (1 - 1/u^2 + 3/u^4 - 15/u^6 + 105/u^8 - 945/u^10
     * + 10395/u^12) (Abramowitz &amp; Stegun 1964, eq. 26.2.12).
     *
     * @param u any finite value, or plus or minus infinity
     * @return log Phi(u), at most 0
     */
    static double logCdf(double u) {
        if (u < SERIES_BELOW) {
            if (u == Double.NEGATIVE_INFINITY) {
                return Double.NEGATIVE_INFINITY;
            }
            double r = 1.0 / (u * u);
            double series = 1 - r * (1 - 3 * r * (1 - 5 * r * (1 - 7 * r * (1 - 9 * r * (1 - 11 * r)))));
            return -0.5 * u * u - HALF_LOG_2PI - Math.log(-u) + Math.log(series);
        }
        if (u < 0) {
            return Math.log(0.5 * Erf.erfc(-u / SQRT2));
        }
        return Math.log1p(-0.5 * Erf.erfc(u / SQRT2));
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
        if (logP == Double.NEGATIVE_INFINITY) {
            return Double.NEGATIVE_INFINITY;
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
     * z(x) and log dz/dx at x. One pass over the knots in linear space, with one erfc per knot
     * (the smaller of Phi(u) and Phi(-u) from erfc, the larger as 1 minus it); if a sum comes out
     * below {@link #LINEAR_FLOOR} (x so far outside the knots that its terms may underflow), a second
     * pass in log space.
     *
     * @param knots the knots k_i, sorted ascending (not modified)
     * @param h the bandwidth, above 0
     * @param x a finite value
     * @return {z, log dz/dx}
     */
    static double[] evaluate(double[] knots, double h, double x) {
        double sumLo = 0.0;
        double sumHi = 0.0;
        double sumF = 0.0;
        for (double k : knots) {
            double u = (x - k) / h;
            double a = Math.abs(u) / SQRT2;
            double g = Math.exp(-a * a);                 // exp(-u^2 / 2), the kernel
            double small = 0.5 * erfc(a, g);             // Phi(-|u|)
            if (u < 0) {
                sumLo += small;
                sumHi += 1.0 - small;
            } else {
                sumHi += small;
                sumLo += 1.0 - small;
            }
            sumF += g;
        }
        if (sumLo > LINEAR_FLOOR && sumHi > LINEAR_FLOOR && sumF > LINEAR_FLOOR) {
            return finish(Math.log(sumLo), Math.log(sumHi), Math.log(sumF), knots.length, h);
        }
        return evaluateInLogs(knots, h, x);
    }

    /** Below this argument erfc comes from the series of erf, above it from the continued fraction. */
    private static final double SERIES_TO = 2.0;
    /** Terms of the continued fraction: 60 give a relative error below 5e-16 from x = 2 on. */
    private static final int FRACTION_TERMS = 60;
    private static final double SQRT_PI = Math.sqrt(Math.PI);
    private static final double TWO_OVER_SQRT_PI = 2.0 / SQRT_PI;

    /**
     * erfc(a) for a &gt;= 0, given g = exp(-a^2). Below {@link #SERIES_TO}: 1 - erf(a) with
     * erf(a) = (2 / sqrt pi) g sum_n 2^n a^(2n+1) / (1 3 5 ... (2n+1)), a series of positive terms
     * (Abramowitz &amp; Stegun 1964, eq. 7.1.6), summed until a term is below 1e-17 of the sum
     * (at most 31 terms); absolute error about 3e-16. From there on: the continued fraction
     * erfc(a) = (g / sqrt pi) / (a + (1/2) / (a + 1 / (a + (3/2) / (a + 2 / (a + ...)))))
     * (eq. 7.1.14), {@link #FRACTION_TERMS} terms evaluated from the tail; relative error below
     * 5e-16. Written here because commons-math3's erfc (a regularized incomplete gamma function)
     * costs about 0.85 microseconds, and the map needs one per knot per value; the two agree to
     * 2e-13 relative (NormalScoresTest).
     *
     * @param a the argument, at least 0
     * @param g exp(-a^2)
     * @return erfc(a)
     */
    static double erfc(double a, double g) {
        if (a < SERIES_TO) {
            double t = a;
            double sum = t;
            double a2 = 2.0 * a * a;
            for (int n = 1; t > 1e-17 * sum; n++) {
                t *= a2 / (2 * n + 1);
                sum += t;
            }
            return 1.0 - TWO_OVER_SQRT_PI * g * sum;
        }
        double f = a;
        for (int k = FRACTION_TERMS; k >= 1; k--) {
            f = a + 0.5 * k / f;
        }
        return g / (SQRT_PI * f);
    }

    /**
     * Sums above this are exact to rounding even if some of their terms underflowed: a term lost to
     * underflow is below 1e-308, n of them below 1e-300 for any n below 1e8, which is 1e-20 of the sum.
     */
    private static final double LINEAR_FLOOR = 1e-280;

    /** The same sums as log-sum-exp of log Phi terms, for x far outside the knots. */
    private static double[] evaluateInLogs(double[] knots, double h, double x) {
        double maxLo = Double.NEGATIVE_INFINITY;
        double sumLo = 0.0;
        double maxHi = Double.NEGATIVE_INFINITY;
        double sumHi = 0.0;
        double maxF = Double.NEGATIVE_INFINITY;
        double sumF = 0.0;
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
            // streaming log-sum-exp: sum holds sum exp(term - max)
            if (lo > maxLo) {
                sumLo = sumLo * Math.exp(maxLo - lo) + 1.0;
                maxLo = lo;
            } else {
                sumLo += Math.exp(lo - maxLo);
            }
            if (hi > maxHi) {
                sumHi = sumHi * Math.exp(maxHi - hi) + 1.0;
                maxHi = hi;
            } else {
                sumHi += Math.exp(hi - maxHi);
            }
            double f = -0.5 * u * u;
            if (f > maxF) {
                sumF = sumF * Math.exp(maxF - f) + 1.0;
                maxF = f;
            } else {
                sumF += Math.exp(f - maxF);
            }
        }
        return finish(maxLo + Math.log(sumLo), maxHi + Math.log(sumHi), maxF + Math.log(sumF), knots.length, h);
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
     * x with z(x) = {@code z}: Newton's method with the exact derivative dz/dx, started at the knot
     * nearest the quantile Phi(z), inside a bracket (a, b) with z(a) &lt; z &lt; z(b) that every
     * evaluation narrows; a step that would leave the bracket is replaced by its midpoint, or, while
     * one end is still open, by a step of twice the distance to the far knot plus h. The map is
     * strictly increasing, so the root is unique.
     *
     * @param knots the knots, sorted ascending (not modified)
     * @param h the bandwidth
     * @param z a finite score
     * @return x
     */
    static double inverse(double[] knots, double h, double z) {
        double a = Double.NEGATIVE_INFINITY;
        double b = Double.POSITIVE_INFINITY;
        double p = Math.exp(logCdf(z));
        double x = knots[(int) Math.min(knots.length - 1, Math.max(0, Math.floor(p * knots.length)))];
        double span = knots[knots.length - 1] - knots[0] + h;
        for (int i = 0; i < MAX_INVERSE; i++) {
            double[] e = evaluate(knots, h, x);
            if (e[0] == z) {
                return x;
            }
            if (e[0] < z) {
                a = x;
            } else {
                b = x;
            }
            if (b - a <= INVERSE_TOL * (Math.abs(x) + h)) {
                break;
            }
            double next = x + (z - e[0]) / Math.exp(e[1]);
            if (!(next > a && next < b)) {
                if (Double.isInfinite(a)) {
                    next = x - 2 * span;
                    span *= 2;
                } else if (Double.isInfinite(b)) {
                    next = x + 2 * span;
                    span *= 2;
                } else {
                    next = 0.5 * (a + b);
                }
            }
            if (Math.abs(next - x) <= INVERSE_TOL * (Math.abs(x) + h)) {
                return next;
            }
            x = next;
        }
        return 0.5 * (a + b);
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
