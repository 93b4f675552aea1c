package org.backstep.posterior;

import static org.backstep.posterior.Near.IDENTITY_REL;
import static org.backstep.posterior.Near.assertClose;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/**
 * The contract of {@link CategoricalDiffusion} over a small K and a short schedule: the marginal,
 * the posterior, the reverse kernel and every bound term against exhaustive enumeration of all
 * K^T category paths x_1..x_T of the forward chain of Hoogeboom et al. 2021, section 4, in double
 * arithmetic; the bound of an exact-kernel reverse model against the exact entropy of a known
 * categorical distribution; the draws against their distributions; and the refusals.
 */
abstract class CategoricalDiffusionContract {

    /** Enumeration sums at most K^T products of T factors: a few roundings each. */
    static final double ENUMERATION_REL = 1e-12;

    /** Below this, probabilities are compared absolutely (sums of tiny path weights). */
    static final double ENUMERATION_FLOOR = 1e-15;

    /**
     * Divergences are compared relatively above this size and absolutely (tolerance times this)
     * below: their terms, of size up to log K, nearly cancel when the distributions are close.
     */
    static final double KL_SCALE = 1e-3;

    /**
     * The bound of an exact-kernel model against entropy plus prior mismatch, in nats: sums of a
     * few hundred terms of size up to a few nats, each good to a few roundings (common practice,
     * no source).
     */
    static final double ENTROPY_TOLERANCE = 1e-12;

    /** Uniform grid of this many points for the inverse-transform draws. */
    static final int GRID = 200_000;

    /** A share of a uniform grid is within two grid cells of its probability (common practice, no source). */
    static final double GRID_TOLERANCE = 2.0 / GRID;

    /** @return the diffusion under test: K from 2 to 4 and at most 4 steps */
    protected abstract CategoricalDiffusion create();

    // ------------------------------------------------------------------ enumeration

    /**
     * The forward chain by enumeration of every path x_1..x_T, each weighted by the product of the
     * kernels of Hoogeboom et al. 2021, section 4, q(x_t | x_{t-1}) = Cat((1 - beta_t) x_{t-1} + beta_t/K),
     * written out here from the betas and not taken from the class under test.
     */
    static final class Paths {
        final int k;
        final int steps;
        final double[][][] marginal;      // [x0][t][j] = q(x_t = j | x_0)
        final double[][][][] joint;       // [x0][t][a][b] = q(x_{t-1} = a, x_t = b | x_0)
        final NoiseSchedule schedule;

        Paths(NoiseSchedule s, int k) {
            this.k = k;
            this.steps = s.steps();
            this.schedule = s;
            marginal = new double[k][steps + 1][k];
            joint = new double[k][steps + 1][k][k];
            int[] path = new int[steps + 1];
            for (int x0 = 0; x0 < k; x0++) {
                long count = (long) Math.pow(k, steps);
                for (long code = 0; code < count; code++) {
                    path[0] = x0;
                    long rest = code;
                    for (int t = 1; t <= steps; t++) {
                        path[t] = (int) (rest % k);
                        rest /= k;
                    }
                    double w = weight(path);
                    marginal[x0][0][x0] += w;
                    for (int t = 1; t <= steps; t++) {
                        marginal[x0][t][path[t]] += w;
                        joint[x0][t][path[t - 1]][path[t]] += w;
                    }
                }
            }
        }

        /** Product over t of q(x_t | x_{t-1}) along one path starting at path[0] = x_0. */
        double weight(int[] path) {
            double w = 1.0;
            for (int t = 1; t <= steps; t++) {
                w *= kernel(t, path[t - 1], path[t]);
            }
            return w;
        }

        /** Hoogeboom et al. 2021, section 4: (1 - beta_t) [to = from] + beta_t / K. */
        double kernel(int t, int from, int to) {
            double beta = schedule.beta(t);
            return (from == to ? 1.0 - beta : 0.0) + beta / k;
        }

        /** q(x_{t-1} = a | x_t = b, x_0) by Bayes' rule on the path sums. */
        double[] posterior(int x0, int t, int b) {
            double total = 0.0;
            for (int a = 0; a < k; a++) {
                total += joint[x0][t][a][b];
            }
            double[] p = new double[k];
            for (int a = 0; a < k; a++) {
                p[a] = joint[x0][t][a][b] / total;
            }
            return p;
        }
    }

