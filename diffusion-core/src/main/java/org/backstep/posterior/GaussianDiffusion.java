package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The Gaussian diffusion of Ho, Jain &amp; Abbeel 2020 ("Denoising Diffusion Probabilistic
 * Models") over a {@link NoiseSchedule}, in closed form:
 * <pre>
 *   q(x_t | x_0)          = N(sqrt(abar_t) x_0, (1 - abar_t) I)                        (eq. 4)
 *   q(x_{t-1} | x_t, x_0) = N(mu~_t(x_t, x_0), beta~_t I)                                (eq. 6)
 *   mu~_t  = sqrt(abar_{t-1}) beta_t / (1 - abar_t) x_0
 *          + sqrt(alpha_t) (1 - abar_{t-1}) / (1 - abar_t) x_t                           (eq. 7)
 *   beta~_t = (1 - abar_{t-1}) / (1 - abar_t) beta_t                                     (eq. 7)
 * </pre>
 * where abar is alpha-bar and abar_0 = 1. Every per-step coefficient is computed once, in double,
 * when the object is made. Steps t run over 1..T of the given schedule (a strided schedule's own
 * steps); the marginal also accepts t = 0, where it is x_0 itself.
 *
 * <p>Every method works on one coordinate, in double; the engine's chain
 * ({@code org.backstep.internal.chain.Chain}) tabulates these coefficients once. A schedule whose last
 * beta is 1 (alpha-bar_T = 0) is allowed: x_T is then pure noise and only
 * {@link #x0FromEpsilon(int, double, double)} at that step is refused.
 */
public final class GaussianDiffusion {

    private final NoiseSchedule schedule;
    private final int steps;
    // per-step tables indexed by t = 0..T (entry 0 unused unless stated)
    private final double[] sqrtAlphaBar;          // t = 0..T
    private final double[] sqrtOneMinusAlphaBar;  // t = 0..T
    private final double[] coefX0;
    private final double[] coefXt;
    private final double[] logVarianceClipped;
    private final double[] recipSqrtAlphaBar;     // 1/sqrt(abar_t); NaN where abar_t = 0 (refused)
    private final double[] epsToX0;               // sqrt(1 - abar_t)/sqrt(abar_t)

    private GaussianDiffusion(NoiseSchedule schedule) {
        this.schedule = schedule;
        this.steps = schedule.steps();
        sqrtAlphaBar = new double[steps + 1];
        sqrtOneMinusAlphaBar = new double[steps + 1];
        coefX0 = new double[steps + 1];
        coefXt = new double[steps + 1];
        logVarianceClipped = new double[steps + 1];
        recipSqrtAlphaBar = new double[steps + 1];
        epsToX0 = new double[steps + 1];
        for (int t = 0; t <= steps; t++) {
            double logAbar = schedule.logAlphaBar(t);
            sqrtAlphaBar[t] = Math.exp(0.5 * logAbar);
            sqrtOneMinusAlphaBar[t] = Math.sqrt(schedule.oneMinusAlphaBar(t));
            recipSqrtAlphaBar[t] = Double.isInfinite(logAbar) ? Double.NaN : Math.exp(-0.5 * logAbar);
            epsToX0[t] = sqrtOneMinusAlphaBar[t] * recipSqrtAlphaBar[t];
        }
        for (int t = 1; t <= steps; t++) {
            double beta = schedule.beta(t);
            double prevM = schedule.oneMinusAlphaBar(t - 1);
            double m = schedule.oneMinusAlphaBar(t);
            coefX0[t] = sqrtAlphaBar[t - 1] * beta / m;
            coefXt[t] = Math.sqrt(schedule.alpha(t)) * prevM / m;
            if (t >= 2) {
                // log beta~_t = log beta_t + log(1 - abar_{t-1}) - log(1 - abar_t), no underflow
                logVarianceClipped[t] = Math.log(beta) + Math.log(prevM) - Math.log(m);
            }
        }
        logVarianceClipped[1] = steps >= 2 ? logVarianceClipped[2] : Math.log(schedule.beta(1));
    }

    /**
     * @param schedule the noise schedule (immutable, kept)
     * @return the Gaussian diffusion over it
     * @throws IllegalArgumentException if {@code schedule} is null
     */
    public static GaussianDiffusion of(NoiseSchedule schedule) {
        return new GaussianDiffusion(Require.notNull("schedule", schedule));
    }

    /** @return the schedule */
    public NoiseSchedule schedule() {
        return schedule;
    }

    private int step(int t) {
        return Require.inRange("t", t, 1, steps);
    }

    // ------------------------------------------------------------------ scalar forms

    /**
     * The mean of q(x_t | x_0): sqrt(abar_t) x_0 (Ho et al. 2020, eq. 4).
     *
     * @param t the step, 0..T (t = 0 gives x_0)
     * @param x0 the clean value (finite)
     * @return sqrt(abar_t) x0
     */
    public double marginalMean(int t, double x0) {
        Require.inRange("t", t, 0, steps);
        Require.finite("x0", x0);
        return sqrtAlphaBar[t] * x0;
    }

    /**
     * The variance of q(x_t | x_0): 1 - abar_t (Ho et al. 2020, eq. 4).
     *
     * @param t the step, 0..T (t = 0 gives 0)
     * @return 1 - abar_t
     */
    public double marginalVariance(int t) {
        Require.inRange("t", t, 0, steps);
        return schedule.oneMinusAlphaBar(t);
    }

    /**
     * The weight of x_0 in the posterior mean: sqrt(abar_{t-1}) beta_t / (1 - abar_t)
     * (Ho et al. 2020, eq. 7). It is 1 at t = 1.
     *
     * @param t the step, 1..T
     * @return the coefficient
     */
    public double posteriorMeanCoefX0(int t) {
        return coefX0[step(t)];
    }

    /**
     * The weight of x_t in the posterior mean: sqrt(alpha_t) (1 - abar_{t-1}) / (1 - abar_t)
     * (Ho et al. 2020, eq. 7). It is 0 at t = 1.
     *
     * @param t the step, 1..T
     * @return the coefficient
     */
    public double posteriorMeanCoefXt(int t) {
        return coefXt[step(t)];
    }

    /**
     * The mean of q(x_{t-1} | x_t, x_0): mu~_t = posteriorMeanCoefX0(t) x_0 +
     * posteriorMeanCoefXt(t) x_t (Ho et al. 2020, eq. 7).
     *
     * @param t the step, 1..T
     * @param x0 the clean value (finite)
     * @param xt the noisy value at step t (finite)
     * @return mu~_t
     */
    public double posteriorMean(int t, double x0, double xt) {
        step(t);
        Require.finite("x0", x0);
        Require.finite("xt", xt);
        return coefX0[t] * x0 + coefXt[t] * xt;
    }

    /**
     * The variance of q(x_{t-1} | x_t, x_0): beta~_t = (1 - abar_{t-1}) / (1 - abar_t) beta_t
     * (Ho et al. 2020, eq. 7); 0 at t = 1.
     *
     * @param t the step, 1..T
     * @return beta~_t
     */
    public double posteriorVariance(int t) {
        return schedule.posteriorVariance(step(t));
    }

    /**
     * log beta~_t, computed as log beta_t + log(1 - abar_{t-1}) - log(1 - abar_t); at t = 1, where
     * beta~_1 = 0 has no logarithm, the value of t = 2 stands in, and for T = 1 log beta_1
     * (common practice for a reverse variance fixed to beta~, no published equation).
     *
     * @param t the step, 1..T
     * @return the clipped log posterior variance, finite
     */
    public double posteriorLogVarianceClipped(int t) {
        return logVarianceClipped[step(t)];
    }

    /**
     * x_0 from x_t and the noise that made it, eq. 4 solved for x_0 (Ho et al. 2020, section 3.2):
     * x_0 = (x_t - sqrt(1 - abar_t) eps) / sqrt(abar_t).
     *
     * @param t the step, 1..T, with abar_t &gt; 0
     * @param xt the noisy value (finite)
     * @param eps the noise (finite)
     * @return the clean value
     * @throws IllegalArgumentException if t is out of range or abar_t = 0 (x_t carries no x_0)
     */
    public double x0FromEpsilon(int t, double xt, double eps) {
        requireRecoverable(step(t), "t");
        Require.finite("xt", xt);
        Require.finite("eps", eps);
        return recipSqrtAlphaBar[t] * xt - epsToX0[t] * eps;
    }

    private void requireRecoverable(int t, String name) {
        if (Double.isNaN(recipSqrtAlphaBar[t])) {
            throw new IllegalArgumentException(name + " is " + t + ", where alpha-bar is 0 so x_t holds no trace of"
                    + " x_0; expected a step with alpha-bar above 0 (1 to " + (steps - 1) + ")");
        }
    }

    /**
     * The prior term L_T per dimension, KL(q(x_T | x_0) || N(0, 1)) in nats (Ho et al. 2020,
     * eq. 5), by {@link Divergence#gaussianKl(double, double, double, double)}:
     * 1/2 [abar_T x_0^2 - abar_T - log(1 - abar_T)].
     *
     * @param x0 the clean value (finite)
     * @return the divergence, at least 0
     */
    public double priorKl(double x0) {
        Require.finite("x0", x0);
        return Divergence.gaussianKl(sqrtAlphaBar[steps] * x0, Math.log(schedule.oneMinusAlphaBar(steps)), 0.0, 0.0);
    }

    @Override
    public String toString() {
        return "GaussianDiffusion[" + schedule + "]";
    }

    /** Two Gaussian diffusions are equal when their schedules are. */
    @Override
    public boolean equals(Object o) {
        return o instanceof GaussianDiffusion other && schedule.equals(other.schedule);
    }

    @Override
    public int hashCode() {
        return schedule.hashCode() * 31 + 1;
    }
}
