package org.backstep.internal.chain;

import java.util.Arrays;

import org.backstep.option.BoundOptions;
import org.backstep.option.Conditioning;
import org.backstep.option.SamplerKind;

/**
 * Where a model's bound is noisy, and the allocation of draws that follows: the spread of each
 * term L_{t-1} over its draws of x_t, with and without the control variates of
 * {@link LinearizedTerms} (the linearized continuous terms, the binary cells' one-flip expansion), measured once per model and chain on {@link #ROWS} records that the
 * model draws itself (ancestral sampling from a fixed seed, {@link #SEED}), {@link #PILOT}
 * independent draws per term ({@link BoundEvaluator#termSpread}). It depends on the model alone,
 * never on the records being scored, so a record's score does not depend on the other records
 * scored with it.
 *
 * <p><b>Allocation.</b> A record's bound is a sum of T independent term estimates; with K_t draws
 * at step t its variance is sum_t s_t^2 / K_t, s_t the term's spread. At a fixed number of draws
 * sum_t K_t = N, the variance is least for K_t proportional to s_t (Neyman allocation; Cochran 1977,
 * "Sampling Techniques", section 5.5), with variance (sum_t s_t)^2 / N. The control variate lowers
 * s_t from its plain spread p_t to its linearized spread l_t but costs c = 2 Dc + 1 + D_b network
 * evaluations per record at that step (Dc continuous, D_b binary columns), one draw costing one evaluation. Minimizing the evaluations
 * at a fixed variance V (the Lagrangian sum_t (K_t + c [t linearized] + lambda s_t^2 / K_t)) gives
 * K_t = sqrt(lambda) s_t and a step's least cost 2 sqrt(lambda) s_t + c [t linearized], so step t
 * takes the control variate exactly when 2 sqrt(lambda) (p_t - l_t) &gt; c, with
 * sqrt(lambda) = sum_t s_t / V from the constraint (solved by fixed-point iteration from every step
 * linearized). {@link #allocate(int)} takes V as the variance of K draws per term on average with
 * the control variate at every step, allocated by Neyman: (sum_t l_t)^2 / (K T); so K keeps its
 * meaning of "the noise of K draws per term", at the least cost the profile predicts. The model is
 * that of independent draws; the shifted Sobol points the bound draws do better (their noise falls
 * about as 1/K_t), so the profile's predicted spread is an upper figure.
 *
 * <p>Each K_t is rounded, at least 1 and at most {@link #MOST_PER_STEP_FACTOR} K (a step's draws are
 * one batch of the network, held in memory at once). The bound stays unbiased whatever the K_t and
 * whichever steps take the control variate, so it stays an upper bound on the negative
 * log-likelihood in expectation over the seed.
 */
public final class TermProfile {

    /** Records the model draws for the profile: 64 (our choice; the spread is a root mean square over them). */
    static final int ROWS = 64;
    /** Independent draws per term in the profile: 4, enough for a spread per term rms over 64 records (our choice). */
    static final int PILOT = 4;
    /** The fixed seed of the profile's records and draws. */
    static final long SEED = 0x5EED_0F_7E57L;
    /** The most draws of one step, as a multiple of the mean K: 16. */
    static final int MOST_PER_STEP_FACTOR = 16;

    private final double[] plain;
    private final double[] linear;
    private final int cost;

    private TermProfile(double[] plain, double[] linear, int cost) {
        this.plain = plain;
        this.linear = linear;
        this.cost = cost;
    }

    /**
     * A profile given (tests of the allocation).
     *
     * @param plain index 1..T: each term's spread without the control variates
     * @param linear index 1..T: with them
     * @param cost the control variates' network evaluations per record and step, 0 when the chain has none
     * @return the profile
     */
    static TermProfile of(double[] plain, double[] linear, int cost) {
        return new TermProfile(plain.clone(), linear.clone(), cost);
    }

    /**
     * Measures the profile of a chain: {@link #ROWS} records drawn by ancestral sampling from
     * {@link #SEED}, then each term's spread over {@link #PILOT} independent draws, plain (with the
     * closed-form part's control variate where the model has one) and linearized.
     *
     * @param chain the chain (full or strided)
     * @param threads worker threads (the result does not depend on them)
     * @return the profile
     */
    static TermProfile measure(Chain chain, int threads) {
        float[] x = Parallel.fillChunks(ROWS, chain.d, threads, SEED, (from, n, rng, rows) -> {
            chain.drawPrior(rows, n, rng);
            ReverseRun.run(chain, rows, n, chain.steps, null, 1, SamplerKind.ANCESTRAL, 0.0, Conditioning.REPLACEMENT,
                    rng);
        });
        double[] plain = BoundEvaluator.termSpread(chain, x, ROWS, PILOT, 0, SEED, threads);
        boolean controls = chain.dc > 0 || chain.discreteEnd > chain.dc;
        double[] linear = controls
                ? BoundEvaluator.termSpread(chain, x, ROWS, PILOT, chain.steps, SEED, threads) : plain;
        return new TermProfile(plain, linear, controls ? LinearizedTerms.evaluations(chain) : 0);
    }

    /** @return index 1..T: each term's spread over one draw without the linearized control variate (a copy) */
    public double[] plainSpread() {
        return plain.clone();
    }

