package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;

/**
 * The multinomial diffusion of categorical data of Hoogeboom, Nielsen, Jaini, Forr&eacute; &amp;
 * Welling 2021 ("Argmax Flows and Multinomial Diffusion: Learning Categorical Distributions",
 * section 4) over a {@link NoiseSchedule}, for one cell with K categories (K &gt;= 2). Each step
 * keeps the category with probability 1 - beta_t and otherwise redraws it uniformly from the K
 * categories; with x a one-hot vector, alpha_t = 1 - beta_t and abar_t = prod_{s&lt;=t} alpha_s:
 * <pre>
 *   q(x_t | x_{t-1})      = Cat((1 - beta_t) x_{t-1} + beta_t / K)                  (forward kernel)
 *   q(x_t | x_0)          = Cat(abar_t x_0 + (1 - abar_t) / K)                        (marginal)
 *   q(x_{t-1} | x_t, x_0) = Cat(theta / sum_k theta_k),
 *       theta = [alpha_t x_t + (1 - alpha_t)/K] * [abar_{t-1} x_0 + (1 - abar_{t-1})/K]  (posterior)
 * </pre>
 * (Hoogeboom et al. 2021, section 4; the product is element by element.) For K = 2 this is the
 * binomial diffusion of Sohl-Dickstein et al. 2015 ({@link BinomialDiffusion}) over the same
 * schedule, value for value: the kernel x (1 - beta_t) + beta_t / 2 is the same, and so is every
 * derived figure. The steps t are those of the given schedule (a strided schedule's own steps:
 * the kernels over a stride compose into the same form, with beta = 1 - abar_k / abar_{k-1}).
 *
 * <h2>The reverse model</h2>
 * The network gives one logit per category, read as a predicted distribution x0hat = softmax(logits)
 * over x_0. The reverse kernel is the posterior averaged over that prediction,
 * <pre>
 *   p(x_{t-1} = k | x_t) = sum_c x0hat_c q(x_{t-1} = k | x_t, x_0 = c)
 *                        = a_k [ abar_{t-1} x0hat_k / z_k + (1 - abar_{t-1})/K * S ],
 *   a_k = q(x_t | x_{t-1} = k),   z_c = q(x_t | x_0 = c),   S = sum_c x0hat_c / z_c,
 * </pre>
 * where z_c takes one value for c = x_t and one for every other c, so S and the whole vector cost
 * O(K). This is the parameterization of Backstep's binary columns ({@link
 * BinomialDiffusion#posteriorOne(int, double, double)} with a predicted P(x_0 = 1)), and it is the
 * exact reverse kernel q(x_{t-1} | x_t) when x0hat is the exact q(x_0 | x_t). Hoogeboom et al.
 * 2021 instead put x0hat in place of x_0 in theta before normalizing, which weights each c by
 * x0hat_c z_c rather than x0hat_c; the two agree when x0hat is one-hot. At t = 1, where
 * abar_0 = 1, the average gives p(x_0 | x_1) = x0hat exactly.
 *
 * <h2>The bound</h2>
 * The terms of the variational bound in nats (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015,
 * eq. 14) are {@link #priorKl()} (L_T), {@link #posteriorKl(int, int, int, double[])} (L_{t-1},
 * t &gt;= 2) and {@link #decoderNll(int, double[])} (L_0). Model probabilities below
 * {@link #PROBABILITY_FLOOR} are raised to it before their logarithm is taken, so that a model that
 * is certain and wrong costs about 16.1 nats, not infinity.
 *
 * <p>Everything is computed in log space in double: the per-step logarithms of the kernel and the
 * marginal are computed once, each from whichever of its two forms (log1p of a small share, or the
 * log of a sum of positive terms) has no cancellation, and every vector over the K
 * categories is built from them and the logits without forming a probability that could
 * underflow. Memory and time are O(K) per call. Categories are indices 0..K-1. Arrays passed in
 * are never modified; arrays returned are new.
 *
 * <p>One file of more than 400 lines: the kernel, marginal, posterior and bound terms share the per-step logarithms computed once, and the enumeration tests check them as one.
 */
public final class CategoricalDiffusion {

