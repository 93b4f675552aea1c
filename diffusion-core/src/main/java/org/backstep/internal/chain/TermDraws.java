package org.backstep.internal.chain;

import java.util.Arrays;
import java.util.SplittableRandom;

import org.apache.commons.math3.random.SobolSequenceGenerator;
import org.apache.commons.math3.special.Erf;

/**
 * How the exact bound draws x_t ~ q(x_t | x_0) for each of its terms: K_t draws at step t, the
 * term taken as their mean (an unbiased estimate of E_q[L_{t-1}] whatever the points, as long as
 * each point is marginally a draw of q), by one of three point sets:
 * <ul>
 *   <li>independent draws (K_t = 1 everywhere is the bound's historical one draw per term);</li>
 *   <li>antithetic pairs (e, -e) for the continuous noise and (u, 1 - u) for the uniforms of the
 *       discrete cells (Hammersley &amp; Morton 1956; Glasserman 2003, "Monte Carlo Methods in
 *       Financial Engineering", section 4.2);</li>
 *   <li>randomized quasi-Monte Carlo: the first K_t points of the Sobol sequence in D dimensions
 *       (Sobol 1967; commons-math3's {@link SobolSequenceGenerator}), shifted by one uniform
 *       random vector mod 1 per row and term (Cranley &amp; Patterson 1976), the continuous
 *       coordinates mapped to normal noise by the inverse normal CDF; each shifted point is
 *       uniform on the cube, so the mean stays unbiased (L'Ecuyer &amp; Lemieux 2002, "Recent
 *       advances in randomized quasi-Monte Carlo methods", section 3).</li>
 * </ul>
 * Every random number of a row comes from that row's generator, in the order the row's points are
 * made, so a row's draws depend only on its generator.
 */
public final class TermDraws {

    /** The point set of a term's draws. */
    public enum Kind {
        /** K independent draws. */
        INDEPENDENT,
        /** Antithetic pairs; an odd K ends with one independent draw. */
        ANTITHETIC,
        /** K Sobol points with a random shift mod 1 per row and term. */
        SHIFTED_SOBOL
    }

    final Kind kind;
    private final int[] perStep;       // index 1..steps
    private final boolean[] linear;    // index 1..steps: the step takes the control variate of LinearizedTerms

    private TermDraws(Kind kind, int[] perStep, boolean[] linear) {
        this.kind = kind;
        this.perStep = perStep;
        this.linear = linear;
    }

    /**
     * @param upTo the last step whose continuous terms take the linearized control variate
     *     ({@link LinearizedTerms}), 0 for none
     * @return a copy of this plan with it
     */
    public TermDraws linearizedUpTo(int upTo) {
        if (upTo < 0) {
            throw new IllegalArgumentException("linearized steps is " + upTo + "; at least 0");
        }
        boolean[] mask = new boolean[perStep.length];
        java.util.Arrays.fill(mask, 1, Math.min(upTo, perStep.length - 1) + 1, true);
        return new TermDraws(kind, perStep, mask);
    }

    /** @return whether step s takes the linearized control variate */
    public boolean linearizes(int s) {
        return linear[s];
    }

    /** @return whether some step takes the linearized control variate */
    boolean linearizesAny() {
        for (boolean b : linear) {
            if (b) {
                return true;
            }
        }
        return false;
    }

    /** @return the steps that take the linearized control variate */
    public int linearizedSteps() {
        int count = 0;
        for (boolean b : linear) {
            count += b ? 1 : 0;
        }
        return count;
    }

    /**
     * The plan of an exact bound's options: K = termDraws at every step, independent draws for
     * K = 1 (the historical stream), shifted Sobol points for K &gt; 1, the linearized control
     * variate at every step when asked.
     *
     * @param how exact bound options
     * @param steps the chain's steps
     * @return the plan
     */
    public static TermDraws of(org.backstep.option.BoundOptions how, int steps) {
        TermDraws plan = perTerm(how.termDraws(), steps);
        return how.linearized() ? plan.linearizedUpTo(steps) : plan;
    }

