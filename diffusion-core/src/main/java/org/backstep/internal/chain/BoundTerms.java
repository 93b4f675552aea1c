package org.backstep.internal.chain;

import org.backstep.option.ReverseVariance;
import org.backstep.posterior.Divergence;

/**
 * Every term of the variational bound, in one place: the trainer's loss and its gradient, the
 * bound evaluator and the planners all call these methods (Ho et al. 2020, eq. 5; Sohl-Dickstein
 * et al. 2015, eq. 14):
 * <pre>
 *   L = L_T + sum_{t=2..T} L_{t-1} + L_0
 *   L_T     = KL(q(x_T | x_0) || p(x_T))                          {@link #continuousPrior}, {@link #binaryPrior}
 *   L_{t-1} = KL(q(x_{t-1} | x_t, x_0) || p(x_{t-1} | x_t))       {@link #continuous}, {@link #binary} at t &gt; 1
 *   L_0     = -log p(x_0 | x_1)                                   {@link #continuous}, {@link #binary} at t = 1
 * </pre>
 * A continuous cell's reverse kernel is N(mu, sigma^2) with mu = (x_t - beta_t / sqrt(1 - alpha-bar_t)
 * eps-hat) / sqrt(alpha_t) (Ho et al. 2020, eq. 11) and sigma^2 fixed or learned (Nichol &amp;
 * Dhariwal 2021, eq. 15); a binary cell's is Bernoulli(q0 + P(x_0 = 1) (q1 - q0)) (see
 * {@link Chain#binaryReverseOne}). The Gaussian KL and the Bernoulli KL come from
 * {@link Divergence}, which holds the one probability floor. A categorical cell's reverse kernel is
 * the posterior averaged over the predicted x_0 distribution softmax(logits),
 * p(x_{t-1} | x_t) = sum_c x0hat_c q(x_{t-1} | x_t, x_0 = c) (Hoogeboom et al. 2021, section 4), its
 * terms from {@link org.backstep.posterior.CategoricalDiffusion} ({@link #categorical},
 * {@link #categoricalPrior}). The bound's "binary" part per row holds the binary and the
 * categorical cells' terms: every discrete cell's part is a probability in nats.
 */
public final class BoundTerms {

    /** log(2 pi). */
    static final double LOG_2PI = Math.log(2.0 * Math.PI);

    private BoundTerms() {
    }

    /**
     * L_{k-1} of one continuous cell: the KL divergence of the Gaussian posterior
     * q(x_{k-1} | x_k, x_0) = N(c0 x_0 + ct x_k, beta-tilde_k) from the reverse kernel
     * N(mu, sigma^2) for k &gt; 1, 1/2 (log sigma^2 - log beta-tilde + (beta-tilde + (m_q - mu)^2) / sigma^2 - 1);
     * and at k = 1 the decoder term -log N(x_0; mu, sigma^2) = 1/2 (log 2 pi + log sigma^2 + (x_0 - mu)^2 / sigma^2).
     *
     * @param c the chain
     * @param k the chain step, 1..K
     * @param x0 the cell's value in model space
     * @param xt the cell's value at step k
     * @param epsHat the estimator's noise prediction
     * @param v the estimator's variance interpolation (ignored unless learned)
     * @param partials null, or length 2: written with d term / d mu and d term / d log sigma^2
     * @return the term in nats
     */
    public static double continuous(Chain c, int k, double x0, double xt, double epsHat, double v, double[] partials) {
        double lv = c.reverseLogVariance(k, v);
        double precision = Math.exp(-lv);
        double mp = (xt - c.epsCoef[k] * epsHat) / c.sqrtAlpha[k];
        if (k == 1) {
            double diff = x0 - mp;
            if (partials != null) {
                partials[0] = -diff * precision;
                partials[1] = 0.5 * (1.0 - diff * diff * precision);
            }
            return 0.5 * (LOG_2PI + lv + diff * diff * precision);
        }
        double lq = c.logVarClipped[k];
        double mq = c.coefX0[k] * x0 + c.coefXt[k] * xt;
        double diff = mq - mp;
        double num = Math.exp(lq) + diff * diff;
        if (partials != null) {
            partials[0] = -diff * precision;
            partials[1] = 0.5 * (1.0 - num * precision);
        }
        return 0.5 * (lv - lq + num * precision - 1.0);
    }

