package org.backstep.table;

import java.util.Arrays;

/**
 * One column's invertible map z = f(x) from original units x to the model's space z, with its
 * log-Jacobian log |dz/dx|:
 * <pre>
 *   kind             forward z = f(x)              inverse x = f^-1(z)          log |dz/dx|
 *   STANDARDIZE      (x - shift) / scale           shift + scale z              -log(scale)
 *   LOG_STANDARDIZE  (log x - shift) / scale       exp(shift + scale z)         -log(scale) - log(x)
 *   NORMAL_SCORES    Phi^-1(F(x))                  F^-1(Phi(z)), solved         log f(x) - log phi(z)
 *   CONSTANT         x - shift                     shift (for every z)          0
 *   IDENTITY         x                             z                            0
 * </pre>
 * STANDARDIZE and LOG_STANDARDIZE take shift = mean and scale = population standard deviation (of x,
 * or of log x) over the training rows. NORMAL_SCORES maps a column to the normal scores of a
 * kernel-smoothed empirical distribution function of its training values, the {@code knots} k_1..k_n:
 * F(x) = (1/n) sum_i Phi((x - k_i) / h), with Gaussian kernels of bandwidth h = {@code scale}, and
 * f = F' the kernel density estimate (1/(n h)) sum_i phi((x - k_i) / h); Phi and phi are the standard
 * normal distribution and density. If the training values were a sample of any continuous
 * distribution, z is close to standard normal, so a Gaussian model of several such columns is a
 * Gaussian copula (Liu, Lafferty &amp; Wasserman 2009, "The Nonparanormal: Semiparametric Estimation of
 * High Dimensional Undirected Graphs", JMLR 10:2295-2328, section 3, which winsorizes an unsmoothed
 * distribution function instead). Values are computed in log space, so z and the log-Jacobian are
 * finite for every finite x, however far outside the knots; the inverse is solved by Newton's method
 * inside a bracket. A CONSTANT column had one value in the training rows; that value is
 * {@code shift} and is carried exactly rather than diffused. IDENTITY is the map of every binary
 * column. Densities convert by the change of variables formula
 * log p_x(x) = log p_z(f(x)) + log |dz/dx| (Dinh, Sohl-Dickstein &amp; Bengio 2017, "Density
 * estimation using Real NVP", section 3.1).
 *
 * <p>A missing cell (NaN) maps to NaN both ways, except that the inverse of CONSTANT is always its
 * value.
 *
 * @param kind the kind of map
 * @param shift the mean (of x, or of log x), the carried value of a CONSTANT column, or 0 for
 *     IDENTITY and NORMAL_SCORES
 * @param scale the population standard deviation (of x, or of log x), or the kernel bandwidth h of
 *     NORMAL_SCORES, above 0; 1 for CONSTANT and IDENTITY
 * @param knots the sorted training values of NORMAL_SCORES (at least two distinct, all finite); empty
 *     for the other kinds. The accessor returns a copy.
 */
public record ColumnTransform(Kind kind, double shift, double scale, double[] knots) {

    private static final double[] NO_KNOTS = new double[0];

    /** The kinds of column map. */
    public enum Kind {
        /** z = (x - mean) / sd. */
        STANDARDIZE,
        /** z = (log x - mean of log x) / sd of log x; for strictly positive columns. */
        LOG_STANDARDIZE,
        /** z = Phi^-1(F(x)), F a kernel-smoothed empirical distribution function of the training values. */
        NORMAL_SCORES,
        /** A column with one value in the training rows, carried exactly and not diffused. */
        CONSTANT,
        /** z = x, for binary columns. */
        IDENTITY
    }

