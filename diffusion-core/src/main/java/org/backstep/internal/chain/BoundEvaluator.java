package org.backstep.internal.chain;

import java.util.SplittableRandom;

/**
 * Evaluates the negative variational bound per record in model space, summing the terms of
 * {@link BoundTerms} (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015, eq. 14) over steps,
 * x_t ~ q(x_t | x_0) drawn per term. Exactly (all T terms, one draw of x_t per term) or by Monte Carlo: the prior term and the
 * decoder term L_0 exactly, and K steps drawn uniformly from 2..T for the rest,
 * L ~ L_T + L_0 + ((T - 1)/K) sum_k L_{t_k - 1}, an unbiased estimate with its standard error from
 * the K terms. Keeping L_0 out of the draw matters: for continuous columns it is a density term whose
 * size (several nats) would otherwise enter the estimate multiplied by T with probability 1/T.
 */
public final class BoundEvaluator {

    private BoundEvaluator() {
    }

    /**
     * The most rows of one network call of the exact bound's replicas: 4,096 (16 draws of a chunk of
     * {@link Parallel#CHUNK_ROWS} rows). An allocated plan can ask for hundreds of draws at one step;
     * in one call, the network's buffers for them would take hundreds of megabytes per thread.
     */
    static final int MAX_CALL_ROWS = 4096;

    /** Per-record results of one evaluation. */
    public static final class Result {
        public final double[] continuous;
        public final double[] binary;
        public final double[] standardError;   // zero for the exact method
        public final double[] perStepMean;     // index 0: prior L_T; index k: mean L_{k-1}; empty for Monte Carlo

        Result(int rows, int steps, boolean perStep) {
            continuous = new double[rows];
            binary = new double[rows];
            standardError = new double[rows];
            perStepMean = new double[perStep ? steps + 1 : 0];
        }
    }

    /**
     * One chunk of rows and its scratch: x_0, x_t, the steps, the generator of each row and one
     * step's terms. With one seed for the job, every row of the chunk shares the chunk's generator
     * {@link Parallel#random}(seed, chunk); with a seed per row, row r has its own,
     * {@link Parallel#random}(rowSeeds[r], 0), the generator a one-row table seeded with rowSeeds[r]
     * gets, so that its draws do not depend on the other rows. (The network's float32 products
     * still round differently with a row's place in the batch: OpenBLAS's sgemm kernels treat the
     * edges of a matrix apart; measured, a record's bound moved by about 1e-7 relative between
     * places 0 to 7 and 8 to 247 of a 256-row batch, and not with -XX:-UseSuperWord, so not in Java.)
     */
    private static final class Chunk {
        final Chain chain;
        final int from;
        final int n;
        final float[] x;
        final SplittableRandom[] rng;
        final Chain.Workspace ws;
        final float[] xt;
        final int[] k;
        final double[] stepCont;
        final double[] stepBin;

        Chunk(Chain chain, float[] x0, int rows, int c, long seed, long[] rowSeeds, int replicas) {
            this(chain, x0, rows, c, seed, rowSeeds, replicas, replicas);
        }

        /** @param perCall the replicas of the chunk's rows per network call (the workspace's rows: perCall n) */
        Chunk(Chain chain, float[] x0, int rows, int c, long seed, long[] rowSeeds, int replicas, int perCall) {
            this.chain = chain;
            from = c * Parallel.CHUNK_ROWS;
            n = Math.min(Parallel.CHUNK_ROWS, rows - from);
            x = slice(x0, from, n, chain.d);
            // with row seeds the job's seed is not read: row i draws from its own seed alone
            rng = Parallel.generators(rowSeeds == null ? seed : 0L, rowSeeds, c, n);
            ws = chain.workspace(Math.min(replicas, perCall) * n);
            xt = new float[replicas * n * chain.d];
            k = new int[replicas * n];
            stepCont = new double[replicas * n];
            stepBin = new double[replicas * n];
        }

        /** The bound terms of x_t at the steps in k, given the estimator's output, into stepCont and stepBin. */
        void stepTerms(float[] out) {
            java.util.Arrays.fill(stepCont, 0.0);
            java.util.Arrays.fill(stepBin, 0.0);
            BoundTerms.rowTerms(chain, x, xt, out, n, k, stepCont, stepBin);
        }
    }

