package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * The one set of limits of Backstep, shared by the builder, the model file's loader and every
 * job, so that whatever the builder accepts the loader loads and no request reaches an allocation
 * it cannot make. A request past a limit is refused with an {@link IllegalArgumentException}
 * (a {@code ModelFileException} on load) naming the option, its value and the limit, before
 * anything is allocated. Sizes are computed in {@code long} arithmetic, so that a product of two
 * large ints is refused rather than wrapped.
 *
 * <p>Why these values (common practice, no source): they lie far above anything a table model
 * on a CPU needs (the defaults are T = 100, hidden 256 x 3, an embedding of 32) and far below what
 * overflows an int index or a Java array: 2^28 float32 values are 1 GiB, the largest entry a model
 * file may hold. They are ceilings against nonsense and hostile files, not a promise that a
 * request below them fits in the heap the caller gave the JVM.
 *
 * <table>
 *   <caption>The limits</caption>
 *   <tr><th>limit</th><th>value</th><th>what it bounds</th></tr>
 *   <tr><td>{@link #MAX_STEPS}</td><td>1,000,000</td><td>T of a schedule (builder, file)</td></tr>
 *   <tr><td>{@link #MIN_BETA}</td><td>1e-12</td><td>each beta of a training schedule (float32 keeps 1 - alpha-bar above its normal range)</td></tr>
 *   <tr><td>{@link #MAX_HIDDEN_LAYERS}</td><td>64</td><td>hidden layers of the network</td></tr>
 *   <tr><td>{@link #MAX_HIDDEN_WIDTH}</td><td>16,384</td><td>units of one hidden layer</td></tr>
 *   <tr><td>{@link #MAX_EMBEDDING_SIZE}</td><td>1,024</td><td>size of the step embedding</td></tr>
 *   <tr><td>{@link #MAX_PARAMETERS}</td><td>2^28</td><td>network parameters; also T x embedding size (the embedding table)</td></tr>
 *   <tr><td>{@link #MAX_THREADS}</td><td>1,024</td><td>worker threads</td></tr>
 *   <tr><td>{@link #MAX_DRAWS}</td><td>1,000,000</td><td>draws of a sampled bound, an imputation, a denoising, the checkpoint bound</td></tr>
 *   <tr><td>{@link #MAX_CELLS}</td><td>2^28</td><td>cells a job returns: rows x columns (x draws)</td></tr>
 *   <tr><td>{@link #MIN_SCALE}, {@link #MAX_SCALE}</td><td>1e-30, 1e30</td><td>a column transform's scale</td></tr>
 *   <tr><td>{@link #MAX_SHIFT}</td><td>1e30</td><td>the magnitude of a column transform's shift</td></tr>
 * </table>
 */
public final class Limits {

    /** The most diffusion steps T of a schedule. */
    public static final int MAX_STEPS = 1_000_000;
    /**
     * The smallest beta of a training schedule. Below it 1 - alpha-bar_1 = beta_1 and the
     * posterior variances derived from it leave the range where float32 (the network's and the
     * chain's arithmetic) holds them with full precision (its smallest normal number is 1.2e-38,
     * and sqrt(beta_1) divides the reverse mean): a beta of 1e-320 loaded and scored NaN. The
     * built-in schedules stay far above it: the linear schedule's first beta at T = 1,000,000 is
     * 1e-7, the cosine schedule's about 4e-8.
     */
    public static final double MIN_BETA = 1e-12;
    /** The most hidden layers. */
    public static final int MAX_HIDDEN_LAYERS = 64;
    /** The most units of one hidden layer. */
    public static final int MAX_HIDDEN_WIDTH = 16_384;
    /** The largest (even) size of the sinusoidal step embedding. */
    public static final int MAX_EMBEDDING_SIZE = 1_024;
    /**
     * The most float32 values of one array the model holds: the network's parameters (1 GiB, the
     * largest entry a model file may hold) and the step embedding table, T x embedding size.
     */
    public static final long MAX_PARAMETERS = 1L << 28;
    /** The most worker threads. */
    public static final int MAX_THREADS = 1_024;
    /** The most draws of one job (a sampled bound, an imputation, a denoising, the checkpoint bound). */
    public static final int MAX_DRAWS = 1_000_000;
    /** The most cells (rows x columns, times draws where a job keeps every draw) a job returns. */
    public static final long MAX_CELLS = 1L << 28;
    /** The smallest scale (a standard deviation in original units, or of the logs) of a column transform. */
    public static final double MIN_SCALE = 1e-30;
    /** The largest scale of a column transform. */
    public static final double MAX_SCALE = 1e30;
    /** The largest magnitude of a column transform's shift (a mean, of the values or of their logs). */
    public static final double MAX_SHIFT = 1e30;

    private Limits() {
    }

    /**
     * Refuses a product of sizes past {@link #MAX_CELLS}, computed in long arithmetic.
     *
     * @param what what the cells are, for the message (e.g. "count x columns of sample")
     * @param factors the sizes multiplied, each at least 0
     * @return the product
     * @throws IllegalArgumentException naming {@code what}, the product and the limit
     */
    public static long checkCells(String what, long... factors) {
        Require.notNull("what", what);
        Require.notNull("factors", factors);
        StringBuilder shown = new StringBuilder();
        boolean zero = false;
        boolean over = false;
        long product = 1;
        for (long f : factors) {
            if (f < 0) {
                throw new IllegalArgumentException(what + " has a negative size " + f);
            }
            shown.append(shown.length() == 0 ? "" : " x ").append(f);
            zero |= f == 0;
            if (!over && f != 0) {
                over = product > MAX_CELLS / f;
                product = over ? product : product * f;
            }
        }
        if (zero) {
            return 0;
        }
        over |= product > MAX_CELLS;
        if (over) {
            throw new IllegalArgumentException(what + " is " + shown + " cells; the limit is " + MAX_CELLS
                    + " (Limits.MAX_CELLS)");
        }
        return product;
    }

    /**
     * Refuses a count of draws outside 1..{@link #MAX_DRAWS}.
     *
     * @param name the parameter's name
     * @param draws the value
     * @return {@code draws}
     * @throws IllegalArgumentException naming the parameter, its value and the limit
     */
    public static int checkDraws(String name, int draws) {
        Require.notNull("name", name);
        return Require.inRange(name, draws, 1, MAX_DRAWS);
    }

    /**
     * Refuses a column transform's shift or scale outside the limits.
     *
     * @param column the column's name, for the message
     * @param shift the shift, finite with magnitude at most {@link #MAX_SHIFT}
     * @param scale the scale, in [{@link #MIN_SCALE}, {@link #MAX_SCALE}]
     * @throws IllegalArgumentException naming the column, the value and the limit
     */
    public static void checkTransform(String column, double shift, double scale) {
        Require.notNull("column", column);
        if (!(Math.abs(shift) <= MAX_SHIFT)) {
            throw new IllegalArgumentException("shift of column '" + column + "' is " + shift
                    + "; expected a finite number of magnitude at most " + MAX_SHIFT + " (Limits.MAX_SHIFT)");
        }
        if (!(scale >= MIN_SCALE && scale <= MAX_SCALE)) {
            throw new IllegalArgumentException("scale of column '" + column + "' is " + scale + "; expected a number in ["
                    + MIN_SCALE + ", " + MAX_SCALE + "] (Limits.MIN_SCALE, Limits.MAX_SCALE)");
        }
    }
}
