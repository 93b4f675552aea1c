package org.backstep.internal.chain;

import org.backstep.option.ReverseVariance;

/**
 * A control variate for a continuous term of the bound from the estimator linearized around the
 * noiseless point: the term L_{k-1}(e) of {@link BoundTerms#continuous}, as a function of the noise
 * e of x_k = sqrt(abar_k) x_0 + sqrt(1 - abar_k) e, with the estimator's outputs replaced by their
 * secants over one noise standard deviation,
 * <pre>
 *   eps-hat_j(e) ~ h_j + sum_i G_ji e_i,   v_j(e) ~ v0_j + sum_i H_ji e_i,
 *   G_ji = (eps-hat_j(xbar + s u_i) - eps-hat_j(xbar - s u_i)) / 2,   xbar = sqrt(abar_k) x_0, s = sqrt(1 - abar_k),
 * </pre>
 * (u_i the i-th continuous unit vector, the discrete cells at x_0's values; 2 Dc + 1 evaluations of
 * the estimator per row and step), so that the mean difference and the log variance are affine in e,
 * diff_j = a_j + b_j.e and lv_j = lv0_j + l_j.e, the precision exp(-lv_j) taken to first order,
 * exp(-lv0_j) (1 - l_j.e), so that Q is a polynomial in e (all its moments finite: the exponential
 * itself, unclamped, put rare huge values in Q that the draws seldom see), and
 * <pre>
 *   Q_j(e)  = 1/2 (lv_j - log beta-tilde + (beta-tilde + diff_j^2) exp(-lv0_j) (1 - l_j.e) - 1)       (k &gt; 1)
 *   E[Q_j]  = 1/2 (lv0_j - log beta-tilde + exp(-lv0_j) (beta-tilde + a_j^2 + |b_j|^2 - 2 a_j b_j.l_j) - 1)
 * </pre>
 * (and at k = 1 the decoder's 1/2 (log 2 pi + lv_j + diff_j^2 exp(-lv0_j) (1 - l_j.e))), by the
 * moments of the standard normal, E[e] = 0, E[e e'] = I, odd third moments zero (common practice,
 * no source). The term is
 * then taken as L(e) - Q(e) + E[Q]: the same expectation whatever the secants (any Q whose mean is
 * known keeps the estimate unbiased; Glasserman 2003, "Monte Carlo Methods in Financial
 * Engineering", section 4.1), and little noise where the estimator is close to affine over the
 * noise of x_k, which is where the bound's noise lives (the steps near the data). An integer
 * column's decoder term is left out (taken as drawn).
 */
final class LinearizedTerms {

    private final Chain c;
    private final int dc;
    private final int n;
    private final int blocks;
    private final float[] points;
    private final Chain.Workspace ws;

    /**
     * @param c the chain
     * @param n the rows of the chunk
     */
    LinearizedTerms(Chain c, int n) {
        this.c = c;
        this.dc = c.dc;
        this.n = n;
        this.blocks = 2 * dc + 1;
        this.points = new float[blocks * n * c.d];
        this.ws = c.workspace(blocks * n);
    }

    /**
     * Q of each replica's noise and E[Q] of each row at step k.
     *
     * @param k the chain step
     * @param x0 n x D rows
     * @param reps the replicas per row (replica i of row r at i * n + r)
     * @param eps (reps n) x Dc, the continuous noise of each replica
     * @param q reps n entries, overwritten with Q
     * @param expected n entries, overwritten with E[Q]
     */
    void control(int k, float[] x0, int reps, double[] eps, double[] q, double[] expected) {
        int d = c.d;
        int outputs = c.outputs;
        boolean learned = c.variance == ReverseVariance.LEARNED;
        double sa = c.sqrtAbar[k];
        double so = c.sqrtOneMinusAbar[k];
        for (int r = 0; r < n; r++) {
            int o = r * d;
            for (int b = 0; b < blocks; b++) {
                int to = (b * n + r) * d;
                for (int j = 0; j < dc; j++) {
                    points[to + j] = (float) (sa * x0[o + j]);
                }
                System.arraycopy(x0, o + dc, points, to + dc, d - dc);
            }
            for (int i = 0; i < dc; i++) {
                points[((1 + 2 * i) * n + r) * d + i] += (float) so;
                points[((2 + 2 * i) * n + r) * d + i] -= (float) so;
            }
        }
        float[] out = c.predictAtStep(ws, points, k);
        double g = c.epsCoef[k] / c.sqrtAlpha[k];
        double c0 = k == 1 ? 1.0 : c.coefX0[k];
        double ct = k == 1 ? 0.0 : c.coefXt[k];
        double diag = ct - 1.0 / c.sqrtAlpha[k];
        double lq = c.logVarClipped[k];
        double expLq = Math.exp(lq);
        // not learned: v = 0 and the reverse log-variance, its slope (0) and precision are the step's constants
        double lvFixed = learned ? 0.0 : c.reverseLogVariance(k, 0.0);
        double pFixed = learned ? 0.0 : Math.exp(-lvFixed);
        double[] bj = new double[dc];
        double[] lj = new double[dc];
        java.util.Arrays.fill(q, 0, reps * n, 0.0);
        for (int r = 0; r < n; r++) {
            int o = r * d;
            int ob = r * outputs;
            double e0 = 0.0;
            for (int j = 0; j < dc; j++) {
                if (k == 1 && c.decoders[j] != null) {
                    continue;
                }
                double h = out[ob + j];
                double v0 = learned ? out[ob + dc + j] : 0.0;
                double lv0 = learned ? c.reverseLogVariance(k, v0) : lvFixed;
                double slope = learned ? BoundTerms.logVariancePerV(c, k, v0) : 0.0;
                double xbar = (float) (sa * x0[o + j]);
                double a = c0 * x0[o + j] + diag * xbar + g * h;
                double bb = 0.0;
                double bl = 0.0;
                for (int i = 0; i < dc; i++) {
                    int plus = ((1 + 2 * i) * n + r) * outputs;
                    int minus = ((2 + 2 * i) * n + r) * outputs;
                    double gji = 0.5 * (out[plus + j] - out[minus + j]);
                    bj[i] = g * gji + (i == j ? diag * so : 0.0);
                    lj[i] = learned ? slope * 0.5 * (out[plus + dc + j] - out[minus + dc + j]) : 0.0;
                    bb += bj[i] * bj[i];
                    bl += bj[i] * lj[i];
                }
                double p0 = learned ? Math.exp(-lv0) : pFixed;
                double second = a * a + bb - 2.0 * a * bl;
                e0 += k == 1 ? 0.5 * (BoundTerms.LOG_2PI + lv0 + p0 * second)
                        : 0.5 * (lv0 - lq + p0 * (expLq + second) - 1.0);
                for (int rep = 0; rep < reps; rep++) {
                    int at = rep * n + r;
                    int eo = at * dc;
                    double be = 0.0;
                    double le = 0.0;
                    for (int i = 0; i < dc; i++) {
                        be += bj[i] * eps[eo + i];
                        le += lj[i] * eps[eo + i];
                    }
                    double diff = a + be;
                    double lv = lv0 + le;
                    double precision = p0 * (1.0 - le);
                    q[at] += k == 1 ? 0.5 * (BoundTerms.LOG_2PI + lv + diff * diff * precision)
                            : 0.5 * (lv - lq + (expLq + diff * diff) * precision - 1.0);
                }
            }
            expected[r] = e0;
        }
    }
}