    /**
     * The smallest model probability whose logarithm enters a divergence or the decoder term: a
     * model probability below it counts as this value. It is the library's one floor,
     * {@link Divergence#PROBABILITY_FLOOR}, so that a K = 2 column scores as a binary one; -log of
     * it is about 16.1 nats.
     */
    public static final double PROBABILITY_FLOOR = Divergence.PROBABILITY_FLOOR;

    /**
     * How far from 1 the total of a distribution passed as log-probabilities may be (double
     * rounding over up to millions of categories stays far below this; an unnormalized input does
     * not).
     */
    public static final double NORMALIZATION_TOLERANCE = 1e-9;

    private static final double LOG_FLOOR = Math.log(PROBABILITY_FLOOR);

    private final NoiseSchedule schedule;
    private final int steps;
    private final int categories;
    private final double logCategories;
    private final double logOthersButOne;   // log(K - 1)
    private final double logOthersButTwo;   // log(K - 2), -infinity for K = 2
    // t = 1..T: log q(x_t = j | x_{t-1} = j) and log q(x_t = i | x_{t-1} = j), i != j
    private final double[] logKeep;
    private final double[] logMove;
    // t = 0..T: log q(x_t = x_0 | x_0) and log q(x_t = j | x_0), j != x_0
    private final double[] logStay;
    private final double[] logLeave;
    private final double[] logAlphaBar;     // t = 0..T
    private final double priorKl;

    private CategoricalDiffusion(NoiseSchedule schedule, int categories) {
        this.schedule = schedule;
        this.steps = schedule.steps();
        this.categories = categories;
        this.logCategories = Math.log(categories);
        this.logOthersButOne = Math.log(categories - 1.0);
        this.logOthersButTwo = Math.log(categories - 2.0);
        double othersShare = (categories - 1.0) / categories;   // (K - 1)/K
        logKeep = new double[steps + 1];
        logMove = new double[steps + 1];
        logStay = new double[steps + 1];
        logLeave = new double[steps + 1];
        logAlphaBar = new double[steps + 1];
        for (int t = 0; t <= steps; t++) {
            logAlphaBar[t] = schedule.logAlphaBar(t);
            double noised = schedule.oneMinusAlphaBar(t);                // 1 - abar_t, no cancellation
            logLeave[t] = Math.log(noised) - logCategories;               // log((1 - abar_t)/K); -inf at t = 0
            // log(abar_t + (1 - abar_t)/K); exactly uniform where abar_t = 0
            logStay[t] = logAlphaBar[t] == Double.NEGATIVE_INFINITY ? logLeave[t]
                    : logOneMinus(noised * othersShare, Math.exp(logAlphaBar[t]) + noised / categories);
        }
        for (int t = 1; t <= steps; t++) {
            double beta = schedule.beta(t);
            logMove[t] = Math.log(beta) - logCategories;                  // log(beta_t / K)
            // log(1 - beta_t + beta_t/K); exactly uniform where beta_t = 1
            logKeep[t] = beta == 1.0 ? logMove[t] : logOneMinus(beta * othersShare, schedule.alpha(t) + beta / categories);
        }
        priorKl = uniformPriorKl(logAlphaBar[steps], schedule.oneMinusAlphaBar(steps), categories);
    }

    /**
     * log(1 - x) for a share x in [0, 1] that is also known as the sum {@code complement} = 1 - x of
     * positive terms: log1p(-x) while x &lt;= 1/2, where 1 - x has no cancellation to fear, else the
     * log of the complement, which keeps its relative precision where x is near 1 (1 - x formed
     * from a rounded x near 1 would lose it: at K = 100,000 and alpha-bar = 4e-5 about 1e-12).
     */
    private static double logOneMinus(double x, double complement) {
        return x <= 0.5 ? Math.log1p(-x) : Math.log(complement);
    }

    /**
     * @param schedule the noise schedule (immutable, kept); beta_t is the probability that step t
     *     redraws the category
     * @param categories K, the number of categories, at least 2
     * @return the multinomial diffusion over it
     * @throws IllegalArgumentException if {@code schedule} is null or {@code categories < 2}
     */
    public static CategoricalDiffusion of(NoiseSchedule schedule, int categories) {
        Require.notNull("schedule", schedule);
        Require.atLeast("categories", categories, 2);
        return new CategoricalDiffusion(schedule, categories);
    }

