package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.Locale;

/**
 * The exact negative log-likelihood of each record under the probability-flow ODE of the model's
 * continuous columns (Song et al. 2021, "Score-Based Generative Modeling through Stochastic
 * Differential Equations", section 4.3 and appendix D.2, eq. 39):
 * <pre>
 *   -log p(x) = -log N(x(T); 0, I) - integral of div(dx/du) du
 * </pre>
 * along the ODE's path from the record to the prior. It is a number, not a draw: the same record
 * and model give the same figure, bit for bit, whatever the other records and the thread count.
 * It is an exact likelihood (up to the integrator's tolerance and the network's float32 rounding)
 * of the flow that shares the model's estimator, not a bound on the ancestral chain's likelihood
 * that {@link BoundReport} bounds: the two are likelihoods of two models made from one estimator,
 * equal only when the estimator is exact.
 *
 * <p>Two spaces, as in {@link BoundReport}: {@link #nats()} in model space,
 * {@link #natsOriginalUnits()} for the density in the table's original units,
 * -log p_x(x) = -log p_z(z) - sum_j log|dz_j/dx_j|.
 *
 * <p>Caution: a likelihood ranks records by how unusual they are under the model; it is not a
 * calibrated probability of a fault.
 */
public final class FlowLikelihood {

    private final int dimensions;
    private final double relativeTolerance;
    private final double absoluteTolerance;
    private final double[] nats;
    private final double[] prior;
    private final double[] logJacobian;
    private final int[] evaluations;

    private FlowLikelihood(int dimensions, double relativeTolerance, double absoluteTolerance, double[] nats,
                           double[] prior, double[] logJacobian, int[] evaluations) {
        this.dimensions = dimensions;
        this.relativeTolerance = relativeTolerance;
        this.absoluteTolerance = absoluteTolerance;
        this.nats = nats;
        this.prior = prior;
        this.logJacobian = logJacobian;
        this.evaluations = evaluations;
    }

    /**
     * A report from its parts. Arrays are copied.
     *
     * @param dimensions D, the continuous columns the flow runs on, at least 1
     * @param relativeTolerance the integrator's relative tolerance, above 0
     * @param absoluteTolerance the integrator's absolute tolerance, above 0
     * @param nats per record, -log p(x) in model space (not modified)
     * @param prior per record, -log N(x(T); 0, I), the prior's part of {@code nats} (not modified)
     * @param logJacobian per record, sum_j log|dz_j/dx_j| of the column transforms (not modified)
     * @param evaluations per record, the evaluations of the drift and its divergence (not modified)
     * @return the report
     */
    public static FlowLikelihood of(int dimensions, double relativeTolerance, double absoluteTolerance,
                                    double[] nats, double[] prior, double[] logJacobian, int[] evaluations) {
        Require.atLeast("dimensions", dimensions, 1);
        Require.positive("relativeTolerance", relativeTolerance);
        Require.positive("absoluteTolerance", absoluteTolerance);
        Require.notNull("nats", nats);
        int n = nats.length;
        sameLength("prior", Require.notNull("prior", prior).length, n);
        sameLength("logJacobian", Require.notNull("logJacobian", logJacobian).length, n);
        sameLength("evaluations", Require.notNull("evaluations", evaluations).length, n);
        return new FlowLikelihood(dimensions, relativeTolerance, absoluteTolerance, nats.clone(), prior.clone(),
                logJacobian.clone(), evaluations.clone());
    }

    private static void sameLength(String name, int length, int records) {
        if (length != records) {
            throw new IllegalArgumentException(name + " has length " + length + "; expected " + records
                    + ", the length of nats (one value per record)");
        }
    }

    /** @return D, the continuous columns */
    public int dimensions() {
        return dimensions;
    }

    /** @return the integrator's relative tolerance */
    public double relativeTolerance() {
        return relativeTolerance;
    }

    /** @return the integrator's absolute tolerance */
    public double absoluteTolerance() {
        return absoluteTolerance;
    }

    /** @return the number of records */
    public int records() {
        return nats.length;
    }

    /** @return per record, -log p(x) in nats, model space */
    public double[] nats() {
        return nats.clone();
    }

    /** @return per record, -log p(x) in nats for the density in original units */
    public double[] natsOriginalUnits() {
        double[] n = nats.clone();
        for (int i = 0; i < n.length; i++) {
            n[i] -= logJacobian[i];
        }
        return n;
    }

    /** @return per record, -log N(x(T); 0, I), the prior's part of {@link #nats()} */
    public double[] priorNats() {
        return prior.clone();
    }

    /** @return per record, the evaluations of the drift (each one prediction and one Jacobian trace) */
    public int[] evaluations() {
        return evaluations.clone();
    }

    /** @return the mean per record, nats, model space */
    public double meanNats() {
        return mean(nats);
    }

    /** @return the mean per record, nats, original units */
    public double meanNatsOriginalUnits() {
        return mean(natsOriginalUnits());
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
        long total = 0;
        for (int e : evaluations) {
            total += e;
        }
        return String.format(Locale.ROOT,
                "FlowLikelihood[%d records, %.4f nats/record (model space), %.4f nats/record (original units), D=%d, "
                        + "tolerances %.1e relative, %.1e absolute, %.1f evaluations/record]",
                records(), meanNats(), meanNatsOriginalUnits(), dimensions, relativeTolerance, absoluteTolerance,
                nats.length == 0 ? 0.0 : (double) total / nats.length);
    }
}
