package org.backstep.schedule;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/**
 * An immutable noise schedule of a diffusion process over T steps, t = 1..T, in double precision.
 *
 * <p>The forward process adds noise step by step with variances beta_t. Every other quantity is
 * derived from the betas alone, so two schedules with the same betas are equal in every figure:
 * <pre>
 *   alpha_t           = 1 - beta_t
 *   alpha-bar_t       = prod_{s=1..t} alpha_s        (computed as exp(sum_s log1p(-beta_s)))
 *   1 - alpha-bar_t   = -expm1(sum_s log1p(-beta_s)) (no cancellation near alpha-bar = 1)
 *   SNR_t             = alpha-bar_t / (1 - alpha-bar_t)
 *   beta-tilde_t      = beta_t (1 - alpha-bar_{t-1}) / (1 - alpha-bar_t),  alpha-bar_0 = 1
 * </pre>
 * (Ho, Jain &amp; Abbeel 2020, "Denoising Diffusion Probabilistic Models", eq. 4 and 7; the SNR
 * notation follows Kingma et al. 2021.) Gaussian data are diffused as q(x_t | x_0) =
 * N(sqrt(alpha-bar_t) x_0, (1 - alpha-bar_t) I); binary data by the binomial diffusion of
 * Sohl-Dickstein et al. 2015, where gamma_t = alpha-bar_t plays the same role.
 *
 * <p>Made by static factories: {@link #linear(int)}, {@link #cosine(int)}, {@link #binomial(int)},
 * {@link #ofBetas(double...)}; a sub-schedule over fewer steps comes from {@link #strided(int)} or
 * {@link #subset(int...)}. Arrays returned are copies.
 *
 * <p>One file of more than 400 lines: every schedule family and every derived quantity (alpha-bar,
 * SNR, beta-tilde, strided subsets) is one value type with one validation.
 */
public final class NoiseSchedule {

    /** How a schedule was made. */
    public enum Kind {
        /** Betas linearly spaced (Ho et al. 2020, section 4). */
        LINEAR,
        /** alpha-bar from a squared cosine (Nichol &amp; Dhariwal 2021, eq. 17). */
        COSINE,
        /** beta_t = 1/(T - t + 1) for binary data (Sohl-Dickstein et al. 2015, appendix). */
        BINOMIAL,
        /** Betas given by the caller. */
        EXPLICIT
    }

    /** The largest beta that the linear and cosine factories produce (Nichol &amp; Dhariwal 2021, section 3.2). */
    public static final double MAX_BETA = 0.999;

    /** The offset s of the cosine schedule (Nichol &amp; Dhariwal 2021, section 3.2). */
    public static final double COSINE_OFFSET = 0.008;

    /** First beta of the linear schedule at T = 1000 (Ho et al. 2020, section 4). */
    public static final double LINEAR_BETA_START = 1e-4;

    /** Last beta of the linear schedule at T = 1000 (Ho et al. 2020, section 4). */
    public static final double LINEAR_BETA_END = 0.02;

    private final Kind kind;
    private final double[] beta;          // beta[t-1]
    private final double[] logAlphaBar;   // logAlphaBar[t] for t = 0..T, logAlphaBar[0] = 0
    private final int[] sourceStep;       // sourceStep[t-1]

    private NoiseSchedule(Kind kind, double[] beta, int[] sourceStep) {
        this.kind = kind;
        this.beta = beta;
        this.sourceStep = sourceStep;
        this.logAlphaBar = new double[beta.length + 1];
        double acc = 0.0;
        for (int i = 0; i < beta.length; i++) {
            acc += Math.log1p(-beta[i]);
            logAlphaBar[i + 1] = acc;
        }
    }

    // ------------------------------------------------------------------ factories

    /**
     * The linear schedule of Ho et al. 2020 (section 4): betas from 1e-4 to 0.02 over 1000 steps;
     * for another T both ends are multiplied by 1000/T (Nichol &amp; Dhariwal 2021, appendix, the
     * "scale" of their linear schedule) so that a short schedule still reaches noise. Betas are
     * capped at {@link #MAX_BETA}, which matters only for T &lt; 21. With T = 1 the single beta is
     * the rescaled first one.
     *
     * @param steps T, at least 1
     * @return the schedule
     * @throws IllegalArgumentException if {@code steps < 1}
     */
    public static NoiseSchedule linear(int steps) {
        Require.atLeast("steps", steps, 1);
        double scale = 1000.0 / steps;
        return linear(steps, Math.min(MAX_BETA, LINEAR_BETA_START * scale),
                Math.min(MAX_BETA, LINEAR_BETA_END * scale));
    }