    /**
     * The exact bound's point set for K draws at every step: independent draws for K = 1 (the
     * historical stream), shifted Sobol points for K &gt; 1; no step linearized.
     *
     * @param k draws per term, at least 1
     * @param steps the chain's steps
     * @return the plan
     */
    public static TermDraws perTerm(int k, int steps) {
        return uniform(k == 1 ? Kind.INDEPENDENT : Kind.SHIFTED_SOBOL, k, steps);
    }

    /** @return the historical plan: one independent draw per term */
    public static TermDraws single(int steps) {
        return uniform(Kind.INDEPENDENT, 1, steps);
    }

    /**
     * @param kind the point set
     * @param k draws per term, at least 1
     * @param steps the chain's steps
     * @return K draws at every step
     */
    public static TermDraws uniform(Kind kind, int k, int steps) {
        if (k < 1) {
            throw new IllegalArgumentException("draws per term is " + k + "; it must be at least 1");
        }
        int[] per = new int[steps + 1];
        Arrays.fill(per, 1, steps + 1, k);
        return new TermDraws(kind, per, new boolean[steps + 1]);
    }

    /**
     * @param kind the point set
     * @param perStep index 1..steps: the draws of step t, each at least 1 (index 0 unread)
     * @return the plan, no step linearized
     */
    public static TermDraws allocated(Kind kind, int[] perStep) {
        return allocated(kind, perStep, new boolean[perStep.length]);
    }

    /**
     * @param kind the point set
     * @param perStep index 1..steps: the draws of step t, each at least 1 (index 0 unread)
     * @param linear index 1..steps: whether step t takes the linearized control variate (index 0 unread)
     * @return the plan
     */
    public static TermDraws allocated(Kind kind, int[] perStep, boolean[] linear) {
        if (linear.length != perStep.length) {
            throw new IllegalArgumentException("linear has " + linear.length + " entries and perStep " + perStep.length
                    + "; one per step (and index 0) each");
        }
        for (int s = 1; s < perStep.length; s++) {
            if (perStep[s] < 1) {
                throw new IllegalArgumentException("draws at step " + s + " is " + perStep[s] + "; at least 1");
            }
        }
        boolean[] mask = linear.clone();
        mask[0] = false;
        return new TermDraws(kind, perStep.clone(), mask);
    }

    /** @return the draws of step s */
    public int at(int s) {
        return perStep[s];
    }

    /** @return the largest draws of any step */
    int most() {
        int m = 1;
        for (int s = 1; s < perStep.length; s++) {
            m = Math.max(m, perStep[s]);
        }
        return m;
    }

    /** @return the draws summed over the steps: the network evaluations per record */
    public long total() {
        long t = 0;
        for (int s = 1; s < perStep.length; s++) {
            t += perStep[s];
        }
        return t;
    }

    /** The most dimensions of commons-math3's Sobol sequence (its direction numbers). */
    static final int SOBOL_MAX_DIMENSIONS = 1000;

    /**
     * The first {@code k} points of the Sobol sequence in {@code d} dimensions, k x d.
     *
     * @param k points
     * @param d dimensions, 1 to 1000 (commons-math3's direction numbers)
     * @return the points
     */
    static double[][] sobolPoints(int k, int d) {
        if (d > SOBOL_MAX_DIMENSIONS) {
            throw new IllegalArgumentException("termDraws is " + k + " (shifted Sobol points) and the chain has " + d
                    + " model-space columns; shifted Sobol points cover at most " + SOBOL_MAX_DIMENSIONS
                    + " columns (commons-math3's direction numbers): use termDraws 1");
        }
        SobolSequenceGenerator g = new SobolSequenceGenerator(d);
        double[][] p = new double[k][];
        for (int i = 0; i < k; i++) {
            p[i] = g.nextVector();
        }
        return p;
    }

