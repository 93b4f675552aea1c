package org.backstep.option;

/** How Adam's step size changes over the planned minibatch steps. */
public enum LearningRateSchedule {
    /** The same step size throughout. */
    CONSTANT,
    /**
     * Cosine annealing to zero over the planned steps, eta_s = eta (1 + cos(pi s / S)) / 2
     * (Loshchilov &amp; Hutter 2017, "SGDR", eq. 5, one cycle without restarts).
     */
    COSINE;

    /**
     * The step size after {@code step} of {@code total} planned steps: {@code base} for
     * {@link #CONSTANT}; for {@link #COSINE} {@code base (1 + cos(pi min(step, total) / total)) / 2},
     * floored at {@code base / 1000} so that the last steps still move.
     *
     * @param base the configured step size, above 0
     * @param step minibatch steps done, at least 0
     * @param total planned minibatch steps, at least 0 (0: the base rate)
     * @return the step size for the next step (never exactly 0)
     */
    public double rate(double base, long step, long total) {
        org.backstep.schedule.Require.positive("base", base);
        if (step < 0) {
            throw new IllegalArgumentException("step is " + step + "; expected at least 0");
        }
        if (total < 0) {
            throw new IllegalArgumentException("total is " + total + "; expected at least 0");
        }
        if (this == CONSTANT || total <= 0) {
            return base;
        }
        double f = 0.5 * (1.0 + Math.cos(Math.PI * Math.min(step, total) / total));
        return Math.max(base * f, base * 1e-3);
    }
}