    /**
     * Betas linearly spaced: beta_t = first + (last - first) (t - 1) / (T - 1); with T = 1 the one
     * beta is {@code first}.
     *
     * @param steps T, at least 1
     * @param first beta_1, in (0, 1)
     * @param last beta_T, in (0, 1)
     * @return the schedule
     * @throws IllegalArgumentException naming the parameter that is out of range
     */
    public static NoiseSchedule linear(int steps, double first, double last) {
        Require.atLeast("steps", steps, 1);
        Require.inOpen("first", first, 0.0, 1.0);
        Require.inOpen("last", last, 0.0, 1.0);
        double[] b = new double[steps];
        for (int i = 0; i < steps; i++) {
            b[i] = steps == 1 ? first : first + (last - first) * i / (steps - 1);
        }
        return new NoiseSchedule(Kind.LINEAR, b, identity(steps));
    }

    /**
     * The cosine schedule of Nichol &amp; Dhariwal 2021 (eq. 17) with offset s = 0.008:
     * f(t) = cos^2(((t/T) + s) / (1 + s) * pi/2), beta_t = min(1 - f(t)/f(t-1), 0.999).
     * alpha-bar is then the product of the clipped betas, which equals f(t)/f(0) wherever no beta
     * was clipped (in practice all but the last step or two).
     *
     * @param steps T, at least 1
     * @return the schedule
     * @throws IllegalArgumentException if {@code steps < 1}
     */
    public static NoiseSchedule cosine(int steps) {
        return cosine(steps, COSINE_OFFSET);
    }

    /**
     * The cosine schedule with a chosen offset s (see {@link #cosine(int)}).
     *
     * @param steps T, at least 1
     * @param offset s, above 0 (0.008 in the paper); an offset so large (of the order of 1e16 / T)
     *     that f(t) no longer falls between two steps in double precision is refused, since it would
     *     give a beta of 0
     * @return the schedule
     * @throws IllegalArgumentException naming the parameter that is out of range
     */
    public static NoiseSchedule cosine(int steps, double offset) {
        Require.atLeast("steps", steps, 1);
        Require.positive("offset", offset);
        double[] b = new double[steps];
        double prev = cosineF(0, steps, offset);
        for (int t = 1; t <= steps; t++) {
            double f = cosineF(t, steps, offset);
            b[t - 1] = Math.min(MAX_BETA, 1.0 - f / prev);
            if (!(b[t - 1] > 0.0)) {
                throw new IllegalArgumentException("offset is " + offset + "; with " + steps
                        + " steps it makes beta at step " + t + " equal to " + b[t - 1]
                        + ", expected each beta in (0, 1): use a smaller offset");
            }
            prev = f;
        }
        return new NoiseSchedule(Kind.COSINE, b, identity(steps));
    }

    private static double cosineF(int t, int steps, double s) {
        double c = Math.cos(((double) t / steps + s) / (1.0 + s) * Math.PI / 2.0);
        return c * c;
    }

    /**
     * The binomial schedule for binary data, beta_t = 1/(T - t + 1) (Sohl-Dickstein et al. 2015,
     * appendix on binomial diffusion). Each step keeps a bit with probability 1 - beta_t and
     * otherwise redraws it from Bernoulli(1/2), so gamma_t = alpha-bar_t = (T - t)/T falls linearly
     * and the last step has beta_T = 1: x_T is exactly Bernoulli(1/2) whatever x_0 was. That
     * beta = 1 is the one place a beta may equal 1; there alpha-bar_T = 0 and log-SNR = -infinity.
     *
     * @param steps T, at least 1
     * @return the schedule
     * @throws IllegalArgumentException if {@code steps < 1}
     */
    public static NoiseSchedule binomial(int steps) {
        Require.atLeast("steps", steps, 1);
        double[] b = new double[steps];
        for (int t = 1; t <= steps; t++) {
            b[t - 1] = 1.0 / (steps - t + 1);
        }
        return new NoiseSchedule(Kind.BINOMIAL, b, identity(steps));
    }

