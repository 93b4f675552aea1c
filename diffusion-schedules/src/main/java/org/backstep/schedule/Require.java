package org.backstep.schedule;

/**
 * The one validation helper of Backstep. Each check throws {@link IllegalArgumentException} whose
 * message names the parameter, the value it had and what was expected, for example
 * {@code "steps is 0; expected at least 1"}.
 *
 * <p>Shared by every module; it is support code, not part of the modelling API.
 */
public final class Require {

    private Require() {
    }

    /**
     * Checks {@code value >= min}.
     *
     * @param name the parameter's name, used in the message
     * @param value the value to check (not modified)
     * @param min the smallest allowed value
     * @return {@code value}
     * @throws IllegalArgumentException if {@code value < min}
     */
    public static int atLeast(String name, int value, int min) {
        if (value < min) {
            throw new IllegalArgumentException(name + " is " + value + "; expected at least " + min);
        }
        return value;
    }

    /**
     * Checks that {@code value} is finite and {@code value > 0}.
     *
     * @param name the parameter's name
     * @param value the value to check
     * @return {@code value}
     * @throws IllegalArgumentException if not finite or not positive
     */
    public static double positive(String name, double value) {
        if (!(value > 0) || !Double.isFinite(value)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a finite number above 0");
        }
        return value;
    }

    /**
     * Checks that {@code value} is finite and {@code value >= 0}.
     *
     * @param name the parameter's name
     * @param value the value to check
     * @return {@code value}
     * @throws IllegalArgumentException if not finite or negative
     */
    public static double nonNegative(String name, double value) {
        if (!(value >= 0) || !Double.isFinite(value)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a finite number of at least 0");
        }
        return value;
    }

    /**
     * Checks that {@code value} is finite.
     *
     * @param name the parameter's name
     * @param value the value to check
     * @return {@code value}
     * @throws IllegalArgumentException if NaN or infinite
     */
    public static double finite(String name, double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a finite number");
        }
        return value;
    }

    /**
     * Checks {@code lo < value < hi} (open interval).
     *
     * @param name the parameter's name
     * @param value the value to check
     * @param lo the exclusive lower bound
     * @param hi the exclusive upper bound
     * @return {@code value}
     * @throws IllegalArgumentException if outside the open interval or NaN
     */
    public static double inOpen(String name, double value, double lo, double hi) {
        if (!(value > lo && value < hi)) {
            throw new IllegalArgumentException(
                    name + " is " + value + "; expected a number in (" + lo + ", " + hi + ")");
        }
        return value;
    }

    /**
     * Checks {@code lo <= value <= hi}.
     *
     * @param name the parameter's name
     * @param value the value to check
     * @param lo the inclusive lower bound
     * @param hi the inclusive upper bound
     * @return {@code value}
     * @throws IllegalArgumentException if outside the closed interval
     */
    public static int inRange(String name, int value, int lo, int hi) {
        if (value < lo || value > hi) {
            throw new IllegalArgumentException(
                    name + " is " + value + "; expected a whole number from " + lo + " to " + hi);
        }
        return value;
    }

    /**
     * Checks {@code lo <= value <= hi} for a double, rejecting NaN.
     *
     * @param name the parameter's name
     * @param value the value to check
     * @param lo the inclusive lower bound
     * @param hi the inclusive upper bound
     * @return {@code value}
     * @throws IllegalArgumentException if outside the closed interval or NaN
     */
    public static double inClosed(String name, double value, double lo, double hi) {
        if (!(value >= lo && value <= hi)) {
            throw new IllegalArgumentException(
                    name + " is " + value + "; expected a number in [" + lo + ", " + hi + "]");
        }
        return value;
    }

    /**
     * Checks that a reference is not null.
     *
     * @param name the parameter's name
     * @param value the reference
     * @param <T> its type
     * @return {@code value}
     * @throws IllegalArgumentException if null
     */
    public static <T> T notNull(String name, T value) {
        if (value == null) {
            throw new IllegalArgumentException(name + " is null; expected a value");
        }
        return value;
    }
}