    /**
     * The exact bound: every term of the chain, one draw of x_t per term. When the estimator has a
     * closed-form part ({@link GaussianBaseline}), each continuous term is taken with that part as
     * a control variate: L(x_t) - L_lin(x_t) + E[L_lin], where L_lin is the term of the
     * zero-correction model (the baseline alone) on the same x_t and E[L_lin] its expectation over
     * x_t in closed form ({@link BoundTerms.BaselineExpectation}). The expectation is the same
     * bound; only the noise of the draw changes, and it vanishes where the network's correction
     * does. The control variate draws nothing of its own, so a row's draws are those of the plain
     * bound (and, with a seed per row, those of a one-row table). An integer column's decoder term
     * (t = 1, a discretized Gaussian's mass) has no closed-form expectation here and is taken as
     * drawn.
     *
     * @param chain the chain (full or strided)
     * @param x0 rows x D model-space records, not modified
     * @param rows the number of records
     * @param seed the seed of the draws (chunk c draws from {@link Parallel#random}(seed, c))
     * @param threads worker threads
     * @return per record, the terms
     */
    public static Result exact(Chain chain, float[] x0, int rows, long seed, int threads) {
        return exact(chain, x0, rows, seed, null, TermDraws.single(chain.steps), threads);
    }

    /**
     * {@link #exact(Chain, float[], int, long, int)} with a seed per row: row r draws as a one-row
     * table seeded with rowSeeds[r] does.
     */
    public static Result exact(Chain chain, float[] x0, int rows, long[] rowSeeds, int threads) {
        return exact(chain, x0, rows, 0L, rowSeeds, TermDraws.single(chain.steps), threads);
    }

    /**
     * The exact bound with K_t draws of x_t at step t by the plan's point set, each term the mean of
     * its draws ({@link TermDraws}; one independent draw per term gives the bits of
     * {@link #exact(Chain, float[], int, long, int)}), the control variate as there. Row r's draws
     * come from its generator (the chunk's with one seed, its own with a seed per row), all of
     * step t's draws before step t + 1's.
     *
     * @param seed the seed of the draws, read when rowSeeds is null
     * @param rowSeeds null, or a seed per row
     * @param plan the draws per term
     */
    public static Result exact(Chain chain, float[] x0, int rows, long seed, long[] rowSeeds, TermDraws plan,
                               int threads) {
        return exact(chain, x0, rows, seed, rowSeeds, plan, null, threads);
    }

    /**
     * The spread of each term over its draws: per step t, the root mean square over the rows of
     * the sample standard deviation of one draw's term (continuous with the control variate where
     * the estimator has a closed-form part, plus discrete), from {@code pilot} independent draws
     * per term. A term's share of a row's variance is its square; the allocation of draws that
     * minimizes the variance of the sum at a fixed total is K_t proportional to it (Neyman
     * allocation, Cochran 1977, "Sampling Techniques", section 5.5).
     *
     * @param pilot independent draws per term, at least 2
     * @return index 1..T: each step's spread (index 0, the prior, is exact: 0)
     */
    public static double[] termSpread(Chain chain, float[] x0, int rows, int pilot, long seed, int threads) {
        return termSpread(chain, x0, rows, pilot, 0, seed, threads);
    }

    /**
     * {@link #termSpread(Chain, float[], int, int, long, int)} of the terms with the linearized
     * control variate ({@link LinearizedTerms}) at steps 1..linearized.
     */
    public static double[] termSpread(Chain chain, float[] x0, int rows, int pilot, int linearized, long seed,
                                      int threads) {
        if (pilot < 2) {
            throw new IllegalArgumentException("pilot is " + pilot + "; a spread needs at least 2 draws");
        }
        double[][] perChunk = new double[Parallel.chunks(rows)][chain.steps + 1];
        exact(chain, x0, rows, seed, null, TermDraws.uniform(TermDraws.Kind.INDEPENDENT, pilot, chain.steps)
                .linearizedUpTo(linearized), perChunk, threads);
        double[] spread = new double[chain.steps + 1];
        for (int s = 1; s <= chain.steps; s++) {
            double total = 0.0;
            for (double[] chunk : perChunk) {
                total += chunk[s];
            }
            spread[s] = Math.sqrt(total / rows);
        }
        return spread;
    }