    /**
     * A schedule with the caller's betas (copied).
     *
     * @param betas beta_1..beta_T, each in (0, 1), at least one
     * @return the schedule
     * @throws IllegalArgumentException naming the step and value of the first bad beta
     */
    public static NoiseSchedule ofBetas(double... betas) {
        return of(Kind.EXPLICIT, betas, null);
    }

    /**
     * Rebuilds a schedule from its kind, betas and source steps, as a model file stores them. All
     * derived figures are recomputed from the betas, so the result equals the saved schedule.
     *
     * @param kind how it was made
     * @param betas beta_1..beta_T (copied), each in (0, 1); for {@link Kind#BINOMIAL} the last may be 1
     * @param sourceSteps the source step of each step (copied), strictly increasing from at least 1,
     *     or null for 1..T
     * @return the schedule
     * @throws IllegalArgumentException naming the bad step and value
     */
    public static NoiseSchedule of(Kind kind, double[] betas, int[] sourceSteps) {
        Require.notNull("kind", kind);
        Require.notNull("betas", betas);
        Require.atLeast("number of betas", betas.length, 1);
        double[] b = betas.clone();
        for (int i = 0; i < b.length; i++) {
            boolean finalBinomial = kind == Kind.BINOMIAL && i == b.length - 1 && b[i] == 1.0;
            if (!finalBinomial && !(b[i] > 0.0 && b[i] < 1.0)) {
                throw new IllegalArgumentException("beta at step " + (i + 1) + " is " + b[i]
                        + "; each beta must lie in (0, 1)"
                        + (kind == Kind.BINOMIAL ? " (a binomial schedule's last beta may be 1)" : ""));
            }
        }
        int[] src = identity(b.length);
        if (sourceSteps != null) {
            if (sourceSteps.length != b.length) {
                throw new IllegalArgumentException("sourceSteps has " + sourceSteps.length
                        + " entries; expected one per beta, " + b.length);
            }
            src = sourceSteps.clone();
            checkIncreasing("sourceSteps", src, Integer.MAX_VALUE);
        }
        return new NoiseSchedule(kind, b, src);
    }

    // ------------------------------------------------------------------ strided sub-schedules

    /**
     * A sub-schedule over {@code count} evenly spaced steps of this one, always keeping step 1 and
     * step T: t_i = round(1 + (T - 1) i / (count - 1)), i = 0..count-1 (count = 1 keeps T only).
     * See {@link #subset(int...)} for how its betas are made.
     *
     * @param count the number of steps to keep, from 1 to T
     * @return the sub-schedule
     * @throws IllegalArgumentException if {@code count} is outside 1..T
     */
    public NoiseSchedule strided(int count) {
        Require.inRange("count", count, 1, steps());
        int[] keep = new int[count];
        if (count == 1) {
            keep[0] = steps();
        } else {
            for (int i = 0; i < count; i++) {
                keep[i] = (int) Math.round(1.0 + (steps() - 1.0) * i / (count - 1.0));
            }
        }
        return subset(keep);
    }

    /**
     * A sub-schedule over the given steps of this one (Nichol &amp; Dhariwal 2021, section 4): it
     * keeps alpha-bar at those steps and recomputes beta_i = 1 - alpha-bar(t_i) / alpha-bar(t_{i-1})
     * with alpha-bar(t_0) = 1, so that a model trained on this schedule can be sampled with fewer
     * steps. {@link #sourceStep(int)} of the result maps each of its steps back to the step of the
     * original training schedule, which is what the reverse network is conditioned on. Sampling
     * starts from the last kept step, so keep T to start from the prior.
     *
     * @param steps the steps to keep (not modified), strictly increasing, each in 1..T
     * @return the sub-schedule
     * @throws IllegalArgumentException naming the first step out of order or out of range
     */
    public NoiseSchedule subset(int... steps) {
        Require.notNull("steps", steps);
        Require.atLeast("number of steps", steps.length, 1);
        checkIncreasing("steps", steps, steps());
        double[] b = new double[steps.length];
        int[] src = new int[steps.length];
        double prevLog = 0.0;
        for (int i = 0; i < steps.length; i++) {
            double log = logAlphaBar[steps[i]];
            double ratio = log - prevLog;                     // log(alpha-bar_i / alpha-bar_{i-1}) <= 0
            b[i] = Double.isInfinite(log) ? 1.0 : -Math.expm1(ratio);
            src[i] = sourceStep[steps[i] - 1];
            prevLog = log;
        }
        return new NoiseSchedule(kind, b, src);
    }