    /** @return the schedule */
    public NoiseSchedule schedule() {
        return schedule;
    }

    /** @return K, the number of categories */
    public int categories() {
        return categories;
    }

    // ------------------------------------------------------------------ the forward process

    /**
     * q(x_t = to | x_{t-1} = from) = (1 - beta_t) [to = from] + beta_t / K (Hoogeboom et al. 2021,
     * section 4, forward kernel).
     *
     * @param t the step, 1..T
     * @param from the category x_{t-1}, 0..K-1
     * @param to the category x_t, 0..K-1
     * @return the probability
     * @throws IllegalArgumentException naming the argument out of range
     */
    public double transition(int t, int from, int to) {
        Require.inRange("t", t, 1, steps);
        category("from", from);
        category("to", to);
        return Math.exp(from == to ? logKeep[t] : logMove[t]);
    }

    /**
     * q(x_t = xt | x_0 = x0) = abar_t [xt = x0] + (1 - abar_t) / K (Hoogeboom et al. 2021,
     * section 4, closed-form marginal): the forward kernel composed over steps 1..t, each step
     * shrinking the distance to the uniform distribution by 1 - beta_s.
     *
     * @param t the step, 0..T (t = 0 gives [xt = x0])
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1
     * @return the probability
     * @throws IllegalArgumentException naming the argument out of range
     */
    public double marginal(int t, int x0, int xt) {
        return Math.exp(logMarginal(t, x0, xt));
    }

    /**
     * log q(x_t = xt | x_0 = x0), see {@link #marginal(int, int, int)}: log1p(-(1 - abar_t)(K - 1)/K)
     * for xt = x0, log(1 - abar_t) - log K otherwise (-infinity at t = 0).
     *
     * @param t the step, 0..T
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1
     * @return the log-probability
     * @throws IllegalArgumentException naming the argument out of range
     */
    public double logMarginal(int t, int x0, int xt) {
        Require.inRange("t", t, 0, steps);
        category("x0", x0);
        category("xt", xt);
        return x0 == xt ? logStay[t] : logLeave[t];
    }

    /**
     * Draws x_t from q(x_t | x_0) with one uniform u: x_0 if u &lt; abar_t, else category
     * floor(K (u - abar_t) / (1 - abar_t)) (at most K - 1). Given u &gt;= abar_t the second ratio is
     * uniform on [0, 1), so x_0 comes out with probability abar_t + (1 - abar_t)/K and each other
     * category with (1 - abar_t)/K, as the marginal says.
     *
     * @param t the step, 0..T
     * @param x0 the category x_0, 0..K-1
     * @param uniform a draw from U(0, 1), in [0, 1]
     * @return the category x_t
     * @throws IllegalArgumentException naming the argument out of range
     */
    public int marginalDraw(int t, int x0, double uniform) {
        Require.inRange("t", t, 0, steps);
        category("x0", x0);
        Require.inClosed("uniform", uniform, 0.0, 1.0);
        double keep = Math.exp(logAlphaBar[t]);
        if (uniform < keep) {
            return x0;
        }
        double share = (uniform - keep) / schedule.oneMinusAlphaBar(t);
        return (int) Math.min(categories - 1.0, Math.floor(share * categories));
    }

    /**
     * Draws x_T from the prior p(x_T), the uniform distribution over the K categories:
     * floor(K u), at most K - 1.
     *
     * @param uniform a draw from U(0, 1), in [0, 1]
     * @return a category
     * @throws IllegalArgumentException if {@code uniform} is outside [0, 1] or NaN
     */
    public int priorDraw(double uniform) {
        Require.inClosed("uniform", uniform, 0.0, 1.0);
        return (int) Math.min(categories - 1.0, Math.floor(uniform * categories));
    }

    // ------------------------------------------------------------------ the posterior