    /**
     * {@link #continuous} of continuous column j, except the decoder term (k = 1) of an integer
     * column: -log of the mass that N(mu, sigma^2) puts on the observed integer's unit-wide bin
     * (Ho et al. 2020, eq. 13; {@link org.backstep.posterior.DiscretizedGaussian}), a probability.
     *
     * @param j the continuous column, 0-based
     * @return the term in nats; partials as {@link #continuous} writes them
     */
    public static double continuousCell(Chain c, int k, int j, double x0, double xt, double epsHat, double v,
                                        double[] partials) {
        org.backstep.posterior.DiscretizedGaussian dg = c.decoders[j];
        if (k != 1 || dg == null) {
            return continuous(c, k, x0, xt, epsHat, v, partials);
        }
        double lv = c.reverseLogVariance(k, v);
        double mp = (xt - c.epsCoef[k] * epsHat) / c.sqrtAlpha[k];
        long n = dg.integerAt(x0);
        if (partials == null) {
            return -dg.logProbability(n, mp, lv);
        }
        double logP = dg.logProbabilityGradientInPlace(n, mp, lv, partials);
        partials[0] = -partials[0];
        partials[1] = -partials[1];
        return -logP;
    }

    /** @return d mu / d eps-hat at chain step k: -beta_k / (sqrt(1 - alpha-bar_k) sqrt(alpha_k)) */
    public static double meanPerEpsilon(Chain c, int k) {
        return -c.epsCoef[k] / c.sqrtAlpha[k];
    }

    /**
     * @return d log sigma^2 / d v at chain step k: log beta_k - log beta-tilde_k for a learned
     *     variance inside its clamp, 0 where the clamp holds it (and for fixed variances)
     */
    public static double logVariancePerV(Chain c, int k, double v) {
        if (c.variance != ReverseVariance.LEARNED) {
            return 0.0;
        }
        double raw = c.interpolatedLogVariance(k, v);
        return c.clampLogVariance(k, raw) != raw ? 0.0 : c.logBeta[k] - c.logVarClipped[k];
    }

    /**
     * L_{k-1} of one binary cell: KL(Bernoulli(a) || Bernoulli(p)) with a = q(x_{k-1} = 1 | x_k, x_0)
     * and p the reverse kernel's probability of a one, for k &gt; 1; at k = 1 the decoder term
     * -log p(x_0 | x_1), the cross-entropy of the predicted P(x_0 = 1).
     *
     * @param c the chain
     * @param k the chain step, 1..K
     * @param x0 the cell's value, 0 or 1
     * @param xt the cell's value at step k, 0 or 1
     * @param logit the estimator's logit of P(x_0 = 1)
     * @param partials null, or length at least 1: written with d term / d logit
     * @return the term in nats
     */
    public static double binary(Chain c, int k, int x0, int xt, double logit, double[] partials) {
        double pOne = Chain.sigmoid(logit);
        if (k == 1) {
            double p = Divergence.clampProbability(x0 == 1 ? pOne : 1.0 - pOne);
            if (partials != null) {
                partials[0] = pOne - x0;
            }
            return -Math.log(p);
        }
        double a = c.binPosterior[k][2 * x0 + xt];
        double q1 = c.binPosterior[k][2 + xt];
        double q0 = c.binPosterior[k][xt];
        double p = Divergence.clampProbability(q0 + pOne * (q1 - q0));
        if (partials != null) {
            partials[0] = (p - a) / (p * (1.0 - p)) * (q1 - q0) * pOne * (1.0 - pOne);
        }
        return Divergence.bernoulliKl(a, p);
    }

    /** @return L_T of one continuous cell, KL(N(sqrt(alpha-bar_K) x_0, 1 - alpha-bar_K) || N(0, 1)) */
    public static double continuousPrior(Chain c, double x0) {
        double m = c.priorMeanScale * x0;
        return 0.5 * (-Math.log(c.priorVariance) + c.priorVariance + m * m - 1.0);
    }

    /**
     * L_{k-1} of categorical column j's cell: KL(q(x_{k-1} | x_k, x_0) || p(x_{k-1} | x_k)) for
     * k &gt; 1, -log p(x_0 | x_1) = -log softmax(logits)_{x_0} at k = 1 (Hoogeboom et al. 2021,
     * section 4; Ho et al. 2020, eq. 5).
     *
     * @param c the chain
     * @param k the chain step, 1..K
     * @param j the categorical column, 0-based among the categorical columns
     * @param x0 the cell's category
     * @param xt the cell's category at step k
     * @param logits the estimator's K logits of x_0 (not modified)
     * @param gradient null, or K entries overwritten with d term / d logit
     * @return the term in nats
     */
    public static double categorical(Chain c, int k, int j, int x0, int xt, double[] logits, double[] gradient) {
        org.backstep.posterior.CategoricalDiffusion q = c.catDiffusion[j];
        if (gradient != null) {
            return q.boundTermGradientInPlace(k, x0, xt, logits, gradient);
        }
        return k == 1 ? q.decoderNll(x0, logits) : q.posteriorKl(k, x0, xt, logits);
    }

