package org.backstep;

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
     * @param base the configured step size
     * @param step minibatch steps done, 0..total
     * @param total planned minibatch steps
     * @return the step size for the next step (never exactly 0)
     */
    double rate(double base, long step, long total) {
        if (this == CONSTANT || total <= 0) {
            return base;
        }
        double f = 0.5 * (1.0 + Math.cos(Math.PI * Math.min(step, total) / total));
        return Math.max(base * f, base * 1e-3);
    }
}
