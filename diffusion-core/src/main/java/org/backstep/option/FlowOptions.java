package org.backstep.option;

/**
 * How to integrate the probability-flow ODE of a model's continuous columns for its exact
 * likelihood (Song et al. 2021, section 4.3 and appendix D.2; see
 * {@code org.backstep.DiffusionModel#flowLikelihood}): the tolerances of the Dormand-Prince 5(4)
 * integrator (Dormand &amp; Prince 1980; commons-math3's {@code DormandPrince54Integrator}), whose
 * step is accepted when the local error estimate of each state component i stays below
 * {@code absoluteTolerance + relativeTolerance |y_i|} (the state: the record in model space and the
 * divergence integral in nats).
 *
 * <p>The defaults are {@code org.backstep.Defaults#flow()}.
 *
 * @param relativeTolerance in (0, 0.1]
 * @param absoluteTolerance in (0, 0.1]
 */
public record FlowOptions(double relativeTolerance, double absoluteTolerance) {

    /** The loosest tolerance accepted. */
    public static final double LOOSEST = 0.1;

    /** Validates both tolerances. */
    public FlowOptions {
        checkTolerance("relativeTolerance", relativeTolerance);
        checkTolerance("absoluteTolerance", absoluteTolerance);
    }

    /**
     * @param relativeTolerance in (0, 0.1]
     * @param absoluteTolerance in (0, 0.1]
     * @return the options
     */
    public static FlowOptions of(double relativeTolerance, double absoluteTolerance) {
        return new FlowOptions(relativeTolerance, absoluteTolerance);
    }

    private static void checkTolerance(String name, double value) {
        if (!(value > 0 && value <= LOOSEST)) {
            throw new IllegalArgumentException(name + " is " + value + "; expected a number in (0, " + LOOSEST + "]");
        }
    }
}