    /** @return L_T of categorical column j's cell, KL(q(x_K | x_0) || Cat(1/K)), the same for every x_0 */
    public static double categoricalPrior(Chain c, int j) {
        return c.catDiffusion[j].priorKl();
    }

    /** @return L_T of one binary cell, KL(q(x_K | x_0) || Bernoulli(1/2)) */
    public static double binaryPrior(Chain c, int x0) {
        return Divergence.bernoulliKl(x0 == 1 ? c.binMarginalOne1[c.steps] : c.binMarginalOne0[c.steps], 0.5);
    }

    /**
     * The terms of step k for every row, summed over cells, added into contOut and binOut (length
     * rows): {@link #continuous} and {@link #binary} for each cell.
     *
     * @param x0 rows x D model-space records, not modified
     * @param xt rows x D states at each row's step, not modified
     * @param out rows x outputs estimator outputs, not modified
     * @param k each row's chain step
     */
    static void rowTerms(Chain c, float[] x0, float[] xt, float[] out, int rows, int[] k, double[] contOut,
                         double[] binOut) {
        rowContinuousTerms(c, x0, xt, out, rows, k, contOut);
        int dc = c.dc;
        int d = c.d;
        int outputs = c.outputs;
        double[][] logits = c.logitBuffers();
        for (int r = 0; r < rows; r++) {
            int s = k[r];
            int o = r * d;
            int oo = r * outputs;
            double bin = 0.0;
            for (int j = 0; j < c.db; j++) {
                bin += binary(c, s, x0[o + dc + j] > 0.5f ? 1 : 0, xt[o + dc + j] > 0.5f ? 1 : 0,
                        out[oo + c.logitOffset + j], null);
            }
            for (int j = 0; j < c.dk; j++) {
                c.logitsInto(out, oo, j, logits[j]);
                int at = o + c.discreteEnd + j;
                bin += categorical(c, s, j, (int) x0[at], (int) xt[at], logits[j], null);
            }
            binOut[r] += bin;
        }
    }

    /**
     * The expectation over x_k ~ q(x_k | x_0) of the continuous cells' term L_{k-1} of the model
     * whose network outputs zero (the baseline alone), per row. The baseline's epsilon-hat is
     * linear, A (x_k - sqrt(abar_k) m), so the difference of the means in {@link #continuous} is
     * linear in the noise e of x_k = sqrt(abar_k) x_0 + sqrt(1 - abar_k) e:
     * <pre>
     *   diff = mq - mp = a + sqrt(1 - abar_k) M e,   M = (ct - 1/sqrt(alpha_k)) I + g A,  g = epsCoef_k / sqrt(alpha_k)
     *   a    = (c0 + (ct - 1/sqrt(alpha_k)) sqrt(abar_k)) x_0 + g sqrt(abar_k) A (x_0 - m)
     *   E[diff_j^2] = a_j^2 + (1 - abar_k) sum_i M_ji^2
     * </pre>
     * with (c0, ct) the posterior mean's coefficients for k &gt; 1, and the decoder's diff = x_0 - mp
     * at k = 1 (c0 = 1, ct = 0); the variance terms do not depend on x_k. (Gaussian expectation of
     * a quadratic; common practice, no source.) What does not depend on the row (the noise part,
     * the log variances and their exponentials) is computed once per step, at construction.
     */
    static final class BaselineExpectation {
        private final Chain c;
        private final int k;
        private final double[][] gain;
        private final double[] m;
        private final double sa;
        private final double g;
        private final double c0;
        private final double diag;
        private final double[] noise;
        private final double[] lv;
        private final double[] precision;
        private final boolean[] skip;
        private final double lq;
        private final double expLq;