    /**
     * log q(x_{t-1} = k | x_t = xt, x_0 = x0) for k = 0..K-1: log theta_k - log sum_j theta_j with
     * theta as in the class description (Hoogeboom et al. 2021, section 4, posterior), from the
     * logarithms of the kernel and the marginal. theta takes at most three distinct values
     * (k = xt, k = x0, any other k), so the normalizer is a log-sum of three terms with their
     * multiplicities. At t = 1 the result is exactly 0 at x0 and -infinity elsewhere.
     *
     * @param t the step, 1..T
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1
     * @return a new array of K log-probabilities
     * @throws IllegalArgumentException naming the argument out of range
     */
    public double[] logPosterior(int t, int x0, int xt) {
        Require.inRange("t", t, 1, steps);
        category("x0", x0);
        category("xt", xt);
        double[] out = new double[categories];
        fillLogPosterior(t, x0, xt, out);
        return out;
    }

    /**
     * q(x_{t-1} = k | x_t = xt, x_0 = x0) for k = 0..K-1: the exponential of
     * {@link #logPosterior(int, int, int)}.
     *
     * @param t the step, 1..T
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1
     * @return a new array of K probabilities summing to 1
     * @throws IllegalArgumentException naming the argument out of range
     */
    public double[] posterior(int t, int x0, int xt) {
        double[] out = logPosterior(t, x0, xt);
        for (int k = 0; k < categories; k++) {
            out[k] = Math.exp(out[k]);
        }
        return out;
    }

    private void fillLogPosterior(int t, int x0, int xt, double[] out) {
        double keep = logKeep[t];
        double move = logMove[t];
        double stay = logStay[t - 1];
        double leave = logLeave[t - 1];
        double rest = move + leave;                      // theta of a k that is neither x_t nor x_0
        double atXt;
        double atX0;
        double logZ;
        if (x0 == xt) {
            atXt = keep + stay;
            atX0 = atXt;
            logZ = logSumExp(atXt, rest + logOthersButOne, Double.NEGATIVE_INFINITY);
        } else {
            atXt = keep + leave;
            atX0 = move + stay;
            logZ = logSumExp(atXt, atX0, rest + logOthersButTwo);
        }
        double restLog = rest - logZ;
        for (int k = 0; k < categories; k++) {
            out[k] = restLog;
        }
        out[xt] = atXt - logZ;
        out[x0] = atX0 - logZ;
    }

    // ------------------------------------------------------------------ the reverse model

    /**
     * log p(x_{t-1} = k | x_t = xt) for k = 0..K-1, the posterior averaged over the predicted
     * distribution softmax(x0Logits) of x_0 (see the class description), in log space:
     * <pre>
     *   log p_k = log a_k + logaddexp(log abar_{t-1} + log x0hat_k - log z_k,
     *                                 log((1 - abar_{t-1})/K) + log S),
     *   log S   = logaddexp(log x0hat_{xt} - log z_{xt}, log(sum_{c != xt} x0hat_c) - log z_{other})
     * </pre>
     * with log x0hat = logits - logsumexp(logits) and the sum over c != xt taken as a log-sum of
     * the other logits (no 1 - x0hat_{xt} cancellation). At t = 1 it is log x0hat itself.
     *
     * @param t the step, 1..T
     * @param xt the category x_t, 0..K-1
     * @param x0Logits K logits of the predicted x_0 (not modified): finite, or -infinity for a
     *     category ruled out, at least one finite; only differences between them matter
     * @return a new array of K log-probabilities
     * @throws IllegalArgumentException naming the argument out of range, or the logit that is NaN
     *     or +infinity, or a logit array of the wrong length
     */
    public double[] reverseLogProbabilities(int t, int xt, double[] x0Logits) {
        Require.inRange("t", t, 1, steps);
        category("xt", xt);
        checkLogits("x0Logits", x0Logits);
        double[] out = new double[categories];
        fillReverse(t, xt, x0Logits, out);
        return out;
    }

    private void fillReverse(int t, int xt, double[] logits, double[] out) {
        double max = max(logits, -1);
        double logNorm = logNormalizer(logits, max);      // log x0hat_k = (logits_k - max) - logNorm
        if (t == 1) {
            for (int k = 0; k < categories; k++) {
                out[k] = (logits[k] - max) - logNorm;
            }
            return;
        }
        double zSame = logStay[t];                       // log q(x_t = xt | x_0 = xt)
        double zOther = logLeave[t];                     // log q(x_t = xt | x_0 = c), c != xt
        double logAtXt = (logits[xt] - max) - logNorm;
        double logOthers = logSumExp(logits, xt) - max - logNorm;   // log sum_{c != xt} x0hat_c
        double logS = logAddExp(logAtXt - zSame, logOthers - zOther);
        double common = logLeave[t - 1] + logS;
        double abarPrev = logAlphaBar[t - 1];
        double move = logMove[t];
        for (int k = 0; k < categories; k++) {
            out[k] = move + logAddExp(abarPrev + ((logits[k] - max) - logNorm) - zOther, common);
        }
        out[xt] = logKeep[t] + logAddExp(abarPrev + logAtXt - zSame, common);
    }