    /**
     * Validates the parameters and copies {@code knots}.
     *
     * @throws IllegalArgumentException if {@code kind} is null; for STANDARDIZE and LOG_STANDARDIZE
     *     if {@code shift} is not finite or {@code scale} is not finite and above 0; for NORMAL_SCORES
     *     unless shift = 0, the bandwidth {@code scale} is finite and above 0 and the knots are finite,
     *     sorted ascending and hold two distinct values; for CONSTANT if {@code shift} is not finite or
     *     {@code scale != 1}; for IDENTITY unless shift = 0 and scale = 1; for every kind but
     *     NORMAL_SCORES if {@code knots} is not empty (null counts as empty)
     */
    public ColumnTransform {
        if (kind == null) {
            throw new IllegalArgumentException("kind is null; expected one of STANDARDIZE, LOG_STANDARDIZE, "
                    + "NORMAL_SCORES, CONSTANT, IDENTITY");
        }
        knots = knots == null ? NO_KNOTS : knots.clone();
        if (kind != Kind.NORMAL_SCORES && knots.length > 0) {
            throw new IllegalArgumentException("knots has " + knots.length + " values; expected none for " + kind);
        }
        switch (kind) {
            case STANDARDIZE, LOG_STANDARDIZE -> {
                if (!Double.isFinite(shift)) {
                    throw new IllegalArgumentException("shift is " + shift + "; expected a finite mean for " + kind);
                }
                if (!(scale > 0) || !Double.isFinite(scale)) {
                    throw new IllegalArgumentException("scale is " + scale
                            + "; expected a finite standard deviation above 0 for " + kind);
                }
            }
            case NORMAL_SCORES -> {
                if (shift != 0.0) {
                    throw new IllegalArgumentException("shift is " + shift + "; expected 0 for NORMAL_SCORES");
                }
                if (!(scale > 0) || !Double.isFinite(scale)) {
                    throw new IllegalArgumentException("scale is " + scale
                            + "; expected a finite kernel bandwidth above 0 for NORMAL_SCORES");
                }
                checkKnots(knots);
            }
            case CONSTANT -> {
                if (!Double.isFinite(shift)) {
                    throw new IllegalArgumentException("shift is " + shift
                            + "; expected the finite value of the CONSTANT column");
                }
                if (scale != 1.0) {
                    throw new IllegalArgumentException("scale is " + scale + "; expected 1 for CONSTANT");
                }
            }
            case IDENTITY -> {
                if (shift != 0.0 || scale != 1.0) {
                    throw new IllegalArgumentException("shift is " + shift + " and scale is " + scale
                            + "; expected 0 and 1 for IDENTITY");
                }
            }
            default -> throw new AssertionError(kind);
        }
    }

    /**
     * The transform of a kind without knots, as before NORMAL_SCORES existed.
     *
     * @param kind STANDARDIZE, LOG_STANDARDIZE, CONSTANT or IDENTITY
     * @param shift see the record
     * @param scale see the record
     * @throws IllegalArgumentException as the canonical constructor
     */
    public ColumnTransform(Kind kind, double shift, double scale) {
        this(kind, shift, scale, NO_KNOTS);
    }

    private static void checkKnots(double[] knots) {
        if (knots.length < 2) {
            throw new IllegalArgumentException("knots has " + knots.length
                    + " values; expected at least two distinct training values for NORMAL_SCORES");
        }
        for (int i = 0; i < knots.length; i++) {
            if (!Double.isFinite(knots[i])) {
                throw new IllegalArgumentException("knots[" + i + "] is " + knots[i] + "; expected a finite value");
            }
            if (i > 0 && knots[i] < knots[i - 1]) {
                throw new IllegalArgumentException("knots[" + i + "] is " + knots[i] + ", below knots[" + (i - 1)
                        + "] = " + knots[i - 1] + "; expected the knots sorted ascending");
            }
        }
        if (knots[0] == knots[knots.length - 1]) {
            throw new IllegalArgumentException("knots are all " + knots[0]
                    + "; expected at least two distinct values (a one-valued column is CONSTANT)");
        }
    }

    /**
     * z = (x - mean) / sd.
     *
     * @param mean the mean of the training values
     * @param sd their population standard deviation, finite and above 0
     * @return the transform
     */
    public static ColumnTransform standardize(double mean, double sd) {
        return new ColumnTransform(Kind.STANDARDIZE, mean, sd);
    }

    /**
     * z = (log x - mean) / sd, for x &gt; 0.
     *
     * @param meanOfLog the mean of the logs of the training values
     * @param sdOfLog their population standard deviation, finite and above 0
     * @return the transform
     */
    public static ColumnTransform logStandardize(double meanOfLog, double sdOfLog) {
        return new ColumnTransform(Kind.LOG_STANDARDIZE, meanOfLog, sdOfLog);
    }