        /**
         * @param k the chain step
         * @param gain A at the chain step's source step ({@link GaussianBaseline#gain})
         * @param v the baseline's v per column at that source step
         * @param m the baseline's mean
         */
        BaselineExpectation(Chain c, int k, double[][] gain, double[] v, double[] m) {
            this.c = c;
            this.k = k;
            this.gain = gain;
            this.m = m;
            int dc = c.dc;
            sa = c.sqrtAbar[k];
            double so2 = 1.0 - sa * sa;
            g = c.epsCoef[k] / c.sqrtAlpha[k];
            c0 = k == 1 ? 1.0 : c.coefX0[k];
            double ct = k == 1 ? 0.0 : c.coefXt[k];
            diag = ct - 1.0 / c.sqrtAlpha[k];
            noise = new double[dc];
            lv = new double[dc];
            precision = new double[dc];
            skip = new boolean[dc];
            for (int j = 0; j < dc; j++) {
                double ss = 0.0;
                for (int i = 0; i < dc; i++) {
                    double mji = g * gain[j][i] + (i == j ? diag : 0.0);
                    ss += mji * mji;
                }
                noise[j] = so2 * ss;
                lv[j] = c.reverseLogVariance(k, c.variance == ReverseVariance.LEARNED ? v[j] : 0.0);
                precision[j] = Math.exp(-lv[j]);
                // an integer column's decoder is a discretized Gaussian's mass: not this expectation
                skip[j] = k == 1 && c.decoders[j] != null;
            }
            lq = c.logVarClipped[k];
            expLq = Math.exp(lq);
        }

        /** Adds each row's expectation into {@code out} (length rows). */
        void addRows(float[] x0, int rows, double[] out) {
            int dc = c.dc;
            double[] centred = new double[dc];
            for (int r = 0; r < rows; r++) {
                int o = r * c.d;
                for (int i = 0; i < dc; i++) {
                    centred[i] = x0[o + i] - m[i];
                }
                double total = 0.0;
                for (int j = 0; j < dc; j++) {
                    if (skip[j]) {
                        continue;
                    }
                    double ax = 0.0;
                    for (int i = 0; i < dc; i++) {
                        ax += gain[j][i] * centred[i];
                    }
                    double a = (c0 + diag * sa) * x0[o + j] + g * sa * ax;
                    double e2 = a * a + noise[j];
                    total += k == 1 ? 0.5 * (LOG_2PI + lv[j] + e2 * precision[j])
                            : 0.5 * (lv[j] - lq + (expLq + e2) * precision[j] - 1.0);
                }
                out[r] += total;
            }
        }
    }

    /**
     * The continuous cells' part of {@link #rowTerms}: the terms of step k for every row, summed
     * over the continuous cells, added into contOut (rowTerms's continuous half).
     */
    static void rowContinuousTerms(Chain c, float[] x0, float[] xt, float[] out, int rows, int[] k, double[] contOut) {
        int dc = c.dc;
        int d = c.d;
        int outputs = c.outputs;
        boolean learned = c.variance == ReverseVariance.LEARNED;
        for (int r = 0; r < rows; r++) {
            int s = k[r];
            int o = r * d;
            int oo = r * outputs;
            double cont = 0.0;
            for (int j = 0; j < dc; j++) {
                double v = learned ? out[oo + dc + j] : 0.0;
                cont += continuousCell(c, s, j, x0[o + j], xt[o + j], out[oo + j], v, null);
            }
            contOut[r] += cont;
        }
    }

    /**
     * Subtracts from {@code contOut} the decoder terms (chain step 1) of the integer columns, those
     * with a discretized decoder, per row: what {@link #rowTerms} added for them and
     * {@link #expectedBaselineRows} leaves out.
     */
    static void subtractDiscretizedDecoderRows(Chain c, float[] x0, float[] xt, float[] out, int rows,
                                               double[] contOut) {
        boolean learned = c.variance == ReverseVariance.LEARNED;
        for (int j = 0; j < c.dc; j++) {
            if (c.decoders[j] == null) {
                continue;
            }
            for (int r = 0; r < rows; r++) {
                int o = r * c.d;
                int oo = r * c.outputs;
                double v = learned ? out[oo + c.dc + j] : 0.0;
                contOut[r] -= continuousCell(c, 1, j, x0[o + j], xt[o + j], out[oo + j], v, null);
            }
        }
    }

    /** The prior terms L_T per row, added into contOut and binOut. */
    static void priorRows(Chain c, float[] x0, int rows, double[] contOut, double[] binOut) {
        for (int r = 0; r < rows; r++) {
            int o = r * c.d;
            double cont = 0.0;
            for (int j = 0; j < c.dc; j++) {
                cont += continuousPrior(c, x0[o + j]);
            }
            double bin = 0.0;
            for (int j = c.dc; j < c.discreteEnd; j++) {
                bin += binaryPrior(c, x0[o + j] > 0.5f ? 1 : 0);
            }
            for (int j = 0; j < c.dk; j++) {
                bin += categoricalPrior(c, j);
            }
            contOut[r] += cont;
            binOut[r] += bin;
        }
    }
}
