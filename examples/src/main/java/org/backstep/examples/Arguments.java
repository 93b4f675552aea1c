package org.backstep.examples;

/**
 * Reading option values from a command line, with messages that name the option; shared by the
 * example commands. Every method throws {@link IllegalArgumentException} naming the option, its
 * value and what was expected.
 */
final class Arguments {

    private Arguments() {
    }

    /** The value after an option: {@code args[i]}, or a failure saying the option needs one. */
    static String value(String[] args, int i, String option) {
        if (i >= args.length) {
            throw new IllegalArgumentException(option + " needs a value");
        }
        return args[i];
    }

    /** A number (double). */
    static double number(String v, String option) {
        try {
            return Double.parseDouble(v.trim());
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(option + " is '" + v + "'; expected a number");
        }
    }

    /** A whole number of at least {@code min}. */
    static int whole(String v, String option, int min) {
        try {
            int n = Integer.parseInt(v.trim());
            if (n < min) {
                throw new IllegalArgumentException(option + " is " + v + "; expected a whole number of at least " + min);
            }
            return n;
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(option + " is '" + v + "'; expected a whole number of at least " + min);
        }
    }

    /** A long integer, for seeds. */
    static long seed(String v, String option) {
        try {
            return Long.parseLong(v.trim());
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(option + " is '" + v + "'; expected a whole number");
        }
    }

    /** A comma-separated list of whole numbers, each at least {@code min}. */
    static int[] list(String v, String option, int min) {
        String[] parts = v.split(",");
        int[] r = new int[parts.length];
        for (int k = 0; k < parts.length; k++) {
            r[k] = whole(parts[k], option, min);
        }
        return r;
    }
}