    /**
     * A column carried exactly at one value.
     *
     * @param value the value, finite
     * @return the transform
     */
    public static ColumnTransform constant(double value) {
        return new ColumnTransform(Kind.CONSTANT, value, 1.0);
    }

    /**
     * z = Phi^-1(F(x)) with F(x) = (1/n) sum_i Phi((x - v_i) / h) over the training values v_i (see
     * {@link ColumnTransform}).
     *
     * @param trainingValues the column's training values, finite, at least two distinct, in any order
     *     (not modified)
     * @param bandwidth h, finite and above 0 (see {@link #silvermanBandwidth(double[])})
     * @return the transform, with the values sorted as its knots
     * @throws IllegalArgumentException naming the bad value
     */
    public static ColumnTransform normalScores(double[] trainingValues, double bandwidth) {
        if (trainingValues == null) {
            throw new IllegalArgumentException("trainingValues is null; expected the column's training values");
        }
        double[] knots = trainingValues.clone();
        Arrays.sort(knots);
        return new ColumnTransform(Kind.NORMAL_SCORES, 0.0, bandwidth, knots);
    }

    /**
     * Silverman's rule of thumb for a Gaussian kernel density estimate,
     * h = 0.9 min(sd, IQR / 1.34) n^(-1/5) (Silverman 1986, "Density Estimation for Statistics and
     * Data Analysis", eq. 3.31), with the population standard deviation and the interquartile range
     * (quartiles by linear interpolation, Hyndman &amp; Fan 1996 type 7); the sd alone when the IQR is 0.
     *
     * @param values finite, at least two distinct (not modified)
     * @return h, above 0
     * @throws IllegalArgumentException if there are fewer than two distinct or a non-finite value
     */
    public static double silvermanBandwidth(double[] values) {
        if (values == null) {
            throw new IllegalArgumentException("values is null; expected at least two distinct finite values");
        }
        double[] sorted = values.clone();
        Arrays.sort(sorted);
        checkKnots(sorted);
        return NormalScores.silverman(sorted);
    }

    /** @return a copy of the knots (empty unless NORMAL_SCORES) */
    @Override
    public double[] knots() {
        return knots.clone();
    }

    /** @return z = x, the transform of binary columns */
    public static ColumnTransform identity() {
        return new ColumnTransform(Kind.IDENTITY, 0.0, 1.0);
    }

    /**
     * z = f(x), as in the table of {@link ColumnTransform}; NaN (missing) gives NaN.
     *
     * @param x a value in original units
     * @return z in model space
     * @throws IllegalArgumentException naming {@code x} if LOG_STANDARDIZE and {@code x <= 0}, or if
     *     NORMAL_SCORES and {@code x} is infinite or so far beyond the knots that z exceeds the double
     *     range (about 1.8e308 bandwidths)
     */
    public double forward(double x) {
        if (Double.isNaN(x)) {
            return Double.NaN;
        }
        return switch (kind) {
            case STANDARDIZE -> (x - shift) / scale;
            case LOG_STANDARDIZE -> (Math.log(checkPositive(x)) - shift) / scale;
            case NORMAL_SCORES -> checkResult(NormalScores.evaluate(knots, scale, checkFinite(x))[0], "x", x, "z");
            case CONSTANT -> x - shift;
            case IDENTITY -> x;
        };
    }

    /**
     * x = f^-1(z), as in the table of {@link ColumnTransform}; NaN gives NaN except for CONSTANT,
     * which always gives its value.
     *
     * @param z a value in model space
     * @return x in original units
     * @throws IllegalArgumentException if NORMAL_SCORES and {@code z} is infinite or its x exceeds the
     *     double range
     */
    public double inverse(double z) {
        return switch (kind) {
            case STANDARDIZE -> shift + scale * z;
            case LOG_STANDARDIZE -> Math.exp(shift + scale * z);
            case NORMAL_SCORES -> Double.isNaN(z) ? Double.NaN
                    : checkResult(NormalScores.inverse(knots, scale, checkFinite(z)), "z", z, "x");
            case CONSTANT -> shift;
            case IDENTITY -> z;
        };
    }

