package org.backstep.posterior;

import org.apache.commons.math3.special.Erf;
import org.backstep.schedule.Require;

/**
 * The discretized Gaussian decoder of Ho, Jain &amp; Abbeel 2020 ("Denoising Diffusion
 * Probabilistic Models", eq. 13) for one integer column (counts, ordinal codes): the probability of
 * an observed integer n is the mass that the reverse model's last Gaussian N(mu, sigma^2) puts on
 * n's bin in model space,
 * <pre>
 *   p(x_0 = n | x_1) = integral from delta_-(n) to delta_+(n) of N(x; mu, sigma^2) dx
 *                    = Phi((delta_+(n) - mu)/sigma) - Phi((delta_-(n) - mu)/sigma),
 *   delta_+(n) = +infinity if n is the highest value, else (n + 1/2 - shift) / scale,
 *   delta_-(n) = -infinity if n is the lowest value,  else (n - 1/2 - shift) / scale.
 * </pre>
 * The column is standardized as z = (n - shift) / scale, as {@code ColumnTransform} standardizes a
 * continuous column, so the bins are unit-wide in the column's own units and 1/scale wide in model
 * space; the edge bins (where the column has a lowest or highest value) reach to -infinity and
 * +infinity, as the first and last pixel values do in Ho et al. 2020, eq. 13. The probabilities of
 * all integers of the support therefore sum to 1, and a score built from them is a probability mass
 * in nats, not a density.
 *
 * <p>The mass is computed in log space without underflow or cancellation, from the standardized
 * edges a &lt; b:
 * <ul>
 *   <li>both edges below the mean: log Phi(b) + log(1 - exp(log Phi(a) - log Phi(b))), the second
 *       logarithm by log1mexp (M&auml;chler 2012, "Accurately Computing log(1 - exp(-|a|))");</li>
 *   <li>both above: the same after the reflection x -&gt; -x, which keeps upper-tail bins exact;</li>
 *   <li>straddling the mean: log1p(-(Phi(a) + Phi(-b))) when the two tails hold less than 1/2, else
 *       log((erf(b/sqrt 2) + erf(-a/sqrt 2))/2), a sum of two non-negative terms.</li>
 * </ul>
 * log Phi(x) comes from commons-math3's erfc down to x = {@value #TAIL_START} and below from the
 * continued fraction of Mills' ratio, Phi(x) = phi(x) / (z + 1/(z + 2/(z + 3/(z + ...)))), z = -x
 * (Laplace's continued fraction, Abramowitz &amp; Stegun, section 26.2), which has converged to
 * double precision there with {@value #MILLS_TERMS} terms, so that log Phi stays finite far past the
 * point (about x = -38) where Phi itself underflows. A narrow bin (at most
 * {@value #NARROW_HALF_WIDTH} standard deviations either side of its middle m, and not too far out:
 * half-width times |m| at most {@value #NARROW_SPREAD}) is instead integrated from the Taylor series
 * of the normal density about its middle, since the log Phi of its two edges would nearly cancel.
 *
 * <p>Immutable. Integers are {@code long}; the support and the integers passed in must lie within
 * +-2^52, where every integer and half-integer is a double.
 */
public final class DiscretizedGaussian {

    /** Below this standardized value log Phi comes from Mills' ratio instead of erfc. */
    static final double TAIL_START = -20.0;

    /** A bin at most twice this wide (in standard deviations) is narrow: its mass comes from a series. */
    static final double NARROW_HALF_WIDTH = 0.05;

    /** A narrow bin also has half-width times the distance of its middle from the mean at most this. */
    static final double NARROW_SPREAD = 0.25;

    /** Terms of Mills' continued fraction, evaluated from the back (ample for z &gt;= 20). */
    static final int MILLS_TERMS = 60;

    /** The largest magnitude of an integer of the support: 2^52. */
    public static final long MAX_MAGNITUDE = 1L << 52;

    private static final double SQRT_HALF = Math.sqrt(0.5);
    private static final double LOG_SQRT_TWO_PI = 0.5 * Math.log(2.0 * Math.PI);
    private static final double LN2 = Math.log(2.0);

    private final double shift;
    private final double scale;
    private final long lowest;      // meaningful only if hasLowest
    private final long highest;     // meaningful only if hasHighest
    private final boolean hasLowest;
    private final boolean hasHighest;

    private DiscretizedGaussian(double shift, double scale, long lowest, boolean hasLowest, long highest,
                                boolean hasHighest) {
        Require.finite("shift", shift);
        Require.positive("scale", scale);
        if (hasLowest) {
            magnitude("lowest", lowest);
        }
        if (hasHighest) {
            magnitude("highest", highest);
        }
        if (hasLowest && hasHighest && highest <= lowest) {
            throw new IllegalArgumentException("highest is " + highest + " and lowest " + lowest
                    + "; expected highest above lowest (a column with one value is carried, not diffused)");
        }
        this.shift = shift;
        this.scale = scale;
        this.lowest = lowest;
        this.hasLowest = hasLowest;
        this.highest = highest;
        this.hasHighest = hasHighest;
    }

