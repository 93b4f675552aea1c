package org.backstep.report;

import java.util.Arrays;
import java.util.Locale;

/**
 * The negative variational bound of each record (Ho et al. 2020, eq. 5), an upper bound on its
 * negative log-likelihood under the model, in nats.
 *
 * <p>Two spaces: {@link #nats()} is in <em>model space</em> (continuous columns standardized or
 * log-standardized, a density there); {@link #natsOriginalUnits()} is the same bound for the
 * density in the table's original units, -log p_x(x) = -log p_z(z) - sum_j log|dz_j/dx_j|
 * (change of variables). Binary columns are probabilities and need no conversion. Bits per
 * dimension divide nats by D ln 2 over the D diffused columns.
 *
 * <p>Caution: a bound ranks records by how unusual they are under the model; it is not a
 * calibrated probability of a fault.
 */
public final class BoundReport {

    /** How the bound was computed. */
    public enum Method {
        /** All T terms, one draw of x_t per term. */
        EXACT,
        /** K steps drawn uniformly per record; unbiased, with a standard error. */
        MONTE_CARLO
    }

    private final Method method;
    private final int steps;
    private final int draws;
    private final int dimensions;
    private final double[] continuous;
    private final double[] binary;
    private final double[] logJacobian;
    private final double[] standardError;
    private final double[] perStep;

    /** Takes the arrays as they are: the factories copy them. */
    private BoundReport(Method method, int steps, int draws, int dimensions, RecordNats records, double[] standardError,
                double[] perStep) {
        org.backstep.schedule.Require.atLeast("dimensions", dimensions, 1);
        this.method = method;
        this.steps = steps;
        this.draws = draws;
        this.dimensions = dimensions;
        this.continuous = records.continuous;
        this.binary = records.binary;
        this.logJacobian = records.logJacobian;
        this.standardError = standardError;
        this.perStep = perStep;
    }

    /**
     * Per record, the parts of its bound, in nats: one value per record in each array, in row order.
     *
     * @param continuous the continuous columns' part, model space
     * @param binary the binary (and categorical) columns' part
     * @param logJacobian sum_j log|dz_j/dx_j| of the column transforms, which turns the model-space
     *     bound into the bound in original units ({@link BoundReport#natsOriginalUnits()})
     */
    public record RecordNats(double[] continuous, double[] binary, double[] logJacobian) {

        /**
         * Validates and copies the arrays (not modified).
         *
         * @throws IllegalArgumentException if an array is null or their lengths differ
         */
        public RecordNats {
            org.backstep.schedule.Require.notNull("continuous", continuous);
            int n = continuous.length;
            sameLength("binary", binary, n);
            sameLength("logJacobian", logJacobian, n);
            continuous = continuous.clone();
            binary = binary.clone();
            logJacobian = logJacobian.clone();
        }

        /** @return a copy of the continuous part */
        @Override
        public double[] continuous() {
            return continuous.clone();
        }

        /** @return a copy of the binary part */
        @Override
        public double[] binary() {
            return binary.clone();
        }

        /** @return a copy of the log-Jacobians */
        @Override
        public double[] logJacobian() {
            return logJacobian.clone();
        }

        /** @return the number of records */
        public int records() {
            return continuous.length;
        }

        @Override
        public boolean equals(Object o) {
            return o instanceof RecordNats r && Arrays.equals(continuous, r.continuous) && Arrays.equals(binary, r.binary)
                    && Arrays.equals(logJacobian, r.logJacobian);
        }

        @Override
        public int hashCode() {
            return 31 * (31 * Arrays.hashCode(continuous) + Arrays.hashCode(binary)) + Arrays.hashCode(logJacobian);
        }

        @Override
        public String toString() {
            return "RecordNats[" + continuous.length + " records]";
        }
    }

    /**
     * The exact bound: all T terms of the chain, one draw of x_t per term, so no Monte Carlo
     * standard error (the library builds these in {@code DiffusionModel.bound}; tools that assemble
     * or reload reports use this).
     *
     * @param steps T of the chain (of the strided chain, for a strided bound), at least 1
     * @param dimensions D, the number of diffused columns, at least 1
     * @param records per record, the parts of its bound
     * @param perStep the mean over records of each term, index 0 the prior term L_T, index t the term
     *     L_{t-1} of step t (copied, not modified)
     * @return the report, its method {@link Method#EXACT} and its draws T
     * @throws IllegalArgumentException naming an argument that is null or below 1
     */
    public static BoundReport exact(int steps, int dimensions, RecordNats records, double[] perStep) {
        org.backstep.schedule.Require.atLeast("steps", steps, 1);
        org.backstep.schedule.Require.notNull("records", records);
        org.backstep.schedule.Require.notNull("perStep", perStep);
        return new BoundReport(Method.EXACT, steps, steps, dimensions, records, new double[records.records()],
                perStep.clone());
    }