    private static Result exact(Chain chain, float[] x0, int rows, long seed, long[] rowSeeds, TermDraws plan,
                                double[][] perChunkVariance, int threads) {
        Result res = new Result(rows, chain.steps, true);
        int chunks = Parallel.chunks(rows);
        double[][] perChunkSteps = new double[chunks][chain.steps + 1];
        GaussianBaseline baseline = chain.estimator.baseline();
        boolean controlled = baseline != null && baseline.continuousColumns() > 0;
        boolean learned = chain.variance == org.backstep.option.ReverseVariance.LEARNED;
        BoundTerms.BaselineExpectation[] expectation = new BoundTerms.BaselineExpectation[chain.steps + 1];
        if (controlled) {
            for (int s = 1; s <= chain.steps; s++) {
                expectation[s] = new BoundTerms.BaselineExpectation(chain, s, baseline.gain(chain.source[s]),
                        baseline.v(chain.source[s]), baseline.meanView());
            }
        }
        int most = plan.most();
        // each chunk holds its rows' replicas of x_t (and x_0 when most > 1): refused before any allocation
        org.backstep.option.Limits.checkCells("termDraws x chunk rows x model-space columns of the bound's replicas",
                most, Math.min(Parallel.CHUNK_ROWS, rows), chain.d);
        double[][] sobol = plan.kind == TermDraws.Kind.SHIFTED_SOBOL ? TermDraws.sobolPoints(most, chain.d) : null;
        Parallel.forEachChunk(chunks, threads, c -> {
            int chunkRows = Math.min(Parallel.CHUNK_ROWS, rows - c * Parallel.CHUNK_ROWS);
            // the replicas of one step go through the network in groups of at most MAX_CALL_ROWS rows
            int perCall = Math.max(1, Math.min(most, MAX_CALL_ROWS / chunkRows));
            Chunk ch = new Chunk(chain, x0, rows, c, seed, rowSeeds, most, perCall);
            int n = ch.n;
            int d = chain.d;
            float[] xs = ch.x;
            if (most > 1) {
                xs = new float[most * n * d];
                for (int i = 0; i < most; i++) {
                    System.arraycopy(ch.x, 0, xs, i * n * d, n * d);
                }
            }
            java.util.Map<Integer, Chain.Workspace> spaces = new java.util.HashMap<>();
            spaces.put(Math.min(most, perCall), ch.ws);
            float[] outAll = most > perCall ? new float[most * n * chain.outputs] : null;
            float[] group = most > perCall ? new float[perCall * n * d] : null;
            double[] noise = new double[most * d];
            // rows seeded alike draw the same noise (a screen's common random numbers): drawn once per step
            boolean sameStream = sameSeeds(rowSeeds, ch.from, n);
            double[] shift = plan.kind == TermDraws.Kind.SHIFTED_SOBOL ? new double[d] : null;
            double[] replicaCont = perChunkVariance != null ? new double[most] : null;
            double[] cont = new double[n];
            double[] bin = new double[n];
            boolean linearizing = (chain.dc > 0 || chain.discreteEnd > chain.dc) && plan.linearizesAny();
            LinearizedTerms linear = linearizing ? new LinearizedTerms(chain, n) : null;
            double[] eps = linearizing ? new double[most * n * chain.dc] : null;
            double[] linBin = linearizing ? new double[most * n] : null;
            double[] expectedBin = linearizing ? new double[n] : null;
            double[] linCont = controlled || linearizing ? new double[most * n] : null;
            double[] expected = controlled || linearizing ? new double[n] : null;
            float[] lin = controlled ? new float[most * n * chain.outputs] : null;
            int[] src = controlled ? new int[most * n] : null;
            BoundTerms.priorRows(chain, ch.x, n, cont, bin);
            perChunkSteps[c][0] = sum(cont) + sum(bin);
            for (int s = 1; s <= chain.steps; s++) {
                int k = plan.at(s);
                int m = k * n;
                java.util.Arrays.fill(ch.k, 0, m, s);
                for (int r = 0; r < n; r++) {
                    if (r == 0 || !sameStream) {
                        plan.drawNoise(chain, k, sobol, ch.rng[r], noise, shift);
                    }
                    plan.putReplicas(chain, ch.x, n, r, s, k, noise, ch.xt, eps);
                }
                float[] out;
                if (k <= perCall) {
                    Chain.Workspace ws = spaces.computeIfAbsent(k, kk -> chain.workspace(kk * n));
                    out = chain.predictAtStep(ws, ch.xt, s);
                } else {
                    for (int g0 = 0; g0 < k; g0 += perCall) {
                        int g = Math.min(perCall, k - g0);
                        Chain.Workspace ws = spaces.computeIfAbsent(g, gg -> chain.workspace(gg * n));
                        System.arraycopy(ch.xt, g0 * n * d, group, 0, g * n * d);
                        float[] part = chain.predictAtStep(ws, group, s);
                        System.arraycopy(part, 0, outAll, g0 * n * chain.outputs, g * n * chain.outputs);
                    }
                    out = outAll;
                }
                java.util.Arrays.fill(ch.stepCont, 0, m, 0.0);
                java.util.Arrays.fill(ch.stepBin, 0, m, 0.0);
                BoundTerms.rowTerms(chain, xs, ch.xt, out, m, ch.k, ch.stepCont, ch.stepBin);
                boolean linearStep = linearizing && plan.linearizes(s);
                boolean subtract = controlled || linearStep;
                if (linearStep) {
                    linear.control(s, ch.x, k, eps, ch.xt, linCont, expected, linBin, expectedBin);
                } else if (controlled) {
                    java.util.Arrays.fill(src, 0, m, chain.source[s]);
                    java.util.Arrays.fill(lin, 0, m * chain.outputs, 0f);
                    baseline.addInPlace(ch.xt, d, src, lin, chain.outputs, m, learned);
                    java.util.Arrays.fill(linCont, 0, m, 0.0);
                    BoundTerms.rowContinuousTerms(chain, xs, ch.xt, lin, m, ch.k, linCont);
                    if (s == 1) {
                        // integer columns' decoder terms are taken as drawn (BaselineExpectation leaves them out)
                        BoundTerms.subtractDiscretizedDecoderRows(chain, xs, ch.xt, lin, m, linCont);
                    }
                    java.util.Arrays.fill(expected, 0.0);
                    expectation[s].addRows(ch.x, n, expected);
                }
                double sumCont = 0.0;
                double sumBin = 0.0;
                double stepSum = 0.0;
                for (int r = 0; r < n; r++) {
                    double termCont = 0.0;
                    double termBin = 0.0;
                    for (int i = 0; i < k; i++) {
                        int at = i * n + r;
                        double one = subtract ? ch.stepCont[at] - linCont[at] : ch.stepCont[at];
                        double oneBin = linearStep ? ch.stepBin[at] - linBin[at] : ch.stepBin[at];
                        if (replicaCont != null) {
                            replicaCont[i] = one + oneBin;
                        }
                        termCont += one;
                        termBin += oneBin;
                    }
                    termCont /= k;
                    termBin /= k;
                    if (perChunkVariance != null && k > 1) {
                        double mean = termCont + termBin;
                        double squares = 0.0;
                        for (int i = 0; i < k; i++) {
                            double one = replicaCont[i];
                            squares += (one - mean) * (one - mean);
                        }
                        perChunkVariance[c][s] += squares / (k - 1);
                    }
                    if (subtract) {
                        termCont += expected[r];
                    }
                    if (linearStep) {
                        termBin += expectedBin[r];
                    }
                    cont[r] += termCont;
                    bin[r] += termBin;
                    sumCont += termCont;
                    sumBin += termBin;
                    stepSum += termCont + termBin;
                }
                // the two forms of the step's sum kept from the two former paths (same bits)
                perChunkSteps[c][s] = subtract ? stepSum : sumCont + sumBin;
            }
            System.arraycopy(cont, 0, res.continuous, ch.from, n);
            System.arraycopy(bin, 0, res.binary, ch.from, n);
        });
        perStepMeans(res, perChunkSteps, rows);
        return res;
    }