    /**
     * A column whose integers lie from {@code lowest} to {@code highest}: the bin of
     * {@code lowest} reaches to -infinity and that of {@code highest} to +infinity.
     *
     * @param shift the shift of the standardization z = (n - shift) / scale, finite
     * @param scale its scale, finite and above 0
     * @param lowest the smallest integer of the support, within +-2^52
     * @param highest the largest, above {@code lowest} and within +-2^52
     * @return the decoder
     * @throws IllegalArgumentException naming the parameter that is out of range
     */
    public static DiscretizedGaussian bounded(double shift, double scale, long lowest, long highest) {
        return new DiscretizedGaussian(shift, scale, lowest, true, highest, true);
    }

    /**
     * A column of integers from {@code lowest} up, without a highest value (counts from 0): the bin
     * of {@code lowest} reaches to -infinity, every other bin is unit-wide.
     *
     * @param shift the shift of the standardization z = (n - shift) / scale, finite
     * @param scale its scale, finite and above 0
     * @param lowest the smallest integer of the support, within +-2^52
     * @return the decoder
     * @throws IllegalArgumentException naming the parameter that is out of range
     */
    public static DiscretizedGaussian boundedBelow(double shift, double scale, long lowest) {
        return new DiscretizedGaussian(shift, scale, lowest, true, 0L, false);
    }

    /**
     * A column of integers without a lowest or highest value: every bin is unit-wide.
     *
     * @param shift the shift of the standardization z = (n - shift) / scale, finite
     * @param scale its scale, finite and above 0
     * @return the decoder
     * @throws IllegalArgumentException naming the parameter that is out of range
     */
    public static DiscretizedGaussian unbounded(double shift, double scale) {
        return new DiscretizedGaussian(shift, scale, 0L, false, 0L, false);
    }

    /** @return the shift of the standardization */
    public double shift() {
        return shift;
    }

    /** @return the scale of the standardization */
    public double scale() {
        return scale;
    }

    /** @return the width of a bin in model space, 1 / scale */
    public double binWidth() {
        return 1.0 / scale;
    }

    /**
     * @param n an integer of the support
     * @return its place in model space, (n - shift) / scale
     * @throws IllegalArgumentException if {@code n} is outside the support
     */
    public double modelValue(long n) {
        return (support(n) - shift) / scale;
    }

    /**
     * @param n an integer of the support
     * @return delta_-(n): -infinity for the lowest integer, else (n - 1/2 - shift) / scale
     * @throws IllegalArgumentException if {@code n} is outside the support
     */
    public double lowerEdge(long n) {
        support(n);
        return hasLowest && n == lowest ? Double.NEGATIVE_INFINITY : (n - 0.5 - shift) / scale;
    }

    /**
     * @param n an integer of the support
     * @return delta_+(n): +infinity for the highest integer, else (n + 1/2 - shift) / scale
     * @throws IllegalArgumentException if {@code n} is outside the support
     */
    public double upperEdge(long n) {
        support(n);
        return hasHighest && n == highest ? Double.POSITIVE_INFINITY : (n + 0.5 - shift) / scale;
    }

    /**
     * log p(x_0 = n | x_1) of Ho et al. 2020, eq. 13, for one integer: the log of the mass of
     * N(mean, exp(logVariance)) between {@link #lowerEdge(long)} and {@link #upperEdge(long)}, in
     * nats, computed as the class description says. This replaces the Gaussian log density of the
     * decoder term for an integer column.
     *
     * @param n the observed integer, in the support
     * @param mean mu, the reverse model's mean at t = 1 in model space, finite
     * @param logVariance log sigma^2 of the reverse model at t = 1, with sigma finite and above 0
     * @return the log-probability, at most 0; finite unless the bin lies so far out (beyond about
     *     1e154 standard deviations) that its log-probability is not a double
     * @throws IllegalArgumentException naming the argument that is out of range
     */
    public double logProbability(long n, double mean, double logVariance) {
        double lower = lowerEdge(n);
        double upper = upperEdge(n);
        Require.finite("mean", mean);
        Require.finite("logVariance", logVariance);
        double sd = Math.exp(0.5 * logVariance);
        if (!(sd > 0.0) || Double.isInfinite(sd)) {
            throw new IllegalArgumentException("logVariance is " + logVariance
                    + "; expected a standard deviation exp(logVariance / 2) that is finite and above 0");
        }
        return Math.min(0.0, logStandardNormalMass((lower - mean) / sd, (upper - mean) / sd));
    }

