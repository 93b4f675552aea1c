package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The binomial diffusion of binary data of Sohl-Dickstein, Weiss, Maheswaranathan &amp; Ganguli
 * 2015 ("Deep Unsupervised Learning using Nonequilibrium Thermodynamics", table App.1, binomial
 * column) over a {@link NoiseSchedule}: each step keeps a bit with
 * probability 1 - beta_t and otherwise redraws it from Bernoulli(1/2), so with
 * gamma_t = alpha-bar_t = prod_{s&lt;=t} (1 - beta_s)
 * <pre>
 *   q(x_t = 1 | x_{t-1}) = x_{t-1} (1 - beta_t) + beta_t / 2
 *   q(x_t = 1 | x_0)     = x_0 gamma_t + (1 - gamma_t) / 2
 *   q(x_{t-1} | x_t, x_0) = q(x_t | x_{t-1}) q(x_{t-1} | x_0) / q(x_t | x_0)      (Bayes' rule)
 * </pre>
 * The posterior is computed from log-odds, log q(x_t | x_{t-1}=1) + log q(x_{t-1}=1 | x_0) minus
 * the same for x_{t-1} = 0, with 1 - gamma taken from the schedule without cancellation: no
 * probability is divided by another, so beta_T = 1 (gamma_T = 0) and gamma_0 = 1 give exact 0, 1
 * or 1/2 and never NaN, and posteriors that underflow in a product stay exact in the log-odds.
 * The four posteriors per step (x_0, x_t in {0, 1}) are computed once, in double.
 *
 * <p>Values x_0 may be probabilities P(x_0 = 1) in [0, 1]: the marginal and transition are linear
 * in them, and the posterior is averaged over x_0 (see {@link #posteriorOne(int, double, double)}).
 * Every method works on one cell, in double.
 */
public final class BinomialDiffusion {

    private static final double LN2 = Math.log(2.0);

    private final NoiseSchedule schedule;
    private final int steps;
    private final double[] gamma;            // t = 0..T
    private final double[] halfOneMinusGamma; // (1 - gamma_t)/2, t = 0..T
    // q(x_{t-1} = 1 | x_t, x_0) for t = 1..T, indexed [x0][xt][t]
    private final double[][][] posterior = new double[2][2][];

    private BinomialDiffusion(NoiseSchedule schedule) {
        this.schedule = schedule;
        this.steps = schedule.steps();
        gamma = new double[steps + 1];
        halfOneMinusGamma = new double[steps + 1];
        for (int t = 0; t <= steps; t++) {
            gamma[t] = schedule.alphaBar(t);
            halfOneMinusGamma[t] = 0.5 * schedule.oneMinusAlphaBar(t);
        }
        for (int x0 = 0; x0 <= 1; x0++) {
            for (int xt = 0; xt <= 1; xt++) {
                posterior[x0][xt] = new double[steps + 1];
                for (int t = 1; t <= steps; t++) {
                    posterior[x0][xt][t] = bitPosterior(t, x0, xt);
                }
            }
        }
    }

    /**
     * q(x_{t-1} = 1 | x_t = xt, x_0 = x0) for bits, as the logistic of the log-odds
     * [log q(xt | 1) + log q(x_{t-1} = 1 | x0)] - [log q(xt | 0) + log q(x_{t-1} = 0 | x0)].
     */
    private double bitPosterior(int t, int x0, int xt) {
        double beta = schedule.beta(t);
        double logKeepOrDraw = Math.log1p(-0.5 * beta);   // log(1 - beta/2): x_t equals x_{t-1}
        double logFlip = Math.log(beta) - LN2;           // log(beta/2): x_t differs from x_{t-1}
        double logWithOne = Math.log1p(gamma[t - 1]) - LN2;                     // log((1 + gamma)/2)
        double logWithout = Math.log(schedule.oneMinusAlphaBar(t - 1)) - LN2;  // log((1 - gamma)/2)
        double logPriorOne = x0 == 1 ? logWithOne : logWithout;       // log q(x_{t-1} = 1 | x0)
        double logPriorZero = x0 == 1 ? logWithout : logWithOne;      // log q(x_{t-1} = 0 | x0)
        double logLikOne = xt == 1 ? logKeepOrDraw : logFlip;         // log q(x_t = xt | x_{t-1} = 1)
        double logLikZero = xt == 1 ? logFlip : logKeepOrDraw;        // log q(x_t = xt | x_{t-1} = 0)
        double logOdds = (logLikOne + logPriorOne) - (logLikZero + logPriorZero);
        return 1.0 / (1.0 + Math.exp(-logOdds));    // exact 0 or 1 when a prior is -infinity
    }

    /**
     * @param schedule the noise schedule (immutable, kept); its alpha-bar is gamma
     * @return the binomial diffusion over it
     * @throws IllegalArgumentException if {@code schedule} is null
     */
    public static BinomialDiffusion of(NoiseSchedule schedule) {
        return new BinomialDiffusion(Require.notNull("schedule", schedule));
    }

    /** @return the schedule */
    public NoiseSchedule schedule() {
        return schedule;
    }

    // ------------------------------------------------------------------ scalar forms

    /**
     * q(x_t = 1 | x_0) = x_0 gamma_t + (1 - gamma_t)/2: the kernel of
     * {@link #transitionOne(int, double)} composed over steps 1..t (each step shrinks the distance
     * to 1/2 by 1 - beta_s).
     *
     * @param t the step, 0..T (t = 0 gives x0)
     * @param x0 the bit, or a probability P(x_0 = 1), in [0, 1]
     * @return the probability that x_t = 1
     */
    public double marginalOne(int t, double x0) {
        Require.inRange("t", t, 0, steps);
        Require.inClosed("x0", x0, 0.0, 1.0);
        return x0 * gamma[t] + halfOneMinusGamma[t];
    }

    /**
     * q(x_t = 1 | x_{t-1}) = x_{t-1} (1 - beta_t) + beta_t / 2 (Sohl-Dickstein et al. 2015, table
     * App.1, binomial forward kernel B(x_t; x_{t-1}(1 - beta_t) + 0.5 beta_t)).
     *
     * @param t the step, 1..T
     * @param xPrev the bit x_{t-1}, or a probability of 1, in [0, 1]
     * @return the probability that x_t = 1
     */
    public double transitionOne(int t, double xPrev) {
        Require.inRange("t", t, 1, steps);
        Require.inClosed("xPrev", xPrev, 0.0, 1.0);
        double beta = schedule.beta(t);
        return xPrev * (1.0 - beta) + 0.5 * beta;
    }

    /**
     * q(x_{t-1} = 1 | x_t, x_0) by Bayes' rule,
     * q(x_t | x_{t-1}=1) q(x_{t-1}=1 | x_0) / q(x_t | x_0), evaluated in log-odds (see the class
     * description). For x_0 a probability P = P(x_0 = 1) it returns the posterior averaged over
     * x_0, P q(x_{t-1}=1 | x_t, x_0=1) + (1 - P) q(x_{t-1}=1 | x_t, x_0=0), written
     * post0 + P (post1 - post0) and kept within [0, 1].
     *
     * @param t the step, 1..T
     * @param x0 the bit x_0, or P(x_0 = 1), in [0, 1]
     * @param xt the bit x_t, 0 or 1
     * @return the probability that x_{t-1} = 1
     * @throws IllegalArgumentException if t is out of range, x0 outside [0, 1] or xt not a bit
     */
    public double posteriorOne(int t, double x0, double xt) {
        Require.inRange("t", t, 1, steps);
        Require.inClosed("x0", x0, 0.0, 1.0);
        int bit = requireBit("xt", xt);
        double post1 = posterior[1][bit][t];
        double post0 = posterior[0][bit][t];
        return clampUnit(post0 + x0 * (post1 - post0));
    }

    private static int requireBit(String name, double x) {
        if (x != 0.0 && x != 1.0) {
            throw new IllegalArgumentException(name + " is " + x + "; expected a bit, 0 or 1");
        }
        return (int) x;
    }

    private static double clampUnit(double p) {
        return Math.min(1.0, Math.max(0.0, p));
    }

    /**
     * The prior term per bit, KL(q(x_T | x_0) || Bernoulli(1/2)) in nats: L_T of Ho et al. 2020,
     * eq. 5, for the binomial prior of Sohl-Dickstein et al. 2015 (whose eq. 14 writes the same
     * bound with entropies). With q = q(x_T = 1 | x_0) = (1 + u)/2, u = (2 x_0 - 1) gamma_T, the
     * relative entropy (Cover &amp; Thomas, section 2.3) becomes
     * <pre>
     *   KL = [(1 + u) log(1 + u) + (1 - u) log(1 - u)] / 2 = u atanh(u) + log1p(-u^2) / 2
     * </pre>
     * which, unlike the two-term form in q, keeps its precision near q = 1/2 where KL is about
     * u^2 / 2 (float32 could not even hold q there). It is 0 when gamma_T = 0.
     *
     * @param x0 the bit x_0, or P(x_0 = 1), in [0, 1]
     * @return the divergence, at least 0
     */
    public double priorKl(double x0) {
        Require.inClosed("x0", x0, 0.0, 1.0);
        double limit = 1.0 - Math.ulp(1.0);    // |u| = 1 only if gamma_T were 1; keeps atanh finite
        double u = Math.max(-limit, Math.min(limit, (2.0 * x0 - 1.0) * gamma[steps]));
        double atanh = 0.5 * Math.log1p(2.0 * u / (1.0 - u));
        return Math.max(0.0, u * atanh + 0.5 * Math.log1p(-u * u));
    }

    @Override
    public String toString() {
        return "BinomialDiffusion[" + schedule + "]";
    }

    /** Two binomial diffusions are equal when their schedules are. */
    @Override
    public boolean equals(Object o) {
        return o instanceof BinomialDiffusion other && schedule.equals(other.schedule);
    }

    @Override
    public int hashCode() {
        return schedule.hashCode() * 31 + 2;
    }
}