    /**
     * The Monte Carlo bound: L_T and L_0 exact, K steps drawn uniformly from 2..T for the rest.
     *
     * @param chain the chain
     * @param x0 rows x D model-space records, not modified
     * @param rows the number of records
     * @param draws K
     * @param seed the seed of the draws (chunk c draws from {@link Parallel#random}(seed, c))
     * @param threads worker threads
     * @return per record, the terms and their standard errors
     */
    public static Result monteCarlo(Chain chain, float[] x0, int rows, int draws, long seed, int threads) {
        return monteCarlo(chain, x0, rows, draws, seed, null, threads);
    }

    /**
     * {@link #monteCarlo(Chain, float[], int, int, long, int)} with a seed per row: row r draws its
     * steps and noise as a one-row table seeded with rowSeeds[r] does.
     */
    public static Result monteCarlo(Chain chain, float[] x0, int rows, int draws, long[] rowSeeds, int threads) {
        return monteCarlo(chain, x0, rows, draws, 0L, rowSeeds, threads);
    }

    private static Result monteCarlo(Chain chain, float[] x0, int rows, int draws, long seed, long[] rowSeeds,
                                     int threads) {
        Result res = new Result(rows, chain.steps, false);
        int chunks = Parallel.chunks(rows);
        double scale = chain.steps - 1;
        Parallel.forEachChunk(chunks, threads, c -> {
            Chunk ch = new Chunk(chain, x0, rows, c, seed, rowSeeds, 1);
            int n = ch.n;
            int from = ch.from;
            int[] k = ch.k;
            int[] src = new int[n];
            double[] priorCont = new double[n];
            double[] priorBin = new double[n];
            double[] sumCont = new double[n];
            double[] sumBin = new double[n];
            double[] sumSq = new double[n];
            BoundTerms.priorRows(chain, ch.x, n, priorCont, priorBin);
            java.util.Arrays.fill(k, 1);
            chain.diffuse(ch.x, n, k, ch.xt, null, ch.rng);
            BoundTerms.rowTerms(chain, ch.x, ch.xt, chain.predictAtStep(ch.ws, ch.xt, 1), n, k, priorCont, priorBin);
            int rounds = chain.steps > 1 ? draws : 0;
            for (int draw = 0; draw < rounds; draw++) {
                for (int r = 0; r < n; r++) {
                    k[r] = 2 + ch.rng[r].nextInt(chain.steps - 1);
                    src[r] = chain.source[k[r]];
                }
                chain.diffuse(ch.x, n, k, ch.xt, null, ch.rng);
                ch.stepTerms(chain.predict(ch.ws, ch.xt, src));
                for (int r = 0; r < n; r++) {
                    double term = scale * (ch.stepCont[r] + ch.stepBin[r]);
                    sumCont[r] += scale * ch.stepCont[r];
                    sumBin[r] += scale * ch.stepBin[r];
                    sumSq[r] += term * term;
                }
            }
            for (int r = 0; r < n; r++) {
                double meanCont = rounds > 0 ? sumCont[r] / rounds : 0.0;
                double meanBin = rounds > 0 ? sumBin[r] / rounds : 0.0;
                double mean = meanCont + meanBin;
                res.continuous[from + r] = priorCont[r] + meanCont;
                res.binary[from + r] = priorBin[r] + meanBin;
                double var = rounds > 1 ? Math.max(0.0, (sumSq[r] - rounds * mean * mean) / (rounds - 1)) : 0.0;
                res.standardError[from + r] = Math.sqrt(var / Math.max(1, rounds));
            }
        });
        return res;
    }

    /**
     * @return whether rows from..from + n - 1 have a seed each and all the same one: their generators
     *     ({@link Parallel#random}(seed, 0) each) then give the same numbers, row by row
     */
    static boolean sameSeeds(long[] rowSeeds, int from, int n) {
        if (rowSeeds == null) {
            return false;   // the chunk's rows share one generator and draw in turn
        }
        for (int r = 1; r < n; r++) {
            if (rowSeeds[from + r] != rowSeeds[from]) {
                return false;
            }
        }
        return true;
    }

    static float[] slice(float[] x, int fromRow, int rows, int d) {
        float[] s = new float[rows * d];
        System.arraycopy(x, fromRow * d, s, 0, rows * d);
        return s;
    }

    public static double sum(double[] a) {
        double s = 0.0;
        for (double v : a) {
            s += v;
        }
        return s;
    }

    /** Each step's mean over the records, from the chunks' sums (added in chunk order, so the same bits every run). */
    private static void perStepMeans(Result res, double[][] perChunkSteps, int rows) {
        for (int s = 0; s < res.perStepMean.length; s++) {
            double total = 0.0;
            for (double[] chunk : perChunkSteps) {
                total += chunk[s];
            }
            res.perStepMean[s] = total / rows;
        }
    }
}