    private static void checkIncreasing(String name, int[] steps, int max) {
        for (int i = 0; i < steps.length; i++) {
            if (steps[i] < 1 || steps[i] > max) {
                throw new IllegalArgumentException(name + "[" + i + "] is " + steps[i]
                        + "; expected a step from 1 to " + max);
            }
            if (i > 0 && steps[i] <= steps[i - 1]) {
                throw new IllegalArgumentException(name + "[" + i + "] is " + steps[i]
                        + " after " + steps[i - 1] + "; steps must be strictly increasing");
            }
        }
    }

    private static int[] identity(int n) {
        int[] s = new int[n];
        for (int i = 0; i < n; i++) {
            s[i] = i + 1;
        }
        return s;
    }

    // ------------------------------------------------------------------ per-step figures

    /** @return how the schedule was made (a sub-schedule keeps its source's kind) */
    public Kind kind() {
        return kind;
    }

    /** @return T, the number of steps */
    public int steps() {
        return beta.length;
    }

    /** @return true if this is a sub-schedule whose steps are not 1..T of its source */
    public boolean isStrided() {
        return sourceStep[beta.length - 1] != beta.length;
    }

    private int index(int t) {
        if (t < 1 || t > beta.length) {
            throw new IllegalArgumentException("t is " + t + "; expected a step from 1 to " + beta.length);
        }
        return t - 1;
    }

    /**
     * @param t the step, 1..T
     * @return beta_t
     */
    public double beta(int t) {
        return beta[index(t)];
    }

    /**
     * @param t the step, 1..T
     * @return alpha_t = 1 - beta_t
     */
    public double alpha(int t) {
        return 1.0 - beta[index(t)];
    }

    /**
     * @param t the step, 0..T (alpha-bar_0 = 1)
     * @return log alpha-bar_t = sum_{s&lt;=t} log1p(-beta_s); -infinity where a beta is 1
     */
    public double logAlphaBar(int t) {
        if (t == 0) {
            return 0.0;
        }
        return logAlphaBar[index(t) + 1];
    }

    /**
     * @param t the step, 0..T (alpha-bar_0 = 1)
     * @return alpha-bar_t = prod_{s&lt;=t} (1 - beta_s)
     */
    public double alphaBar(int t) {
        return Math.exp(logAlphaBar(t));
    }

    /**
     * @param t the step, 0..T
     * @return 1 - alpha-bar_t, computed as -expm1(log alpha-bar_t) without cancellation; +0.0 at t = 0
     */
    public double oneMinusAlphaBar(int t) {
        double logAbar = logAlphaBar(t);
        return t == 0 ? 0.0 : -Math.expm1(logAbar);   // -expm1(0) would be -0.0
    }

    /**
     * @param t the step, 1..T
     * @return SNR_t = alpha-bar_t / (1 - alpha-bar_t)
     */
    public double snr(int t) {
        index(t);
        return alphaBar(t) / oneMinusAlphaBar(t);
    }

    /**
     * @param t the step, 1..T
     * @return log SNR_t = log alpha-bar_t - log(1 - alpha-bar_t); -infinity where alpha-bar_t = 0
     */
    public double logSnr(int t) {
        index(t);
        return logAlphaBar(t) - Math.log(oneMinusAlphaBar(t));
    }

    /**
     * The variance of the Gaussian posterior q(x_{t-1} | x_t, x_0) (Ho et al. 2020, eq. 7).
     *
     * @param t the step, 1..T
     * @return beta-tilde_t = beta_t (1 - alpha-bar_{t-1}) / (1 - alpha-bar_t); 0 at t = 1
     */
    public double posteriorVariance(int t) {
        return beta[index(t)] * oneMinusAlphaBar(t - 1) / oneMinusAlphaBar(t);
    }