    /** @return index 1..T: each term's spread over one draw with the linearized control variate (a copy) */
    public double[] linearizedSpread() {
        return linear.clone();
    }

    /**
     * The draws of each term and the steps that take the control variate, as the class comment
     * derives them, for shifted Sobol points (independent draws when every K_t is 1).
     *
     * @param k the mean draws per term of the reference plan, 1 to {@link BoundOptions#MAX_TERM_DRAWS}
     * @return the plan
     */
    public TermDraws allocate(int k) {
        int steps = plain.length - 1;
        double reference = referenceSpread();
        if (reference == 0.0) {
            return uniform(k);
        }
        // V = reference^2 / (k T)
        return plan(reference * reference / ((double) k * steps), k);
    }

    /**
     * The draws that reach a predicted per-record variance V (Neyman allocation with a variance
     * target; Cochran 1977, section 5.5): the same Lagrangian as the class comment's, K_t =
     * sqrt(lambda) s_t with sqrt(lambda) = sum_t s_t / V, so that the predicted variance
     * sum_t s_t^2 / K_t is V and the draws in all N = (sum_t s_t)^2 / V (before rounding; K_t at
     * least 1, which only lowers the variance). When N would pass {@code mostMean} T, the plan is
     * {@link #allocate}({@code mostMean}) and its predicted variance above V.
     *
     * @param variance V, nats squared, above 0
     * @param mostMean the cap on the mean draws per term, 1 to {@link BoundOptions#MAX_TERM_DRAWS}
     * @return the plan
     */
    public TermDraws allocateTo(double variance, int mostMean) {
        if (!(variance > 0.0) || !Double.isFinite(variance)) {
            throw new IllegalArgumentException("variance is " + variance + "; it must be finite and above 0");
        }
        int steps = plain.length - 1;
        if (referenceSpread() == 0.0) {
            return uniform(1);
        }
        TermDraws target = plan(variance, mostMean);
        return target.total() > (long) mostMean * steps ? allocate(mostMean) : target;
    }

    /**
     * @param draws a plan of this profile's chain
     * @return the per-record variance the profile predicts for it, sum_t s_t^2 / K_t (s_t the
     *     linearized spread at the steps that take the control variate, else the plain one),
     *     independent draws
     */
    public double predictedVariance(TermDraws draws) {
        double v = 0.0;
        for (int s = 1; s < plain.length; s++) {
            double spread = draws.linearizes(s) ? linear[s] : plain[s];
            v += spread * spread / draws.at(s);
        }
        return v;
    }

    /**
     * @return sum_t s_t over steps 1..T, s_t the linearized spread when the chain has control
     *     variates (every step linearized), else the plain one; 0 when no finite noise was measured
     *     (the sum is not finite or not above 0), where the plans fall back to K draws at every step
     */
    private double referenceSpread() {
        double sum = 0.0;
        for (int s = 1; s < plain.length; s++) {
            sum += cost > 0 ? linear[s] : plain[s];
        }
        return sum > 0.0 && Double.isFinite(sum) ? sum : 0.0;
    }

    /**
     * The plan when no noise was measured (or none finite): k draws at every step, the control
     * variates at every step when the chain has them.
     */
    private TermDraws uniform(int k) {
        int steps = plain.length - 1;
        return TermDraws.perTerm(k, steps).linearizedUpTo(cost > 0 ? steps : 0);
    }

    /** The least-cost plan at the variance V (the class comment), each K_t at most MOST_PER_STEP_FACTOR k. */
    private TermDraws plan(double variance, int k) {
        int steps = plain.length - 1;
        boolean[] lin = new boolean[steps + 1];
        Arrays.fill(lin, 1, steps + 1, cost > 0);
        double root = referenceSpread() / variance;
        for (int round = 0; round < 50 && cost > 0; round++) {
            boolean changed = false;
            double sum = 0.0;
            for (int s = 1; s <= steps; s++) {
                boolean want = 2.0 * root * (plain[s] - linear[s]) > cost;
                changed |= want != lin[s];
                lin[s] = want;
                sum += want ? linear[s] : plain[s];
            }
            root = sum / variance;
            if (!changed) {
                break;
            }
        }
        long most = Math.min((long) MOST_PER_STEP_FACTOR * k, BoundOptions.MAX_TERM_DRAWS);
        int[] per = new int[steps + 1];
        boolean single = true;
        for (int s = 1; s <= steps; s++) {
            double spread = lin[s] ? linear[s] : plain[s];
            per[s] = (int) Math.max(1L, Math.min(most, Math.round(root * spread)));
            single &= per[s] == 1;
        }
        return TermDraws.allocated(single ? TermDraws.Kind.INDEPENDENT : TermDraws.Kind.SHIFTED_SOBOL, per, lin);
    }

    /**
     * One profile per chain, measured the first time it is asked for and kept (thread-safe: the
     * first caller measures, the others wait for it).
     */
    static final class Lazy {
        private final Chain chain;
        private volatile TermProfile value;

        Lazy(Chain chain) {
            this.chain = chain;
        }

        TermProfile get(int threads) {
            TermProfile v = value;
            if (v == null) {
                synchronized (this) {
                    v = value;
                    if (v == null) {
                        v = measure(chain, threads);
                        value = v;
                    }
                }
            }
            return v;
        }
    }
}
