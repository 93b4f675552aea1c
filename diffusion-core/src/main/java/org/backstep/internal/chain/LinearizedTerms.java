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
 *
 * <p><b>Binary cells.</b> A binary cell of x_k differs from x_0's with probability
 * p_k(x_0) = q(x_k != x_0 | x_0), each cell apart, and the discrete cells' part of the term (the
 * binary and categorical cells' terms, B(x_k)) changes by a jump when a cell flips, so it has no
 * secant. Its control variate is exact on the draws with at most one flipped binary cell: with
 * f_j the flip indicator of binary column j and x^(j) the noiseless point with column j flipped,
 * <pre>
 *   Q_B(f) = B(xbar) + sum_j f_j (B(x^(j)) - B(xbar)),   E[Q_B] = B(xbar) + sum_j p_k(x_0j) (B(x^(j)) - B(xbar))
 * </pre>
 * (the f_j are independent Bernoulli(p_k) draws, whatever the continuous noise; common practice,
 * no source), at D_b more evaluations per row and step (D_b binary columns): a first-order
 * expansion in the flips, whose error is in the draws with two flips or more, rare near the data
 * where the discrete terms' noise lives. The discrete part is then taken as B - Q_B + E[Q_B].
 */
final class LinearizedTerms {

    private final Chain c;
    private final int dc;
    private final int db;
    private final int n;
    private final int blocks;
    private final float[] points;
    private final float[] origins;    // x_0 of each point's row, for the discrete terms at the points
    private final int[] steps;
    private final double[] pointCont;
    private final double[] pointBin;
    private final Chain.Workspace ws;

    /**
     * @param c the chain
     * @param n the rows of the chunk
     */
    LinearizedTerms(Chain c, int n) {
        this.c = c;
        this.dc = c.dc;
        this.db = c.discreteEnd - c.dc;
        this.n = n;
        this.blocks = 2 * dc + 1 + db;
        this.points = new float[blocks * n * c.d];
        this.origins = db > 0 ? new float[blocks * n * c.d] : null;
        this.steps = db > 0 ? new int[blocks * n] : null;
        this.pointCont = db > 0 ? new double[blocks * n] : null;
        this.pointBin = db > 0 ? new double[blocks * n] : null;
        this.ws = c.workspace(blocks * n);
    }

    /** @return the network evaluations per row and step: 2 Dc + 1 + D_b */
    static int evaluations(Chain c) {
        return 2 * c.dc + 1 + (c.discreteEnd - c.dc);
    }

    /**
     * Q of each replica's noise and E[Q] of each row at step k, the continuous cells' and (with
     * binary columns) the discrete cells' apart.
     *
     * @param k the chain step
     * @param x0 n x D rows
     * @param reps the replicas per row (replica i of row r at i * n + r)
     * @param eps (reps n) x Dc, the continuous noise of each replica
     * @param xt (reps n) x D, each replica's x_k (its binary cells read)
     * @param q reps n entries, overwritten with the continuous Q
     * @param expected n entries, overwritten with E[Q]
     * @param qBin reps n entries, overwritten with Q_B (0 without binary columns)
     * @param expectedBin n entries, overwritten with E[Q_B] (0 without binary columns)
     */
    void control(int k, float[] x0, int reps, double[] eps, float[] xt, double[] q, double[] expected, double[] qBin,
                 double[] expectedBin) {
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
            for (int j = 0; j < db; j++) {
                int at = ((1 + 2 * dc + j) * n + r) * d + dc + j;
                points[at] = points[at] > 0.5f ? 0f : 1f;
            }
        }
        float[] out = c.predictAtStep(ws, points, k);
        java.util.Arrays.fill(qBin, 0, reps * n, 0.0);
        java.util.Arrays.fill(expectedBin, 0, n, 0.0);
        if (db > 0) {
            binaryControl(k, x0, reps, xt, out, qBin, expectedBin);
        }
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

    /** The discrete cells' control variate Q_B of the class comment, from the points' outputs. */
    private void binaryControl(int k, float[] x0, int reps, float[] xt, float[] out, double[] qBin, double[] expectedBin) {
        int d = c.d;
        int m = blocks * n;
        for (int b = 0; b < blocks; b++) {
            System.arraycopy(x0, 0, origins, b * n * d, n * d);
        }
        java.util.Arrays.fill(steps, k);
        java.util.Arrays.fill(pointCont, 0.0);
        java.util.Arrays.fill(pointBin, 0.0);
        BoundTerms.rowTerms(c, origins, points, out, m, steps, pointCont, pointBin);
        double flip1 = 1.0 - c.binMarginalOne1[k];
        double flip0 = c.binMarginalOne0[k];
        for (int r = 0; r < n; r++) {
            int o = r * d;
            double base = pointBin[r];
            double mean = base;
            for (int j = 0; j < db; j++) {
                double jump = pointBin[(1 + 2 * dc + j) * n + r] - base;
                mean += (x0[o + dc + j] > 0.5f ? flip1 : flip0) * jump;
            }
            expectedBin[r] = mean;
            for (int rep = 0; rep < reps; rep++) {
                int at = rep * n + r;
                int xo = at * d;
                double value = base;
                for (int j = 0; j < db; j++) {
                    if ((xt[xo + dc + j] > 0.5f) != (x0[o + dc + j] > 0.5f)) {
                        value += pointBin[(1 + 2 * dc + j) * n + r] - base;
                    }
                }
                qBin[at] = value;
            }
        }
    }
}