    /**
     * {@link #logProbability(long, double, double)} and its gradient, for a trainer: with standardized
     * edges a = (delta_- - mu)/sigma, b = (delta_+ - mu)/sigma, P = Phi(b) - Phi(a) and phi the
     * standard normal density (taken as 0, and a phi(a) as 0, at an infinite edge),
     * <pre>
     *   d log P / d mu             = (phi(a) - phi(b)) / (sigma P)
     *   d log P / d log sigma^2    = (a phi(a) - b phi(b)) / (2 P)
     * </pre>
     * (differentiating Ho et al. 2020, eq. 13, under the integral's limits), each ratio phi / P
     * formed as exp(log phi - log P), so that it stays finite far in the tails, where both underflow.
     *
     * @param n the observed integer, in the support
     * @param mean mu, finite
     * @param logVariance log sigma^2, with sigma finite and above 0
     * @param gradient two entries, overwritten with d log P / d mean and d log P / d logVariance (modified)
     * @return log P, as {@link #logProbability(long, double, double)} returns it
     * @throws IllegalArgumentException naming the argument that is out of range, or a gradient array
     *     of another length than 2
     */
    public double logProbabilityGradientInPlace(long n, double mean, double logVariance, double[] gradient) {
        Require.notNull("gradient", gradient);
        if (gradient.length != 2) {
            throw new IllegalArgumentException("gradient has " + gradient.length
                    + " entries; expected 2 (d/d mean, d/d logVariance)");
        }
        double logP = logProbability(n, mean, logVariance);
        double sd = Math.exp(0.5 * logVariance);
        double a = (lowerEdge(n) - mean) / sd;
        double b = (upperEdge(n) - mean) / sd;
        double densityA = densityRatio(a, logP);      // phi(a) / P
        double densityB = densityRatio(b, logP);      // phi(b) / P
        gradient[0] = (densityA - densityB) / sd;
        gradient[1] = 0.5 * ((Double.isInfinite(a) ? 0.0 : a * densityA) - (Double.isInfinite(b) ? 0.0 : b * densityB));
        return logP;
    }

    /** phi(x) / P as exp(log phi(x) - log P); 0 at an infinite edge. */
    private static double densityRatio(double x, double logP) {
        return Double.isInfinite(x) ? 0.0 : Math.exp(-0.5 * x * x - LOG_SQRT_TWO_PI - logP);
    }

    /**
     * The integer whose bin holds a model-space value: floor(shift + scale z + 1/2), kept within
     * the support (the edge bins reach to infinity). Drawing z from N(mu, sigma^2) and taking this
     * integer draws from the decoder's distribution exactly.
     *
     * @param z a value in model space, finite
     * @return the integer
     * @throws IllegalArgumentException if {@code z} is not finite
     */
    public long integerAt(double z) {
        Require.finite("z", z);
        double n = Math.floor(shift + scale * z + 0.5);
        double lo = hasLowest ? lowest : -MAX_MAGNITUDE;
        double hi = hasHighest ? highest : MAX_MAGNITUDE;
        return (long) Math.max(lo, Math.min(hi, n));
    }

    /**
     * log(Phi(b) - Phi(a)) for standardized edges a &lt; b (either may be infinite): a narrow bin by
     * {@link #logNarrowMass(double, double)}, any other by the three cases of the class description.
     */
    static double logStandardNormalMass(double a, double b) {
        double half = 0.5 * (b - a);
        double mid = 0.5 * a + 0.5 * b;
        if (half <= NARROW_HALF_WIDTH && half * Math.abs(mid) <= NARROW_SPREAD) {
            return logNarrowMass(mid, half);
        }
        if (a >= 0.0) {
            return logStandardNormalMass(-b, -a);        // reflection: Phi(b) - Phi(a) = Phi(-a) - Phi(-b)
        }
        if (b <= 0.0) {
            double logB = logNormalCdf(b);
            if (logB == Double.NEGATIVE_INFINITY) {
                return logB;
            }
            return logB + log1mExp(logNormalCdf(a) - logB);
        }
        double tails = 0.5 * (Erf.erfc(-a * SQRT_HALF) + Erf.erfc(b * SQRT_HALF));   // Phi(a) + Phi(-b)
        if (tails < 0.5) {
            return Math.log1p(-tails);
        }
        return Math.log(0.5 * (Erf.erf(b * SQRT_HALF) + Erf.erf(-a * SQRT_HALF)));
    }