    // ------------------------------------------------------------------ the bound

    /**
     * The prior term per cell, L_T = KL(q(x_T | x_0) || Cat(1/K)) in nats (Ho et al. 2020, eq. 5,
     * with the uniform prior of the multinomial diffusion). It is the same for every x_0. With
     * a = abar_T and m = 1 - abar_T, q(x_T | x_0) puts a + m/K on x_0 and m/K on each of the
     * other K - 1 categories, so
     * <pre>
     *   KL = (a + m/K) log(1 + (K - 1) a) + m (K - 1)/K log(1 - a)
     *      = (K - 1) a^2 + (a + m/K) r((K - 1) a) + m (K - 1)/K r(-a),   r(x) = log(1 + x) - x,
     * </pre>
     * where the second line removes the first-order terms that cancel in the first, so that the
     * divergence, about (K - 1) a^2 / 2 for small a, keeps its relative precision. It is 0 when
     * abar_T = 0.
     *
     * @return the divergence, at least 0
     */
    public double priorKl() {
        return priorKl;
    }

    private static double uniformPriorKl(double logAlphaBar, double oneMinusAlphaBar, int categories) {
        if (logAlphaBar == Double.NEGATIVE_INFINITY) {
            return 0.0;
        }
        double a = Math.exp(logAlphaBar);
        double m = oneMinusAlphaBar;
        double others = categories - 1.0;
        double kl = others * a * a + (a + m / categories) * log1pMinusX(others * a)
                + m * others / categories * log1pMinusX(-a);
        return Math.max(0.0, kl);
    }

    /**
     * r(x) = log(1 + x) - x without cancellation: for -1/2 &lt;= x &lt;= 1 from the series
     * log(1 + x) = 2 atanh(y) = 2 (y + y^3/3 + y^5/5 + ...), y = x/(2 + x), whose first term makes
     * 2y - x = -x^2/(2 + x); |y| &lt;= 1/3 there, so 40 terms are far more than double precision
     * needs. Elsewhere log1p(x) - x has no damaging cancellation.
     */
    static double log1pMinusX(double x) {
        if (x < -0.5 || x > 1.0) {
            return Math.log1p(x) - x;
        }
        double y = x / (2.0 + x);
        double y2 = y * y;
        double power = y * y2;
        double series = 0.0;
        for (int n = 3; n < 80; n += 2) {
            double term = power / n;
            series += term;
            if (Math.abs(term) <= 1e-17 * Math.abs(series)) {
                break;
            }
            power *= y2;
        }
        return -x * x / (2.0 + x) + 2.0 * series;
    }

    /**
     * The step term L_{t-1} = KL(q(x_{t-1} | x_t, x_0) || p(x_{t-1} | x_t)) in nats for t &gt;= 2
     * (Ho et al. 2020, eq. 5), with q from {@link #logPosterior(int, int, int)} and p from
     * {@link #reverseLogProbabilities(int, int, double[])}, by {@link #categoricalKl(double[], double[])}
     * (model probabilities floored at {@link #PROBABILITY_FLOOR}).
     *
     * @param t the step, 2..T (step 1 has the decoder term {@link #decoderNll(int, double[])})
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1
     * @param x0Logits K logits of the predicted x_0 (not modified), as for
     *     {@link #reverseLogProbabilities(int, int, double[])}
     * @return the divergence, at least 0 and finite
     * @throws IllegalArgumentException naming the argument out of range or the bad logit
     */
    public double posteriorKl(int t, int x0, int xt, double[] x0Logits) {
        if (t < 2 || t > steps) {
            throw new IllegalArgumentException("t is " + t + "; expected a whole number from 2 to " + steps
                    + " (step 1 has the decoder term, decoderNll)");
        }
        category("x0", x0);
        category("xt", xt);
        checkLogits("x0Logits", x0Logits);
        double[] q = new double[categories];
        double[] p = new double[categories];
        fillLogPosterior(t, x0, xt, q);
        fillReverse(t, xt, x0Logits, p);
        return klOfLogs(q, p);
    }

