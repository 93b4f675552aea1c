package org.backstep.internal.train;

import org.backstep.option.StepSampling;

import java.util.SplittableRandom;

/**
 * Draws the training step t uniformly from 1..T, or by importance: after every step has
 * {@link #IMPORTANCE_HISTORY} recorded bound terms, p_t is proportional to sqrt(E[L_t^2]) over the
 * recent terms, mixed with {@link #IMPORTANCE_UNIFORM_SHARE} of the uniform distribution, and each
 * row's loss is weighted by 1/(T p_t) so that the objective stays unbiased (Nichol &amp; Dhariwal
 * 2021, section 3.3, eq. 18).
 */
final class StepSampler {

    /** Importance sampling keeps this many recent bound terms per step (Nichol &amp; Dhariwal 2021, sec. 3.3). */
    static final int IMPORTANCE_HISTORY = 10;
    /** Share of uniform probability mixed into the importance distribution (our choice). */
    static final double IMPORTANCE_UNIFORM_SHARE = 0.01;
    private final int steps;
    private final StepSampling mode;
    private final double[][] recent;
    private final int[] count;
    private final double[] cdf;
    private final double[] prob;
    private boolean warm;
    private int sinceRefresh;

    StepSampler(int steps, StepSampling mode) {
        this.steps = steps;
        this.mode = mode;
        this.recent = mode == StepSampling.IMPORTANCE ? new double[steps + 1][IMPORTANCE_HISTORY] : null;
        this.count = new int[steps + 1];
        this.cdf = new double[steps + 1];
        this.prob = new double[steps + 1];
    }

    int draw(SplittableRandom rng) {
        if (!warm) {
            return 1 + rng.nextInt(steps);
        }
        double u = rng.nextDouble();
        int lo = 1;
        int hi = steps;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (cdf[mid] > u) {
                hi = mid;
            } else {
                lo = mid + 1;
            }
        }
        return lo;
    }

    double weight(int t) {
        return warm ? 1.0 / (steps * prob[t]) : 1.0;
    }

    void record(int[] k, double[] rowBound, int rows) {
        if (mode != StepSampling.IMPORTANCE) {
            return;
        }
        for (int r = 0; r < rows; r++) {
            int t = k[r];
            recent[t][count[t] % IMPORTANCE_HISTORY] = rowBound[r];
            count[t]++;
        }
        if (!warm) {
            for (int t = 1; t <= steps; t++) {
                if (count[t] < IMPORTANCE_HISTORY) {
                    return;
                }
            }
            warm = true;
        }
        if (++sinceRefresh < 10 && cdf[steps] > 0) {
            return;
        }
        sinceRefresh = 0;
        double total = 0.0;
        for (int t = 1; t <= steps; t++) {
            double sq = 0.0;
            for (double v : recent[t]) {
                sq += v * v;
            }
            prob[t] = Math.sqrt(sq / IMPORTANCE_HISTORY);
            total += prob[t];
        }
        double acc = 0.0;
        for (int t = 1; t <= steps; t++) {
            double p = total > 0 ? prob[t] / total : 1.0 / steps;
            prob[t] = (1.0 - IMPORTANCE_UNIFORM_SHARE) * p + IMPORTANCE_UNIFORM_SHARE / steps;
            acc += prob[t];
            cdf[t] = acc;
        }
        cdf[steps] = 1.0;
    }
}