    /**
     * log of the mass of a narrow bin (m - h, m + h) from the Taylor series of phi about m,
     * integrated term by term:
     * <pre>
     *   Phi(m + h) - Phi(m - h) = 2 h phi(m) sum_{n &gt;= 0} He_{2n}(m) h^{2n} / (2n + 1)!
     * </pre>
     * since the k-th derivative of phi is (-1)^k He_k phi, with He the probabilists' Hermite
     * polynomials, He_{k+1}(m) = m He_k(m) - k He_{k-1}(m) (Abramowitz &amp; Stegun, chapter 22,
     * their He_n). With h &lt;= {@value #NARROW_HALF_WIDTH} and h |m| &lt;= {@value #NARROW_SPREAD} the
     * sum is 1 within about 1 percent and its terms fall fast; log phi(m) = -m^2/2 - log sqrt(2 pi)
     * never underflows.
     */
    static double logNarrowMass(double m, double h) {
        double h2 = h * h;
        double sum = 1.0;
        double hePrev = 1.0;     // He_{2n-2}, starting with He_0
        double he = m;           // He_{2n-1}, starting with He_1
        double factor = 1.0;     // h^{2n} / (2n + 1)!
        for (int n = 1; n <= 40; n++) {
            double even = m * he - (2 * n - 1) * hePrev;          // He_{2n}
            factor *= h2 / ((2.0 * n) * (2.0 * n + 1.0));
            double term = even * factor;
            sum += term;
            if (Math.abs(term) <= 1e-17 * sum) {
                break;
            }
            hePrev = even;
            he = m * even - (2 * n) * he;                          // He_{2n+1}
        }
        return Math.log(2.0 * h) - 0.5 * m * m - LOG_SQRT_TWO_PI + Math.log(sum);
    }

    /**
     * log Phi(x), the log of the standard normal distribution function: log(erfc(-x/sqrt 2)/2) for
     * {@value #TAIL_START} &lt;= x &lt; 0, log1p(-erfc(x/sqrt 2)/2) for x &gt;= 0, and below
     * {@value #TAIL_START} -x^2/2 - log sqrt(2 pi) - log(z + 1/(z + 2/(z + ...))), z = -x, the
     * continued fraction of Mills' ratio (Abramowitz &amp; Stegun, section 26.2) evaluated from its
     * {@value #MILLS_TERMS}th term back.
     */
    static double logNormalCdf(double x) {
        if (x >= TAIL_START) {
            return x < 0.0 ? Math.log(0.5 * Erf.erfc(-x * SQRT_HALF)) : Math.log1p(-0.5 * Erf.erfc(x * SQRT_HALF));
        }
        if (x == Double.NEGATIVE_INFINITY) {
            return x;
        }
        double z = -x;
        double f = z;
        for (int n = MILLS_TERMS; n >= 1; n--) {
            f = z + n / f;
        }
        return -0.5 * z * z - LOG_SQRT_TWO_PI - Math.log(f);
    }

    /** log(1 - exp(d)) for d &lt;= 0 (M&auml;chler 2012): log(-expm1(d)) near 0, log1p(-exp(d)) below -log 2. */
    static double log1mExp(double d) {
        return d > -LN2 ? Math.log(-Math.expm1(d)) : Math.log1p(-Math.exp(d));
    }

    private long support(long n) {
        if ((hasLowest && n < lowest) || (hasHighest && n > highest)) {
            throw new IllegalArgumentException("n is " + n + "; expected an integer of the column's support, "
                    + describeSupport());
        }
        return magnitude("n", n);
    }

    private static long magnitude(String name, long n) {
        if (n > MAX_MAGNITUDE || n < -MAX_MAGNITUDE) {
            throw new IllegalArgumentException(name + " is " + n + "; expected an integer within +-2^52");
        }
        return n;
    }

    private String describeSupport() {
        String lo = hasLowest ? Long.toString(lowest) : "-infinity";
        String hi = hasHighest ? Long.toString(highest) : "+infinity";
        return "from " + lo + " to " + hi;
    }

    /** @return the standardization and the support */
    @Override
    public String toString() {
        return "DiscretizedGaussian[z = (n - " + shift + ") / " + scale + ", n " + describeSupport() + "]";
    }

    /** Two decoders are equal when standardization and support are equal to the bit. */
    @Override
    public boolean equals(Object o) {
        return o instanceof DiscretizedGaussian other && Double.compare(shift, other.shift) == 0
                && Double.compare(scale, other.scale) == 0 && hasLowest == other.hasLowest
                && hasHighest == other.hasHighest && (!hasLowest || lowest == other.lowest)
                && (!hasHighest || highest == other.highest);
    }

    @Override
    public int hashCode() {
        int h = Double.hashCode(shift) * 31 + Double.hashCode(scale);
        h = h * 31 + (hasLowest ? Long.hashCode(lowest) : 7);
        return h * 31 + (hasHighest ? Long.hashCode(highest) : 11);
    }
}