    /**
     * The noise of K replicas of a row from the row's generator by this plan's point set, replica i
     * at {@code noise[i * D ...]}: the continuous cells' standard normal noise (an antithetic
     * replica's already negated), the discrete cells' uniforms (an antithetic replica's already
     * 1 - u). It depends on the generator's state alone, not on the row's cells, so rows whose
     * generators are in the same state share it.
     *
     * @param chain the chain
     * @param k the replicas
     * @param sobol the Sobol points (at least k x D) for SHIFTED_SOBOL, else unread
     * @param rng the row's generator (advanced)
     * @param noise at least k D entries, overwritten
     * @param shift D scratch entries (SHIFTED_SOBOL's shift of the row), else unread
     */
    void drawNoise(Chain chain, int k, double[][] sobol, SplittableRandom rng, double[] noise, double[] shift) {
        int d = chain.d;
        int dc = chain.dc;
        switch (kind) {
            case INDEPENDENT -> {
                for (int i = 0; i < k; i++) {
                    int o = i * d;
                    for (int j = 0; j < dc; j++) {
                        noise[o + j] = rng.nextGaussian();
                    }
                    for (int j = dc; j < d; j++) {
                        noise[o + j] = rng.nextDouble();
                    }
                }
            }
            case ANTITHETIC -> {
                for (int i = 0; i < k; i++) {
                    int o = i * d;
                    if ((i & 1) == 1) {
                        for (int j = 0; j < dc; j++) {
                            noise[o + j] = -noise[o - d + j];
                        }
                        for (int j = dc; j < d; j++) {
                            noise[o + j] = 1.0 - noise[o - d + j];
                        }
                    } else {
                        for (int j = 0; j < dc; j++) {
                            noise[o + j] = rng.nextGaussian();
                        }
                        for (int j = dc; j < d; j++) {
                            noise[o + j] = rng.nextDouble();
                        }
                    }
                }
            }
            case SHIFTED_SOBOL -> {
                for (int j = 0; j < d; j++) {
                    shift[j] = rng.nextDouble();
                }
                for (int i = 0; i < k; i++) {
                    double[] p = sobol[i];
                    int o = i * d;
                    for (int j = 0; j < d; j++) {
                        double u = p[j] + shift[j];
                        u = u >= 1.0 ? u - 1.0 : u;
                        noise[o + j] = j < dc ? normalQuantile(u) : u;
                    }
                }
            }
            default -> throw new IllegalStateException("unknown kind " + kind);
        }
    }

    /**
     * x_s = sqrt(abar_s) x_0 + sqrt(1 - abar_s) e for the continuous cells and the discrete cells'
     * draws from their uniforms, of K replicas of row r (replica i is row i * rows + r of
     * {@code xt}) from their noise ({@link #drawNoise}).
     *
     * @param chain the chain
     * @param x0 rows x D
     * @param rows the rows of x0
     * @param r the row
     * @param s the step
     * @param k the replicas
     * @param noise k D entries, replica i at i D (not modified)
     * @param xt (k rows) x D, written at the replicas of row r
     * @param eps null, or (k rows) x Dc: written with each replica's continuous noise
     */
    void putReplicas(Chain chain, float[] x0, int rows, int r, int s, int k, double[] noise, float[] xt,
                     double[] eps) {
        int d = chain.d;
        int dc = chain.dc;
        int o = r * d;
        for (int i = 0; i < k; i++) {
            put(chain, x0, o, s, noise, i * d, xt, (i * rows + r) * d, eps, (i * rows + r) * dc);
        }
    }

    private static void put(Chain chain, float[] x0, int o, int s, double[] noise, int no, float[] xt, int to,
                            double[] eps, int eo) {
        for (int j = 0; j < chain.dc; j++) {
            double e = noise[no + j];
            xt[to + j] = chain.diffusedContinuous(s, x0[o + j], e);
            if (eps != null) {
                eps[eo + j] = e;
            }
        }
        for (int j = chain.dc; j < chain.d; j++) {
            xt[to + j] = chain.diffusedDiscrete(j, s, x0[o + j], noise[no + j]);
        }
    }

    /** The smallest uniform passed to the quantile: a shifted point can land on 0 exactly. */
    private static final double TINY = 0x1.0p-53;

    /** The standard normal quantile, sqrt(2) erf^-1(2u - 1) (commons-math3's {@link Erf#erfInv}). */
    static double normalQuantile(double u) {
        double c = Math.min(Math.max(u, TINY), 1.0 - TINY);
        return Math.sqrt(2.0) * Erf.erfInv(2.0 * c - 1.0);
    }
}
