package org.backstep.table;

/**
 * One column's invertible map z = f(x) from original units x to the model's space z, with its
 * log-Jacobian log |dz/dx|:
 * <pre>
 *   kind             forward z = f(x)              inverse x = f^-1(z)          log |dz/dx|
 *   STANDARDIZE      (x - shift) / scale           shift + scale z              -log(scale)
 *   LOG_STANDARDIZE  (log x - shift) / scale       exp(shift + scale z)         -log(scale) - log(x)
 *   CONSTANT         x - shift                     shift (for every z)          0
 *   IDENTITY         x                             z                            0
 * </pre>
 * STANDARDIZE and LOG_STANDARDIZE take shift = mean and scale = population standard deviation (of x,
 * or of log x) over the training rows. A CONSTANT column had one value in the training rows; that
 * value is {@code shift} and is carried exactly rather than diffused. IDENTITY is the map of every
 * binary column. Densities convert by the change of variables formula
 * log p_x(x) = log p_z(f(x)) + log |dz/dx| (Dinh, Sohl-Dickstein &amp; Bengio 2017, "Density
 * estimation using Real NVP", section 3.1).
 *
 * <p>A missing cell (NaN) maps to NaN both ways, except that the inverse of CONSTANT is always its
 * value.
 *
 * @param kind the kind of map
 * @param shift the mean (of x, or of log x), the carried value of a CONSTANT column, or 0 for IDENTITY
 * @param scale the population standard deviation (of x, or of log x), above 0; 1 for CONSTANT and IDENTITY
 */
public record ColumnTransform(Kind kind, double shift, double scale) {

    /** The kinds of column map. */
    public enum Kind {
        /** z = (x - mean) / sd. */
        STANDARDIZE,
        /** z = (log x - mean of log x) / sd of log x; for strictly positive columns. */
        LOG_STANDARDIZE,
        /** A column with one value in the training rows, carried exactly and not diffused. */
        CONSTANT,
        /** z = x, for binary columns. */
        IDENTITY
    }

    /**
     * Validates the parameters.
     *
     * @throws IllegalArgumentException if {@code kind} is null; for STANDARDIZE and LOG_STANDARDIZE
     *     if {@code shift} is not finite or {@code scale} is not finite and above 0; for CONSTANT if
     *     {@code shift} is not finite or {@code scale != 1}; for IDENTITY unless shift = 0 and scale = 1
     */
    public ColumnTransform {
        if (kind == null) {
            throw new IllegalArgumentException("kind is null; expected one of STANDARDIZE, LOG_STANDARDIZE, "
                    + "CONSTANT, IDENTITY");
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

    /** @return z = x, the transform of binary columns */
    public static ColumnTransform identity() {
        return new ColumnTransform(Kind.IDENTITY, 0.0, 1.0);
    }

    /**
     * z = f(x), as in the table of {@link ColumnTransform}; NaN (missing) gives NaN.
     *
     * @param x a value in original units
     * @return z in model space
     * @throws IllegalArgumentException naming {@code x} if LOG_STANDARDIZE and {@code x <= 0}
     */
    public double forward(double x) {
        if (Double.isNaN(x)) {
            return Double.NaN;
        }
        return switch (kind) {
            case STANDARDIZE -> (x - shift) / scale;
            case LOG_STANDARDIZE -> (Math.log(checkPositive(x)) - shift) / scale;
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
     */
    public double inverse(double z) {
        return switch (kind) {
            case STANDARDIZE -> shift + scale * z;
            case LOG_STANDARDIZE -> Math.exp(shift + scale * z);
            case CONSTANT -> shift;
            case IDENTITY -> z;
        };
    }

    /**
     * log |dz/dx| at x, in nats: -log(scale) for STANDARDIZE, -log(scale) - log(x) for
     * LOG_STANDARDIZE, 0 for CONSTANT and IDENTITY. Add it to a log density in model space to get the
     * log density in original units: log p_x(x) = log p_z(z) + log |dz/dx|.
     *
     * @param x an observed value in original units
     * @return the log-Jacobian
     * @throws IllegalArgumentException if {@code x} is NaN (a missing cell has no Jacobian), or if
     *     LOG_STANDARDIZE and {@code x <= 0}
     */
    public double logJacobian(double x) {
        if (Double.isNaN(x)) {
            throw new IllegalArgumentException("x is NaN; expected an observed value (a missing cell has no Jacobian)");
        }
        return switch (kind) {
            case STANDARDIZE -> -Math.log(scale);
            case LOG_STANDARDIZE -> -Math.log(scale) - Math.log(checkPositive(x));
            case CONSTANT, IDENTITY -> 0.0;
        };
    }

    private static double checkPositive(double x) {
        if (!(x > 0)) {
            throw new IllegalArgumentException("x is " + x + "; a LOG_STANDARDIZE column needs x > 0");
        }
        return x;
    }
}