    static double[] softmax(double[] logits) {
        double max = Double.NEGATIVE_INFINITY;
        for (double l : logits) {
            max = Math.max(max, l);
        }
        double total = 0.0;
        double[] p = new double[logits.length];
        for (int i = 0; i < logits.length; i++) {
            p[i] = Math.exp(logits[i] - max);
            total += p[i];
        }
        for (int i = 0; i < p.length; i++) {
            p[i] /= total;
        }
        return p;
    }

    /** Logits of a few predicted distributions: random, one with a category ruled out, one-hot-ish. */
    static double[][] someLogits(int k, long seed) {
        Random random = new Random(seed);
        double[][] out = new double[4][k];
        for (int i = 0; i < k; i++) {
            out[0][i] = 3.0 * random.nextGaussian();
            out[1][i] = random.nextGaussian();
            out[2][i] = i == 0 ? 30.0 : 0.0;    // nearly certain of category 0
            out[3][i] = 0.0;                     // uniform
        }
        out[1][k - 1] = Double.NEGATIVE_INFINITY;   // a category the model rules out
        return out;
    }

    // ------------------------------------------------------------------ forward process

    @Test
    void transitionIsThePublishedKernel() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        Paths paths = new Paths(d.schedule(), k);
        for (int t = 1; t <= paths.steps; t++) {
            for (int from = 0; from < k; from++) {
                for (int to = 0; to < k; to++) {
                    // Hoogeboom et al. 2021, section 4, forward kernel
                    assertClose(paths.kernel(t, from, to), d.transition(t, from, to), IDENTITY_REL, 1e-300,
                            "q(x_t = " + to + " | x_{t-1} = " + from + ") at t = " + t);
                }
            }
        }
    }

    @Test
    void marginalMatchesEveryPathOfTheChain() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        Paths paths = new Paths(d.schedule(), k);
        for (int x0 = 0; x0 < k; x0++) {
            for (int t = 0; t <= paths.steps; t++) {
                double total = 0.0;
                for (int j = 0; j < k; j++) {
                    // Hoogeboom et al. 2021, section 4, closed-form marginal against the path sums
                    assertClose(paths.marginal[x0][t][j], d.marginal(t, x0, j), ENUMERATION_REL, ENUMERATION_FLOOR,
                            "q(x_t = " + j + " | x_0 = " + x0 + ") at t = " + t);
                    assertClose(Math.log(paths.marginal[x0][t][j]), d.logMarginal(t, x0, j), ENUMERATION_REL, 1.0,
                            "log q(x_t = " + j + " | x_0 = " + x0 + ") at t = " + t);
                    total += d.marginal(t, x0, j);
                }
                assertClose(1.0, total, ENUMERATION_REL, 1.0, "the marginal sums to 1 (t = " + t + ")");
            }
        }
    }

    @Test
    void posteriorMatchesBayesRuleOverEveryPath() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        Paths paths = new Paths(d.schedule(), k);
        for (int x0 = 0; x0 < k; x0++) {
            for (int t = 1; t <= paths.steps; t++) {
                for (int b = 0; b < k; b++) {
                    double[] expected = paths.posterior(x0, t, b);
                    double[] actual = d.posterior(t, x0, b);
                    double[] logActual = d.logPosterior(t, x0, b);
                    double total = 0.0;
                    for (int a = 0; a < k; a++) {
                        // Hoogeboom et al. 2021, section 4, posterior theta_post against Bayes' rule on path sums
                        assertClose(expected[a], actual[a], ENUMERATION_REL, ENUMERATION_FLOOR,
                                "q(x_{t-1} = " + a + " | x_t = " + b + ", x_0 = " + x0 + ") at t = " + t);
                        assertEquals(Math.exp(logActual[a]), actual[a], 0.0, "posterior is exp(logPosterior)");
                        total += actual[a];
                    }
                    assertClose(1.0, total, ENUMERATION_REL, 1.0, "the posterior sums to 1");
                }
            }
        }
    }

    @Test
    void reverseKernelIsThePosteriorAveragedOverThePredictedX0() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        Paths paths = new Paths(d.schedule(), k);
        for (double[] logits : someLogits(k, 5)) {
            double[] x0hat = softmax(logits);
            for (int t = 1; t <= paths.steps; t++) {
                for (int b = 0; b < k; b++) {
                    double[] rev = d.reverseLogProbabilities(t, b, logits);
                    for (int a = 0; a < k; a++) {
                        // sum_c x0hat_c q(x_{t-1} = a | x_t = b, x_0 = c), the posteriors from the path sums
                        double expected = 0.0;
                        for (int c = 0; c < k; c++) {
                            expected += x0hat[c] * paths.posterior(c, t, b)[a];
                        }
                        assertClose(expected, Math.exp(rev[a]), ENUMERATION_REL, ENUMERATION_FLOOR,
                                "p(x_{t-1} = " + a + " | x_t = " + b + ") at t = " + t);
                    }
                }
            }
        }
    }

    // ------------------------------------------------------------------ bound terms

    @Test
    void boundTermsMatchDirectSums() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        Paths paths = new Paths(d.schedule(), k);
        int steps = paths.steps;
        double floor = CategoricalDiffusion.PROBABILITY_FLOOR;
        for (int x0 = 0; x0 < k; x0++) {
            // L_T = KL(q(x_T | x_0) || Cat(1/K)) (Ho et al. 2020, eq. 5) summed over the K outcomes from the paths
            double prior = 0.0;
            for (int j = 0; j < k; j++) {
                double q = paths.marginal[x0][steps][j];
                if (q > 0) {
                    prior += q * Math.log(q * k);
                }
            }
            assertClose(prior, d.priorKl(), 1e-10, KL_SCALE, "prior term at x_0 = " + x0);
            for (double[] logits : someLogits(k, 7)) {
                double[] x0hat = softmax(logits);
                // L_0 = -log p(x_0 | x_1) = -log x0hat_{x_0} (Ho et al. 2020, eq. 5), floored as documented
                assertClose(-Math.log(Math.max(x0hat[x0], floor)), d.decoderNll(x0, logits), IDENTITY_REL, KL_SCALE,
                        "decoder term at x_0 = " + x0);
                for (int t = 2; t <= steps; t++) {
                    for (int b = 0; b < k; b++) {
                        double[] q = paths.posterior(x0, t, b);
                        double kl = 0.0;
                        for (int a = 0; a < k; a++) {
                            double p = 0.0;
                            for (int c = 0; c < k; c++) {
                                p += x0hat[c] * paths.posterior(c, t, b)[a];
                            }
                            if (q[a] > 0) {
                                kl += q[a] * Math.log(q[a] / Math.max(p, floor));   // sum_a q log(q / p)
                            }
                        }
                        // L_{t-1} = KL(q(x_{t-1} | x_t, x_0) || p(x_{t-1} | x_t)) (Ho et al. 2020, eq. 5)
                        assertClose(Math.max(0.0, kl), d.posteriorKl(t, x0, b, logits), 1e-10, KL_SCALE,
                                "L_{t-1} at t = " + t + ", x_0 = " + x0 + ", x_t = " + b);
                    }
                }
            }
        }
    }

    /**
     * With the exact reverse kernel (the network's prediction replaced by the exact q(x_0 | x_t) of a
     * known data distribution pi), the bound is -E log q(x_0) plus the prior mismatch:
     * E_q[-log p(x_{0:T}) + log q(x_{1:T} | x_0)] = H(pi) + KL(q(x_T) || Cat(1/K)) (Sohl-Dickstein et
     * al. 2015, eq. 11 to 14; Ho et al. 2020, eq. 3 and 5). It is checked two ways: the class's terms
     * summed over the exact distribution of (x_0, x_t), and the bound itself summed over every
     * path with the exact reverse kernels from the enumeration.
     */
    @Test
    void exactKernelBoundIsTheEntropyPlusThePriorMismatch() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        NoiseSchedule s = d.schedule();
        Paths paths = new Paths(s, k);
        int steps = paths.steps;
        double[] pi = new double[k];
        double norm = 0.0;
        for (int c = 0; c < k; c++) {
            pi[c] = 1.0 + 3.0 * c * c;    // a known, uneven categorical distribution
            norm += pi[c];
        }
        double entropy = 0.0;
        for (int c = 0; c < k; c++) {
            pi[c] /= norm;
            entropy -= pi[c] * Math.log(pi[c]);   // H(pi) = -sum pi log pi (Cover & Thomas, eq. 2.1)
        }
        // exact q(x_T) and its divergence from the uniform prior
        double mismatch = 0.0;
        for (int j = 0; j < k; j++) {
            double qT = 0.0;
            for (int c = 0; c < k; c++) {
                qT += pi[c] * paths.marginal[c][steps][j];
            }
            mismatch += qT * Math.log(qT * k);
        }
        if (s.alphaBar(steps) == 0.0) {
            assertEquals(0.0, d.priorKl(), 0.0, "beta = 1 somewhere leaves x_T exactly uniform");
        }
        // exact q(x_0 = c | x_t = b) as logits (unnormalized log-probabilities), t = 1..T
        double[][][] logits = new double[steps + 1][k][k];
        for (int t = 1; t <= steps; t++) {
            for (int b = 0; b < k; b++) {
                for (int c = 0; c < k; c++) {
                    logits[t][b][c] = Math.log(pi[c] * paths.marginal[c][t][b]);
                }
            }
        }
        // the averaged posterior with the exact q(x_0 | x_t) is the exact reverse kernel q(x_{t-1} | x_t)
        double[][][] exactReverse = new double[steps + 1][k][k];   // [t][b][a]
        for (int t = 1; t <= steps; t++) {
            for (int b = 0; b < k; b++) {
                double total = 0.0;
                for (int a = 0; a < k; a++) {
                    for (int c = 0; c < k; c++) {
                        exactReverse[t][b][a] += pi[c] * paths.joint[c][t][a][b];
                    }
                    total += exactReverse[t][b][a];
                }
                double[] rev = d.reverseLogProbabilities(t, b, logits[t][b]);
                for (int a = 0; a < k; a++) {
                    exactReverse[t][b][a] /= total;
                    // Bayes' rule on the path sums: q(x_{t-1} = a | x_t = b)
                    assertClose(exactReverse[t][b][a], Math.exp(rev[a]), ENUMERATION_REL, ENUMERATION_FLOOR,
                            "exact reverse kernel at t = " + t + ", x_t = " + b + ", x_{t-1} = " + a);
                }
            }
        }
        // 1. the class's bound terms under the exact distribution of (x_0, x_t)
        double terms = 0.0;
        for (int x0 = 0; x0 < k; x0++) {
            double perRecord = d.priorKl();
            for (int b = 0; b < k; b++) {
                perRecord += paths.marginal[x0][1][b] * d.decoderNll(x0, logits[1][b]);
                for (int t = 2; t <= steps; t++) {
                    perRecord += paths.marginal[x0][t][b] * d.posteriorKl(t, x0, b, logits[t][b]);
                }
            }
            terms += pi[x0] * perRecord;
        }
        // exact model probabilities below the floor (tiny betas) count as the floor: each term moves by
        // at most about the floor (Divergence.PROBABILITY_FLOOR's contract)
        double floorShare = steps * CategoricalDiffusion.PROBABILITY_FLOOR;
        assertEquals(entropy + mismatch, terms, ENTROPY_TOLERANCE + floorShare, "sum of the bound terms, exact kernels");
        // 2. the bound itself over every path: -log p(x_T) - sum_t log p(x_{t-1} | x_t) + sum_t log q(x_t | x_{t-1})
        double direct = 0.0;
        int[] path = new int[steps + 1];
        long count = (long) Math.pow(k, steps);
        for (int x0 = 0; x0 < k; x0++) {
            for (long code = 0; code < count; code++) {
                path[0] = x0;
                long rest = code;
                for (int t = 1; t <= steps; t++) {
                    path[t] = (int) (rest % k);
                    rest /= k;
                }
                double w = pi[x0] * paths.weight(path);
                if (w == 0.0) {
                    continue;
                }
                double nats = Math.log(k);
                for (int t = 1; t <= steps; t++) {
                    nats += Math.log(paths.kernel(t, path[t - 1], path[t])) - Math.log(exactReverse[t][path[t]][path[t - 1]]);
                }
                direct += w * nats;
            }
        }
        assertEquals(entropy + mismatch, direct, ENTROPY_TOLERANCE, "the bound summed over every path");
    }

    /** Central differences with step {@link #FD_STEP}: truncation about h^2, rounding about 1e-16 L / h. */
    static final double FD_REL = 1e-6;

    /** Below this size gradients are compared absolutely (FD_REL times it). */
    static final double FD_FLOOR = 1e-2;

    static final double FD_STEP = 1e-5;

    /**
     * The gradient is that of the divergence before the floor (as a trainer wants it: a model
     * certain and wrong is still pushed back), so it is checked against central differences of the
     * unfloored term, -log x0hat_{x_0} at t = 1 and sum_k q_k (log q_k - log p_k) at t &gt;= 2, built
     * from the log-probabilities that the other tests check against enumeration.
     */
    @Test
    void gradientMatchesCentralDifferences() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        int steps = d.schedule().steps();
        for (double[] logits : someLogits(k, 11)) {
            for (int t = 1; t <= steps; t++) {
                for (int x0 = 0; x0 < k; x0++) {
                    for (int xt = 0; xt < k; xt++) {
                        int step = t;
                        int first = x0;
                        int noisy = xt;
                        double[] logQ = t == 1 ? null : d.logPosterior(t, x0, xt);
                        java.util.function.ToDoubleFunction<double[]> unfloored = l -> {
                            double[] logP = d.reverseLogProbabilities(step, noisy, l);
                            if (step == 1) {
                                return -logP[first];
                            }
                            double kl = 0.0;
                            for (int a = 0; a < k; a++) {
                                kl += Math.exp(logQ[a]) * (logQ[a] - logP[a]);
                            }
                            return kl;
                        };
                        double[] g = new double[k];
                        double value = d.boundTermGradientInPlace(t, x0, xt, logits, g);
                        double term = t == 1 ? d.decoderNll(x0, logits) : d.posteriorKl(t, x0, xt, logits);
                        assertEquals(term, value, 0.0, "the term itself");
                        double[] x0hat = softmax(logits);
                        double sum = 0.0;
                        for (int j = 0; j < k; j++) {
                            sum += g[j];
                            if (t == 1 && x0hat[x0] == 0.0) {
                                // a ruled-out x_0: the cross-entropy gradient x0hat - onehot(x_0) (common practice)
                                assertClose(x0hat[j] - (j == x0 ? 1.0 : 0.0), g[j], IDENTITY_REL, FD_FLOOR,
                                        "cross-entropy gradient of a ruled-out x_0");
                                continue;
                            }
                            if (logits[j] == Double.NEGATIVE_INFINITY) {
                                assertEquals(0.0, g[j], 0.0, "a ruled-out category has no gradient");
                                continue;
                            }
                            double[] up = logits.clone();
                            double[] down = logits.clone();
                            up[j] += FD_STEP;
                            down[j] -= FD_STEP;
                            // central difference (common practice, no source)
                            double fd = (unfloored.applyAsDouble(up) - unfloored.applyAsDouble(down)) / (2 * FD_STEP);
                            assertClose(fd, g[j], FD_REL, FD_FLOOR,
                                    "dL/dlogit_" + j + " at t = " + t + ", x_0 = " + x0 + ", x_t = " + xt);
                        }
                        // softmax: adding one constant to every logit changes nothing, so the gradient sums to 0
                        assertEquals(0.0, sum, 1e-12, "gradient sums to 0");
                    }
                }
            }
        }
        assertRefused(() -> d.boundTermGradientInPlace(1, 0, 0, new double[k], new double[k + 1]),
                "gradient has " + (k + 1));
    }

    // ------------------------------------------------------------------ draws

    @Test
    void drawsFollowTheirDistributions() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        int steps = d.schedule().steps();
        int[] prior = new int[k];
        for (int i = 0; i < GRID; i++) {
            prior[d.priorDraw((i + 0.5) / GRID)]++;
        }
        for (int j = 0; j < k; j++) {
            // inverse transform sampling on a uniform grid (common practice, no source): share = probability
            assertEquals(1.0 / k, (double) prior[j] / GRID, GRID_TOLERANCE, "prior share of " + j);
        }
        for (int t = 0; t <= steps; t++) {
            int x0 = t % k;
            int[] counts = new int[k];
            for (int i = 0; i < GRID; i++) {
                counts[d.marginalDraw(t, x0, (i + 0.5) / GRID)]++;
            }
            for (int j = 0; j < k; j++) {
                assertEquals(d.marginal(t, x0, j), (double) counts[j] / GRID, GRID_TOLERANCE,
                        "marginal draw share of " + j + " at t = " + t);
            }
        }
        double[] logits = someLogits(k, 3)[1];
        double[] p = softmax(logits);
        int[] counts = new int[k];
        for (int i = 0; i < GRID; i++) {
            counts[CategoricalDiffusion.draw(logits, (i + 0.5) / GRID)]++;
        }
        for (int j = 0; j < k; j++) {
            assertEquals(p[j], (double) counts[j] / GRID, GRID_TOLERANCE, "draw share of " + j);
        }
        assertEquals(k - 2, CategoricalDiffusion.draw(logits, 1.0), "u = 1 gives the last category that can be drawn");
        assertEquals(k - 1, d.priorDraw(1.0), "u = 1 gives the last category");
        assertEquals(0, d.marginalDraw(0, 0, 1.0), "t = 0 keeps x_0");
    }

    // ------------------------------------------------------------------ refusals

    static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment), () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

    @Test
    void badInputIsRefused() {
        CategoricalDiffusion d = create();
        int k = d.categories();
        int steps = d.schedule().steps();
        int big = steps + 1;
        double[] logits = new double[k];
        assertRefused(() -> d.transition(0, 0, 0), "t is 0");
        assertRefused(() -> d.marginal(big, 0, 0), "t is " + big);
        assertRefused(() -> d.marginal(1, k, 0), "x0 is " + k, "from 0 to " + (k - 1));
        assertRefused(() -> d.logMarginal(1, 0, -1), "xt is -1");
        assertRefused(() -> d.transition(1, -1, 0), "from is -1");
        assertRefused(() -> d.posterior(0, 0, 0), "t is 0");
        assertRefused(() -> d.logPosterior(1, 0, k), "xt is " + k);
        assertRefused(() -> d.reverseLogProbabilities(1, 0, new double[k + 1]), "x0Logits has " + (k + 1),
                "one per category, " + k);
        assertRefused(() -> d.reverseLogProbabilities(1, 0, null), "x0Logits is null");
        double[] nan = logits.clone();
        nan[1] = Double.NaN;
        assertRefused(() -> d.reverseLogProbabilities(1, 0, nan), "x0Logits[1] is NaN");
        double[] inf = logits.clone();
        inf[0] = Double.POSITIVE_INFINITY;
        assertRefused(() -> d.decoderNll(0, inf), "x0Logits[0] is Infinity");
        double[] none = new double[k];
        java.util.Arrays.fill(none, Double.NEGATIVE_INFINITY);
        assertRefused(() -> d.decoderNll(0, none), "only -infinity");
        assertRefused(() -> d.posteriorKl(1, 0, 0, logits), "t is 1", "decoder");
        assertRefused(() -> d.posteriorKl(big, 0, 0, logits), "t is " + big);
        assertRefused(() -> d.marginalDraw(0, 0, 1.5), "uniform is 1.5");
        assertRefused(() -> d.priorDraw(Double.NaN), "uniform is NaN");
        assertRefused(() -> CategoricalDiffusion.draw(new double[0], 0.5), "number of logProbabilities is 0");
        assertRefused(() -> CategoricalDiffusion.categoricalKl(new double[] {0.0}, new double[] {0.0, -1.0}),
                "logQ sums to");
        assertRefused(() -> CategoricalDiffusion.categoricalKl(new double[] {Math.log(0.5), Math.log(0.5)},
                new double[] {0.0}), "logP has 2 entries and logQ 1");
        assertRefused(() -> CategoricalDiffusion.categoricalKl(new double[] {0.1}, new double[] {0.0}), "logP[0] is 0.1");
        assertRefused(() -> CategoricalDiffusion.of(d.schedule(), 1), "categories is 1", "at least 2");
        assertRefused(() -> CategoricalDiffusion.of(null, 3), "schedule is null");
    }
}