    /**
     * The decoder term L_0 = -log p(x_0 | x_1) in nats (Ho et al. 2020, eq. 5): with the averaged
     * posterior p(x_0 = k | x_1) = x0hat_k, so the term is -max(log x0hat_{x0},
     * log {@link #PROBABILITY_FLOOR}) with log x0hat = logits - logsumexp(logits). It does not
     * depend on x_1 except through the logits the network computed from it.
     *
     * @param x0 the observed category, 0..K-1
     * @param x0Logits K logits of the predicted x_0 (not modified), as for
     *     {@link #reverseLogProbabilities(int, int, double[])}
     * @return the negative log-likelihood, from 0 to about 16.1 (-log of the floor)
     * @throws IllegalArgumentException naming the argument out of range or the bad logit
     */
    public double decoderNll(int x0, double[] x0Logits) {
        category("x0", x0);
        checkLogits("x0Logits", x0Logits);
        double max = max(x0Logits, -1);
        double logP = (x0Logits[x0] - max) - logNormalizer(x0Logits, max);
        return -Math.max(Math.min(0.0, logP), LOG_FLOOR);
    }

    /**
     * The bound term of step t for one cell and its gradient with respect to the logits, for a
     * trainer: L_0 = {@link #decoderNll(int, double[])} at t = 1 and L_{t-1} =
     * {@link #posteriorKl(int, int, int, double[])} for t &gt;= 2, with
     * <pre>
     *   t = 1:   dL/dlogit_j = x0hat_j - [j = x_0]                                  (cross-entropy)
     *   t &gt;= 2:  dL/dlogit_j = x0hat_j (g_j - sum_c x0hat_c g_c),   g_c = dL/dx0hat_c
     *            g_c = -sum_k q_k P_c(k) / p_k
     *                = -[abar_{t-1} a_c q_c / p_c + (1 - abar_{t-1})/K * sum_k a_k q_k / p_k] / z_c
     * </pre>
     * where q is the posterior, p the reverse kernel, P_c = q(x_{t-1} | x_t, x_0 = c) and a, z as in
     * the class description (the chain rule through p_k = sum_c x0hat_c P_c(k) and the softmax);
     * O(K), every ratio formed in log space. The gradient is that of the divergence before the floor,
     * which only acts where a model probability is below {@link #PROBABILITY_FLOOR}.
     *
     * @param t the step, 1..T
     * @param x0 the category x_0, 0..K-1
     * @param xt the category x_t, 0..K-1 (not used at t = 1)
     * @param x0Logits K logits of the predicted x_0 (not modified), as for
     *     {@link #reverseLogProbabilities(int, int, double[])}
     * @param gradient K entries, overwritten with dL/dlogit (modified)
     * @return the bound term L_{t-1} in nats
     * @throws IllegalArgumentException naming the argument out of range, the bad logit, or a gradient
     *     array of the wrong length
     */
    public double boundTermGradientInPlace(int t, int x0, int xt, double[] x0Logits, double[] gradient) {
        Require.inRange("t", t, 1, steps);
        category("x0", x0);
        category("xt", xt);
        checkLogits("x0Logits", x0Logits);
        Require.notNull("gradient", gradient);
        if (gradient.length != categories) {
            throw new IllegalArgumentException("gradient has " + gradient.length
                    + " entries; expected one per category, " + categories);
        }
        double max = max(x0Logits, -1);
        double logNorm = logNormalizer(x0Logits, max);
        if (t == 1) {
            for (int j = 0; j < categories; j++) {
                gradient[j] = Math.exp((x0Logits[j] - max) - logNorm);
            }
            gradient[x0] -= 1.0;
            return decoderNll(x0, x0Logits);
        }
        double[] q = new double[categories];
        double[] p = new double[categories];
        fillLogPosterior(t, x0, xt, q);
        fillReverse(t, xt, x0Logits, p);
        double abarPrev = logAlphaBar[t - 1];
        double leavePrev = logLeave[t - 1];
        // log sum_k a_k q_k / p_k
        double logR = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < categories; k++) {
            double la = k == xt ? logKeep[t] : logMove[t];
            logR = logAddExp(logR, la + q[k] - p[k]);
        }
        // x0hat_c g_c, formed as one exponential (x0hat_c g_c is at least -1; g_c alone can overflow
        // where x0hat_c is tiny), and their sum, the mean of g under x0hat
        double mean = 0.0;
        for (int c = 0; c < categories; c++) {
            double la = c == xt ? logKeep[t] : logMove[t];
            double lz = c == xt ? logStay[t] : logLeave[t];
            double logShare = (x0Logits[c] - max) - logNorm;
            gradient[c] = -Math.exp(logShare + logAddExp(abarPrev + la + q[c] - p[c], leavePrev + logR) - lz);
            mean += gradient[c];
        }
        for (int c = 0; c < categories; c++) {
            gradient[c] -= Math.exp((x0Logits[c] - max) - logNorm) * mean;
        }
        return klOfLogs(q, p);
    }

    /**
     * KL(P || Q) = sum_k P_k (log P_k - log max(Q_k, {@link #PROBABILITY_FLOOR})) in nats between
     * two categorical distributions given as log-probabilities, with 0 log 0 = 0 (relative entropy,
     * Cover &amp; Thomas, "Elements of Information Theory", section 2.3). Working from logarithms,
     * no probability underflows on the way, whatever K and however small the probabilities.
     *
     * @param logP log-probabilities of P (not modified): each at most 0 or -infinity, no NaN, summing
     *     to 1 within {@link #NORMALIZATION_TOLERANCE}
     * @param logQ log-probabilities of Q (not modified), the same length, likewise
     * @return the divergence, at least 0 and finite
     * @throws IllegalArgumentException naming the array, entry and value that is bad, or both lengths
     */
    public static double categoricalKl(double[] logP, double[] logQ) {
        Require.notNull("logP", logP);
        Require.notNull("logQ", logQ);
        checkLogProbabilities("logP", logP);
        checkLogProbabilities("logQ", logQ);
        if (logP.length != logQ.length) {
            throw new IllegalArgumentException("logP has " + logP.length + " entries and logQ " + logQ.length
                    + "; expected the same number of categories");
        }
        return klOfLogs(logP, logQ);
    }

    private static double klOfLogs(double[] logP, double[] logQ) {
        double kl = 0.0;
        for (int k = 0; k < logP.length; k++) {
            double lp = logP[k];
            if (lp != Double.NEGATIVE_INFINITY) {
                kl += Math.exp(lp) * (lp - Math.max(logQ[k], LOG_FLOOR));
            }
        }
        return Math.max(0.0, kl);
    }

    /**
     * Draws a category from a distribution given as log-probabilities with one uniform u: the
     * smallest k whose cumulative probability exceeds u (inverse transform sampling), computed on
     * exp(log p - max log p) so that nothing underflows to an all-zero vector. O(K).
     *
     * @param logProbabilities K log-probabilities (not modified); they need not be normalized
     *     (only their ratios matter), -infinity for a category that cannot be drawn
     * @param uniform a draw from U(0, 1), in [0, 1]
     * @return a category k with exp(logProbabilities[k]) &gt; 0
     * @throws IllegalArgumentException if the array is null or empty, holds NaN or +infinity or
     *     only -infinity, or {@code uniform} is outside [0, 1]
     */
    public static int draw(double[] logProbabilities, double uniform) {
        Require.notNull("logProbabilities", logProbabilities);
        Require.atLeast("number of logProbabilities", logProbabilities.length, 1);
        checkLogitEntries("logProbabilities", logProbabilities);
        Require.inClosed("uniform", uniform, 0.0, 1.0);
        double max = max(logProbabilities, -1);
        double total = 0.0;
        for (double lp : logProbabilities) {
            total += Math.exp(lp - max);
        }
        double target = uniform * total;
        double cumulative = 0.0;
        int last = -1;
        for (int k = 0; k < logProbabilities.length; k++) {
            double w = Math.exp(logProbabilities[k] - max);
            if (w > 0.0) {
                cumulative += w;
                last = k;
                if (target < cumulative) {
                    return k;
                }
            }
        }
        return last;   // u = 1, or rounding in the cumulative sum
    }

    // ------------------------------------------------------------------ helpers

    private int category(String name, int value) {
        return Require.inRange(name, value, 0, categories - 1);
    }

    private void checkLogits(String name, double[] logits) {
        Require.notNull(name, logits);
        if (logits.length != categories) {
            throw new IllegalArgumentException(name + " has " + logits.length
                    + " entries; expected one per category, " + categories);
        }
        checkLogitEntries(name, logits);
    }

    private static void checkLogitEntries(String name, double[] logits) {
        boolean anyFinite = false;
        for (int k = 0; k < logits.length; k++) {
            double l = logits[k];
            if (Double.isNaN(l) || l == Double.POSITIVE_INFINITY) {
                throw new IllegalArgumentException(name + "[" + k + "] is " + l
                        + "; expected a finite number or -infinity");
            }
            anyFinite |= l != Double.NEGATIVE_INFINITY;
        }
        if (!anyFinite) {
            throw new IllegalArgumentException(name + " holds only -infinity; expected at least one finite entry");
        }
    }

    private static void checkLogProbabilities(String name, double[] logP) {
        Require.notNull(name, logP);
        Require.atLeast("number of " + name, logP.length, 1);
        for (int k = 0; k < logP.length; k++) {
            if (!(logP[k] <= 0.0)) {
                throw new IllegalArgumentException(name + "[" + k + "] is " + logP[k]
                        + "; expected a log-probability, at most 0 or -infinity");
            }
        }
        double total = Math.exp(logSumExp(logP, -1));
        if (!(Math.abs(total - 1.0) <= NORMALIZATION_TOLERANCE)) {
            throw new IllegalArgumentException(name + " sums to " + total + " as probabilities; expected 1 within "
                    + NORMALIZATION_TOLERANCE);
        }
    }

    /** The largest entry, leaving out index {@code skip} (-1 for none); -infinity if none is left. */
    private static double max(double[] v, int skip) {
        double max = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < v.length; k++) {
            if (k != skip && v[k] > max) {
                max = v[k];
            }
        }
        return max;
    }

    /** log sum_k exp(v_k) over k != skip (-1 for none); -infinity for an empty or all -infinity sum. */
    static double logSumExp(double[] v, int skip) {
        double max = max(v, skip);
        if (max == Double.NEGATIVE_INFINITY) {
            return max;
        }
        double sum = 0.0;
        for (int k = 0; k < v.length; k++) {
            if (k != skip) {
                sum += Math.exp(v[k] - max);
            }
        }
        return max + Math.log(sum);
    }

    /**
     * log sum_k exp(v_k - max) for the largest entry max of v (finite), as log1p of the sum over
     * every entry but the first largest one, so that a distribution nearly certain of one category
     * keeps the full precision of log x0hat near 0 (adding the small log back to max would round it
     * to max's ulp).
     */
    private static double logNormalizer(double[] v, double max) {
        double rest = 0.0;
        boolean skipped = false;
        for (double x : v) {
            if (!skipped && x == max) {
                skipped = true;
            } else {
                rest += Math.exp(x - max);
            }
        }
        return Math.log1p(rest);
    }

    /** log(exp(a) + exp(b)), exact when either is -infinity. */
    static double logAddExp(double a, double b) {
        double hi = Math.max(a, b);
        if (hi == Double.NEGATIVE_INFINITY) {
            return hi;
        }
        double lo = Math.min(a, b);
        return hi + Math.log1p(Math.exp(lo - hi));
    }

    private static double logSumExp(double a, double b, double c) {
        return logAddExp(logAddExp(a, b), c);
    }

    /** @return the schedule and K */
    @Override
    public String toString() {
        return "CategoricalDiffusion[K=" + categories + ", " + schedule + "]";
    }

    /** Two categorical diffusions are equal when their schedules and category counts are. */
    @Override
    public boolean equals(Object o) {
        return o instanceof CategoricalDiffusion other && categories == other.categories
                && schedule.equals(other.schedule);
    }

    @Override
    public int hashCode() {
        return schedule.hashCode() * 31 + categories;
    }
}
