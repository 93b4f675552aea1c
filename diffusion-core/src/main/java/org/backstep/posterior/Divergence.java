package org.backstep.posterior;

import org.backstep.schedule.Require;

/**
 * KL divergences and log densities of diagonal Gaussians and Bernoullis, in nats: the terms of the
 * variational bound of a diffusion model (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015,
 * eq. 14), in double. The engine's bound ({@code org.backstep.internal.chain.BoundTerms}) takes its
 * Bernoulli divergence and its one probability floor from here.
 */
public final class Divergence {

    /**
     * The one probability floor of the library: a model's Bernoulli probability q is kept in
     * [PROBABILITY_FLOOR, 1 - PROBABILITY_FLOOR] before a logarithm, so that a model that is certain
     * and wrong costs -log(1e-7) = 16.1 nats, not infinity. 1e-7 is about the float32 network's
     * resolution of a probability near 1 (the spacing of floats below 1 is 6e-8); a smaller floor
     * would score as certain what the network cannot represent as certain (common practice, no source).
     */
    public static final double PROBABILITY_FLOOR = 1e-7;

    /** log(2 pi). */
    private static final double LOG_TWO_PI = Math.log(2.0 * Math.PI);

    private Divergence() {
    }

    // ------------------------------------------------------------------ scalar forms

    /**
     * KL(N(mean1, exp(logVar1)) || N(mean2, exp(logVar2))) in nats, the closed form
     * <pre>
     *   KL = 1/2 [ log(v2/v1) + v1/v2 + (mean1 - mean2)^2 / v2 - 1 ]
     *      = 1/2 [ expm1(d) - d + (mean1 - mean2)^2 exp(-logVar2) ],   d = logVar1 - logVar2
     * </pre>
     * (e.g. Kingma &amp; Welling 2014, "Auto-Encoding Variational Bayes", appendix B, for v2 = 1;
     * Ho et al. 2020, section 3, compute every L_{t-1} this way.) The second line has no
     * cancellation when the variances are close.
     *
     * @param mean1 mean of the first Gaussian (finite)
     * @param logVar1 log variance of the first (finite)
     * @param mean2 mean of the second (finite)
     * @param logVar2 log variance of the second (finite)
     * @return the divergence, at least 0
     * @throws IllegalArgumentException naming the first argument that is not finite
     */
    public static double gaussianKl(double mean1, double logVar1, double mean2, double logVar2) {
        Require.finite("mean1", mean1);
        Require.finite("logVar1", logVar1);
        Require.finite("mean2", mean2);
        Require.finite("logVar2", logVar2);
        double d = logVar1 - logVar2;
        double diff = mean1 - mean2;
        return 0.5 * (Math.expm1(d) - d + diff * diff * Math.exp(-logVar2));
    }

    /**
     * KL(Bern(p) || Bern(q)) in nats: p log(p/q) + (1 - p) log((1 - p)/(1 - q)), with 0 log 0 = 0
     * so that p = 0 and p = 1 are exact (relative entropy, Cover &amp; Thomas, "Elements of
     * Information Theory", section 2.3). q is first clamped by {@link #clampProbability}, so a model
     * that is certain and wrong costs about 16.1 nats, not infinity. Evaluated as
     * <pre>
     *   p log1p((p - q)/q) + (1 - p) log1p((q - p)/(1 - q))
     * </pre>
     * which keeps its relative precision when p is close to q, where the divergence is about
     * (p - q)^2 / (2 q (1 - q)) and the two logarithms of the first line nearly cancel.
     *
     * @param p the first probability of 1, in [0, 1]
     * @param q the second probability of 1, in [0, 1]
     * @return the divergence, at least 0
     * @throws IllegalArgumentException naming p or q if outside [0, 1] or NaN
     */
    public static double bernoulliKl(double p, double q) {
        Require.inClosed("p", p, 0.0, 1.0);
        Require.inClosed("q", q, 0.0, 1.0);
        return bernoulliKlClamped(p, clampProbability(q));
    }

    /**
     * q kept in [{@link #PROBABILITY_FLOOR}, 1 - {@link #PROBABILITY_FLOOR}]; NaN stays NaN.
     *
     * @param q a probability
     * @return the clamped probability
     */
    public static double clampProbability(double q) {
        return Math.min(1.0 - PROBABILITY_FLOOR, Math.max(PROBABILITY_FLOOR, q));
    }

    /**
     * {@link #bernoulliKl} for a q already clamped by {@link #clampProbability}, without checking its
     * arguments: the bound's inner loop calls it once per binary cell and step, and a NaN from a
     * diverged network must reach the caller as NaN, not as an exception from deep inside a job.
     *
     * @param p the first probability of 1, in [0, 1]
     * @param q the second, clamped
     * @return the divergence, at least 0 (NaN if an argument is NaN)
     */
    public static double bernoulliKlClamped(double p, double q) {
        double one = p == 0.0 ? 0.0 : p * Math.log1p((p - q) / q);
        double zero = p == 1.0 ? 0.0 : (1.0 - p) * Math.log1p((q - p) / (1.0 - q));
        return Math.max(0.0, one + zero);
    }

    /**
     * log N(x; mean, exp(logVar)) = -1/2 [ log(2 pi) + logVar + (x - mean)^2 exp(-logVar) ], the
     * logarithm of the normal density.
     *
     * @param x the point (finite)
     * @param mean the mean (finite)
     * @param logVar the log variance (finite)
     * @return the log density in nats
     * @throws IllegalArgumentException naming the first argument that is not finite
     */
    public static double gaussianLogDensity(double x, double mean, double logVar) {
        Require.finite("x", x);
        Require.finite("mean", mean);
        Require.finite("logVar", logVar);
        double diff = x - mean;
        return -0.5 * (LOG_TWO_PI + logVar + diff * diff * Math.exp(-logVar));
    }
}
