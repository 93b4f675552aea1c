package org.backstep;

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

    BoundReport(Method method, int steps, int draws, int dimensions, double[] continuous, double[] binary,
                double[] logJacobian, double[] standardError, double[] perStep) {
        this.method = method;
        this.steps = steps;
        this.draws = draws;
        this.dimensions = dimensions;
        this.continuous = continuous;
        this.binary = binary;
        this.logJacobian = logJacobian;
        this.standardError = standardError;
        this.perStep = perStep;
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
     *     term L_{t-1} of step t (index 1 is the decoder term L_0); empty for Monte Carlo
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