    /**
     * @param t the step, 1..T
     * @return the step of the original schedule that step t stands for (t itself unless strided)
     */
    public int sourceStep(int t) {
        return sourceStep[index(t)];
    }

    /** @return a copy of beta_1..beta_T */
    public double[] betas() {
        return beta.clone();
    }

    /** @return a copy of alpha-bar_1..alpha-bar_T */
    public double[] alphaBars() {
        double[] a = new double[beta.length];
        for (int i = 0; i < a.length; i++) {
            a[i] = Math.exp(logAlphaBar[i + 1]);
        }
        return a;
    }

    /** @return a copy of the source steps, one per step */
    public int[] sourceSteps() {
        return sourceStep.clone();
    }

    /**
     * The step whose alpha-bar is closest, in log-SNR, to the given one; used to place a reading
     * with a known noise level on the chain.
     *
     * @param targetAlphaBar alpha-bar to match, in (0, 1)
     * @return the step t in 1..T whose log-SNR is nearest to log(a / (1 - a))
     * @throws IllegalArgumentException if {@code targetAlphaBar} is not in (0, 1)
     */
    public int nearestStep(double targetAlphaBar) {
        Require.inOpen("targetAlphaBar", targetAlphaBar, 0.0, 1.0);
        double target = Math.log(targetAlphaBar) - Math.log1p(-targetAlphaBar);
        int best = 1;
        double bestGap = Double.POSITIVE_INFINITY;
        for (int t = 1; t <= beta.length; t++) {
            double gap = Math.abs(logSnr(t) - target);
            if (gap < bestGap) {
                bestGap = gap;
                best = t;
            }
        }
        return best;
    }

    // ------------------------------------------------------------------ reading

    /** @return every step's figures, t = 1..T */
    public List<StepRow> rows() {
        List<StepRow> rows = new ArrayList<>(beta.length);
        for (int t = 1; t <= beta.length; t++) {
            rows.add(row(t));
        }
        return List.copyOf(rows);
    }

    /**
     * @param t the step, 1..T
     * @return the figures of step t
     */
    public StepRow row(int t) {
        return new StepRow(t, sourceStep(t), beta(t), alpha(t), alphaBar(t), snr(t), logSnr(t),
                posteriorVariance(t));
    }

    /**
     * The whole per-step table as fixed-width text with a header line: t, source step, beta,
     * alpha-bar, SNR, log-SNR and beta-tilde.
     *
     * @return the table, one line per step
     */
    public String toTableText() {
        StringBuilder sb = new StringBuilder();
        sb.append(String.format(Locale.ROOT, "%6s %6s %12s %12s %12s %10s %12s%n",
                "t", "source", "beta", "alpha-bar", "SNR", "log-SNR", "beta-tilde"));
        for (StepRow r : rows()) {
            sb.append(String.format(Locale.ROOT, "%6d %6d %12.6e %12.6e %12.6e %10.4f %12.6e%n",
                    r.step(), r.sourceStep(), r.beta(), r.alphaBar(), r.snr(), r.logSnr(),
                    r.posteriorVariance()));
        }
        return sb.toString();
    }

    /** @return the kind, T, the range of beta, alpha-bar_T and the log-SNR at both ends */
    @Override
    public String toString() {
        int n = beta.length;
        return String.format(Locale.ROOT,
                "NoiseSchedule[%s%s, T=%d, beta %.3g..%.3g, alpha-bar(T)=%.3g, log-SNR %.3g..%.3g]",
                kind.name().toLowerCase(Locale.ROOT), isStrided() ? " strided" : "", n,
                beta[0], beta[n - 1], alphaBar(n), logSnr(1), logSnr(n));
    }

    /** Two schedules are equal when kind, betas and source steps are equal to the bit. */
    @Override
    public boolean equals(Object o) {
        return o instanceof NoiseSchedule other && kind == other.kind && Arrays.equals(beta, other.beta)
                && Arrays.equals(sourceStep, other.sourceStep);
    }

    @Override
    public int hashCode() {
        return 31 * (31 * kind.hashCode() + Arrays.hashCode(beta)) + Arrays.hashCode(sourceStep);
    }
}