    /**
     * The sampled bound: per record, {@code draws} of the T steps drawn uniformly, the terms scaled
     * to an unbiased estimate with its standard error; no per-step breakdown.
     *
     * @param steps T of the chain, at least 1
     * @param draws steps drawn per record, at least 1
     * @param dimensions D, the number of diffused columns, at least 1
     * @param records per record, the parts of its bound
     * @param standardErrors per record, the Monte Carlo standard error of its bound (copied, not modified)
     * @return the report, its method {@link Method#MONTE_CARLO}
     * @throws IllegalArgumentException naming an argument that is null or below 1, or standardErrors
     *     whose length is not the number of records
     */
    public static BoundReport sampled(int steps, int draws, int dimensions, RecordNats records, double[] standardErrors) {
        org.backstep.schedule.Require.atLeast("steps", steps, 1);
        org.backstep.schedule.Require.atLeast("draws", draws, 1);
        org.backstep.schedule.Require.notNull("records", records);
        sameLength("standardErrors", standardErrors, records.records());
        return new BoundReport(Method.MONTE_CARLO, steps, draws, dimensions, records, standardErrors.clone(),
                new double[0]);
    }

    private static void sameLength(String name, double[] values, int records) {
        org.backstep.schedule.Require.notNull(name, values);
        if (values.length != records) {
            throw new IllegalArgumentException(name + " has length " + values.length + "; expected " + records
                    + ", the length of continuous (one value per record)");
        }
    }

    /** @return how it was computed */
    public Method method() {
        return method;
    }

    /** @return the number of steps of the chain it was computed on */
    public int steps() {
        return steps;
    }

    /** @return steps drawn per record (Monte Carlo) or T (exact) */
    public int draws() {
        return draws;
    }

    /** @return D, the number of diffused columns */
    public int dimensions() {
        return dimensions;
    }

    /** @return the number of records */
    public int records() {
        return continuous.length;
    }

    /** @return per record, the bound in nats in model space (continuous plus binary part) */
    public double[] nats() {
        double[] n = new double[continuous.length];
        for (int i = 0; i < n.length; i++) {
            n[i] = continuous[i] + binary[i];
        }
        return n;
    }

    /** @return per record, the bound in nats for the density in original units */
    public double[] natsOriginalUnits() {
        double[] n = nats();
        for (int i = 0; i < n.length; i++) {
            n[i] -= logJacobian[i];
        }
        return n;
    }

    /** @return per record, the continuous columns' part in model space */
    public double[] continuousNats() {
        return continuous.clone();
    }

    /** @return per record, the binary columns' part */
    public double[] binaryNats() {
        return binary.clone();
    }

    /** @return per record, the Monte Carlo standard error (zeros for the exact method) */
    public double[] standardErrors() {
        return standardError.clone();
    }

    /**
     * @return the mean of each term over the records: index 0 the prior term L_T, index t the
     *     term L_{t-1} of step t (index 1 is the decoder term L_0); empty for Monte Carlo. For a
     *     model fitted in whitened coordinates L_0 includes -log |det W|, so that the terms still
     *     add up to the bound in the standardized space
     */
    public double[] perStepMean() {
        return perStep.clone();
    }

    /** @return the mean bound per record, nats, model space */
    public double meanNats() {
        return mean(nats());
    }

    /** @return the mean bound per record, nats, original units */
    public double meanNatsOriginalUnits() {
        return mean(natsOriginalUnits());
    }

    /** @return the mean bound in bits per dimension, model space */
    public double bitsPerDimension() {
        return meanNats() / (dimensions * Math.log(2.0));
    }

    /**
     * @return the standard error of {@link #meanNats()}: the spread of the records' bounds over
     *     sqrt(records) (this includes the Monte Carlo noise of each record)
     */
    public double standardErrorOfMean() {
        double[] n = nats();
        if (n.length < 2) {
            return 0.0;
        }
        double m = mean(n);
        double ss = 0.0;
        for (double v : n) {
            ss += (v - m) * (v - m);
        }
        return Math.sqrt(ss / (n.length - 1) / n.length);
    }

    private static double mean(double[] a) {
        double s = 0.0;
        for (double v : a) {
            s += v;
        }
        return a.length == 0 ? Double.NaN : s / a.length;
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT,
                "BoundReport[%s, %d steps, %d records, %.4f nats/record (model space, +/- %.4f), %.4f nats/record "
                        + "(original units), %.4f bits/dim, D=%d]",
                method, steps, records(), meanNats(), standardErrorOfMean(), meanNatsOriginalUnits(),
                bitsPerDimension(), dimensions);
    }
}