    /**
     * log |dz/dx| at x, in nats: -log(scale) for STANDARDIZE, -log(scale) - log(x) for
     * LOG_STANDARDIZE, log f(x) - log phi(z) for NORMAL_SCORES, 0 for CONSTANT and IDENTITY. Add it
     * to a log density in model space to get the log density in original units:
     * log p_x(x) = log p_z(z) + log |dz/dx|.
     *
     * @param x an observed value in original units
     * @return the log-Jacobian
     * @throws IllegalArgumentException if {@code x} is NaN (a missing cell has no Jacobian), if
     *     LOG_STANDARDIZE and {@code x <= 0}, or if NORMAL_SCORES and {@code x} is infinite or its
     *     z or log-Jacobian exceeds the double range
     */
    public double logJacobian(double x) {
        if (Double.isNaN(x)) {
            throw new IllegalArgumentException("x is NaN; expected an observed value (a missing cell has no Jacobian)");
        }
        return switch (kind) {
            case STANDARDIZE -> -Math.log(scale);
            case LOG_STANDARDIZE -> -Math.log(scale) - Math.log(checkPositive(x));
            case NORMAL_SCORES -> checkResult(NormalScores.evaluate(knots, scale, checkFinite(x))[1], "x", x,
                    "the log-Jacobian");
            case CONSTANT, IDENTITY -> 0.0;
        };
    }

    /**
     * z and log |dz/dx| at once (one pass over the knots for NORMAL_SCORES).
     *
     * @param x an observed value in original units
     * @return {forward(x), logJacobian(x)}
     * @throws IllegalArgumentException as {@link #logJacobian(double)}
     */
    public double[] forwardWithLogJacobian(double x) {
        if (kind == Kind.NORMAL_SCORES) {
            if (Double.isNaN(x)) {
                throw new IllegalArgumentException("x is NaN; expected an observed value (a missing cell has no Jacobian)");
            }
            double[] e = NormalScores.evaluate(knots, scale, checkFinite(x));
            checkResult(e[0], "x", x, "z");
            checkResult(e[1], "x", x, "the log-Jacobian");
            return e;
        }
        double lj = logJacobian(x);
        return new double[] {forward(x), lj};
    }

    /**
     * {@code result} if finite; else the NORMAL_SCORES answer at this input lies beyond the double
     * range (z beyond about 1.8e308, or a log-density below -1.8e308 between knots about 1.9e154
     * bandwidths apart), refused rather than returned as an infinity or NaN.
     */
    private double checkResult(double result, String name, double input, String what) {
        if (!Double.isFinite(result)) {
            throw new IllegalArgumentException(name + " is " + input + "; " + what + " there is " + result
                    + ", beyond the double range for this NORMAL_SCORES column (bandwidth " + scale + ", knots "
                    + knots[0] + " to " + knots[knots.length - 1] + ")");
        }
        return result;
    }

    private static double checkFinite(double v) {
        if (Double.isInfinite(v)) {
            throw new IllegalArgumentException("value is " + v + "; a NORMAL_SCORES column maps finite values only");
        }
        return v;
    }

    /**
     * Equal when kind, shift, scale (compared as by {@link Double#compare}) and knots are equal.
     *
     * @param o another object
     * @return true if equal
     */
    @Override
    public boolean equals(Object o) {
        if (this == o) {
            return true;
        }
        if (!(o instanceof ColumnTransform t)) {
            return false;
        }
        return kind == t.kind && Double.compare(shift, t.shift) == 0 && Double.compare(scale, t.scale) == 0
                && Arrays.equals(knots, t.knots);
    }

    /** @return a hash consistent with {@link #equals(Object)} */
    @Override
    public int hashCode() {
        return 31 * (31 * (31 * kind.hashCode() + Double.hashCode(shift)) + Double.hashCode(scale)) + Arrays.hashCode(knots);
    }

    /** @return kind, shift, scale and, for NORMAL_SCORES, the number and range of the knots */
    @Override
    public String toString() {
        String base = "ColumnTransform[kind=" + kind + ", shift=" + shift + ", scale=" + scale;
        return kind == Kind.NORMAL_SCORES
                ? base + ", knots=" + knots.length + " values in [" + knots[0] + ", " + knots[knots.length - 1] + "]]"
                : base + "]";
    }

    private static double checkPositive(double x) {
        if (!(x > 0)) {
            throw new IllegalArgumentException("x is " + x + "; a LOG_STANDARDIZE column needs x > 0");
        }
        return x;
    }
}
