package org.backstep.internal.chain;

import org.backstep.option.Conditioning;
import org.backstep.option.ImputationOptions;
import org.backstep.option.SamplerKind;
import org.backstep.report.Imputation;
import org.backstep.schedule.Require;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Imputation on the reverse chain: draws of the missing cells of each incomplete record from the
 * model's conditional distribution given its observed cells, the observed cells held by
 * replacement (Lugmayr et al. 2022, algorithm 1) or by the kernel product (Sohl-Dickstein et al.
 * 2015, section 2.5.2); see {@code org.backstep.option.Conditioning}. Then the per-cell mean and
 * the central interval of the draws (empirical quantiles, Hyndman &amp; Fan 1996, type 6: see
 * {@link #intervalEnd}).
 */
public final class Imputer {

    private Imputer() {
    }

    /**
     * @param engine the model's engine
     * @param records records with the training columns; NaN marks a missing cell
     * @param how draws, level, steps, rounds and method (steps capped at T)
     * @param seed the seed; draw k uses seed + 1,000,003 k
     * @return the draws, the mean and the interval
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static Imputation impute(Engine engine, Table records, ImputationOptions how, long seed) {
        return impute(engine, records, how, seed, null);
    }

    /**
     * {@link #impute(Engine, Table, ImputationOptions, long)} with a seed per record: draw k of
     * record i is made from {@link Parallel#random}(rowSeeds[i] + 1,000,003 k, 0), as a one-record
     * table seeded with rowSeeds[i] draws it, so a record's draws do not depend on the other records.
     *
     * @param engine the model's engine
     * @param records records with the training columns; NaN marks a missing cell
     * @param how draws, level, steps, rounds and method (steps capped at T)
     * @param rowSeeds one seed per record (length checked by the caller; not modified)
     * @return the draws, the mean and the interval
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static Imputation impute(Engine engine, Table records, ImputationOptions how, long[] rowSeeds) {
        return impute(engine, records, how, 0L, rowSeeds);
    }

    private static Imputation impute(Engine engine, Table records, ImputationOptions how, long seed, long[] rowSeeds) {
        int rows = records.rows();
        int[] todo = records.incompleteRowIndices();
        int n = todo.length;
        long[] todoSeeds = null;
        if (rowSeeds != null) {
            todoSeeds = new long[n];
            for (int r = 0; r < n; r++) {
                todoSeeds[r] = rowSeeds[todo[r]];
            }
        }
        records = engine.transform().aligned(records);
        float[] known = n == 0 ? new float[0] : engine.standardized(records.selectRows(todo));
        Chain c = engine.chainOf(Math.min(how.steps(), engine.steps()));
        List<Table> tables = new ArrayList<>();
        for (int k = 0; k < how.draws(); k++) {
            long drawSeed = seed + 1_000_003L * k;
            // todoSeeds is null without row seeds: the job's seed of draw k, else draw k's offset to each row's seed
            float[] all = drawGiven(c, known, n, how.rounds(), how.method(), engine.threads(),
                    rowSeeds == null ? drawSeed : 1_000_003L * k, todoSeeds);
            double[][] completed = records.toArray();
            if (n > 0) {
                // only the missing cells are mapped back: the observed ones are kept as given, and a
                // normal-scores cell's inverse is a root search (most of the time of imputing with such maps)
                for (int i = 0; i < all.length; i++) {
                    if (!Float.isNaN(known[i])) {
                        all[i] = Float.NaN;
                    }
                }
                Table drawn = engine.fromModelSpace(Engine.toRows(all, n, c.d));
                for (int r = 0; r < n; r++) {
                    double[] row = completed[todo[r]];
                    for (int j = 0; j < row.length; j++) {
                        if (Double.isNaN(row[j])) {
                            row[j] = drawn.get(r, j);
                        }
                    }
                }
            }
            tables.add(records.withRows(completed));
        }
        int cols = records.columns();
        double[][] mean = new double[rows][cols];
        double[][] lo = new double[rows][cols];
        double[][] hi = new double[rows][cols];
        double[] cell = new double[how.draws()];
        double level = how.level();
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < cols; j++) {
                double obs = records.get(i, j);
                if (!Double.isNaN(obs)) {
                    mean[i][j] = obs;
                    lo[i][j] = obs;
                    hi[i][j] = obs;
                    continue;
                }
                for (int k = 0; k < cell.length; k++) {
                    cell[k] = tables.get(k).get(i, j);
                }
                if (records.kind(j) == ColumnKind.CATEGORICAL) {
                    // no mean or interval of category indices: the most frequent category, first on a tie
                    int[] count = new int[records.categories(j).size()];
                    int best = 0;
                    for (double v : cell) {
                        count[(int) v]++;
                    }
                    for (int cat = 1; cat < count.length; cat++) {
                        if (count[cat] > count[best]) {
                            best = cat;
                        }
                    }
                    mean[i][j] = best;
                    lo[i][j] = best;
                    hi[i][j] = best;
                    continue;
                }
                mean[i][j] = Arrays.stream(cell).average().orElseThrow();
                double[] sorted = cell.clone();
                Arrays.sort(sorted);
                lo[i][j] = endOfSorted(sorted, (1.0 - level) / 2.0);
                hi[i][j] = endOfSorted(sorted, (1.0 + level) / 2.0);
            }
        }
        return new Imputation(tables, withValues(records, mean), withValues(records, lo), withValues(records, hi),
                level);
    }

    /**
     * One draw of every row's missing cells from the chain's conditional distribution given its
     * observed cells, in model space: each row starts from the prior, its observed cells are set
     * to a draw of q(x_K | x_0 = observed), and the chain runs down to x_0 with the observed cells
     * held by {@code method} ({@link ReverseRun#run}, ancestral sampler), in chunks of
     * {@link Parallel#CHUNK_ROWS} rows ({@link Parallel#fillChunks}), so the result does not depend on
     * the thread count. Observed cells come back exactly as given. The one loop of imputation: the
     * jobs' {@link #impute} and the trainer's filling of training rows with gaps both call it.
     *
     * @param chain the chain to run (the full chain or a strided one)
     * @param known rows x D model-space rows (standardized, also for a whitened chain), NaN where a
     *     cell is missing; not modified
     * @param rows rows in {@code known}
     * @param rounds resampling rounds per step, at least 1
     * @param method how the observed cells are held
     * @param threads threads to use, at least 1
     * @param seed the seed of the draw
     * @return rows x D model-space (standardized) rows, the observed cells as given and the missing
     *     cells drawn
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static float[] drawGiven(Chain chain, float[] known, int rows, int rounds, Conditioning method,
                                    int threads, long seed) {
        return drawGiven(chain, known, rows, rounds, method, threads, seed, null);
    }

    /**
     * {@link #drawGiven(Chain, float[], int, int, Conditioning, int, long)} with a seed per row when
     * {@code rowSeeds} is not null: row i draws from {@link Parallel#random}(rowSeeds[i] + seed, 0)
     * ({@link Parallel#fillChunks(int, int, int, long, long[], Parallel.ChunkBody)}).
     */
    static float[] drawGiven(Chain chain, float[] known, int rows, int rounds, Conditioning method,
                             int threads, long seed, long[] rowSeeds) {
        return Parallel.fillChunks(rows, chain.d, threads, seed, rowSeeds, (from, m, rng, x) -> {
            float[] kn = BoundEvaluator.slice(known, from, m, chain.d);
            chain.drawPrior(x, m, rng);
            ReverseRun.replaceKnown(chain, x, kn, m, chain.steps, rng);
            ReverseRun.run(chain, x, m, chain.steps, kn, rounds, SamplerKind.ANCESTRAL, 0.0, method, rng);
            chain.fromChain(x, m);
        });
    }

    /**
     * A new draw of every row's missing cells that starts from a previous one: the whole row
     * (observed cells and the previous draw of the missing ones) is diffused to chain step
     * {@code from} by q(x_from | x_0) ({@link Chain#diffuse}), then the chain runs down to x_0 with
     * the observed cells held by {@code method}, as in {@link #drawGiven}. A transition of a Markov
     * chain over the missing cells, as in the MCMC form of stochastic-approximation EM (Kuhn &amp;
     * Lavielle 2004, "Coupling a stochastic approximation version of EM with an MCMC procedure",
     * section 3: one transition of a kernel that leaves the current conditional distribution
     * invariant, started at the previous draw). With {@code from} = K the previous draw is all but
     * forgotten (alpha-bar_K is near 0) and this is nearly {@link #drawGiven}; a short jump keeps what the
     * previous draw already agrees on with the observed cells. The kernel of replacement leaves the
     * conditional distribution invariant only approximately (see {@link Conditioning}).
     *
     * @param chain the chain to run
     * @param previous rows x D model-space rows, the observed cells and a previous draw of the
     *     missing ones (no NaN); not modified
     * @param known rows x D model-space rows, NaN where a cell is missing; not modified
     * @param rows rows
     * @param from the chain step to diffuse to and start from, 1..K
     * @param rounds resampling rounds per step, at least 1
     * @param method how the observed cells are held
     * @param threads threads to use, at least 1
     * @param seed the seed of the draw
     * @return rows x D, the observed cells as given and the missing cells drawn again
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static float[] redrawGiven(Chain chain, float[] previous, float[] known, int rows, int from, int rounds,
                                      Conditioning method, int threads, long seed) {
        if (from < 1 || from > chain.steps) {
            throw new IllegalArgumentException("from is " + from + "; expected a step of the chain, 1.." + chain.steps);
        }
        return Parallel.fillChunks(rows, chain.d, threads, seed, (first, m, rng, x) -> {
            float[] kn = BoundEvaluator.slice(known, first, m, chain.d);
            float[] start = BoundEvaluator.slice(previous, first, m, chain.d);
            int[] k = new int[m];
            Arrays.fill(k, from);
            chain.toChain(start, m);
            chain.diffuse(start, m, k, x, null, rng);
            ReverseRun.run(chain, x, m, from, kn, rounds, SamplerKind.ANCESTRAL, 0.0, method, rng);
            chain.fromChain(x, m);
        });
    }

    /**
     * An end of an imputed interval: the empirical p-quantile of k draws at position h = (k + 1) p
     * among the sorted draws, linear between neighbouring order statistics, the smallest draw below
     * h = 1 and the largest above h = k (Hyndman &amp; Fan 1996, "Sample quantiles in statistical
     * packages", type 6; commons-math3's Percentile R_6). Chosen because F(X_(i)) of the i-th of k
     * exchangeable draws has mean i / (k + 1), so a central interval between the positions
     * (k + 1)(1 - level)/2 and (k + 1)(1 + level)/2 covers a new draw with probability about
     * {@code level} once k &gt;= (1 + level)/(1 - level) (19 at level 0.9; see
     * {@link Imputation#expectedCoverage()}).
     *
     * @param values the draws, at least one (not modified)
     * @param p the probability, in (0, 1)
     * @return the interval's end
     * @throws IllegalArgumentException if {@code values} is null or empty or {@code p} is not in (0, 1)
     */
    public static double intervalEnd(double[] values, double p) {
        Require.notNull("values", values);
        if (values.length == 0) {
            throw new IllegalArgumentException("values is empty; expected at least one draw");
        }
        Require.inOpen("p", p, 0.0, 1.0);
        double[] s = values.clone();
        Arrays.sort(s);
        return endOfSorted(s, p);
    }

    /** {@link #intervalEnd} of draws already sorted ascending, at least one; p in (0, 1). */
    private static double endOfSorted(double[] s, double p) {
        int k = s.length;
        double h = (k + 1) * p;
        if (h <= 1.0) {
            return s[0];
        }
        if (h >= k) {
            return s[k - 1];
        }
        int below = (int) Math.floor(h);          // 1-based order statistic at or below h
        return s[below - 1] + (h - below) * (s[below] - s[below - 1]);
    }

    /** The empirical quantile with linear interpolation between order statistics (Hyndman &amp; Fan 1996, type 7). */
    public static double quantile(double[] values, double q) {
        double[] s = values.clone();
        Arrays.sort(s);
        double h = (s.length - 1) * q;
        int lo = (int) Math.floor(h);
        int hi = Math.min(s.length - 1, lo + 1);
        return s[lo] + (h - lo) * (s[hi] - s[lo]);
    }

    /** Tables of the records' layout holding given values; binary cells as they are (a mean may be fractional). */
    static Table withValues(Table layout, double[][] values) {
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < layout.columns(); j++) {
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(layout.names(), kinds, values);
    }
}
