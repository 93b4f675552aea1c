package org.backstep;

import org.backstep.option.Conditioning;

import org.backstep.io.ModelFileException;
import org.backstep.option.FitOptions;
import org.backstep.option.SamplerKind;
import org.backstep.option.SamplingPlan;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.BoundReport;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.report.StepPlan;
import org.backstep.training.EpochRecord;
import org.backstep.training.Provenance;

import org.backstep.net.ReverseNetwork;
import org.backstep.schedule.Require;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;

/**
 * A fitted diffusion model of a table: immutable, safe to share between threads. Made by
 * {@link Backstep.Builder#fit(Table)}.
 *
 * <p>What it does, each on a batch of records, on {@link FitOptions#threads()} threads, from a
 * seed (same seed, same numbers):
 * <ul>
 *   <li>{@link #bound(Table, long)}: the negative variational bound per record, exactly over all
 *       T steps, or by Monte Carlo ({@link #boundMonteCarlo(Table, int, long)}) (Ho et al. 2020,
 *       eq. 5);</li>
 *   <li>{@link #screen(Table, Table, double, long)}: anomaly flags past a held-out quantile;</li>
 *   <li>{@link #sample(int, SamplingPlan, long)}: synthetic records, ancestral or implicit, through
 *       all T or a strided subset of steps;</li>
 *   <li>{@link #impute(Table, int, double, long)}: draws of missing cells given observed ones, by
 *       one of the methods of {@link Conditioning};</li>
 *   <li>{@link #denoise(Table, double[], int, long)}: readings with known Gaussian noise cleaned by
 *       running the chain from the matching step.</li>
 * </ul>
 *
 * <p>Cautions: imputed, denoised and synthetic values are not measurements. Synthetic rows can
 * reproduce training rows: check their distance to the training rows, and local privacy law,
 * before sharing them. A likelihood score ranks records; it is not a calibrated probability of a
 * fault. For safety-, health- or compliance-critical decisions, defer to local regulations and
 * qualified review.
 */
public final class DiffusionModel {

    /**
     * Steps of the chain used by {@link #impute(Table, int, double, long)}: at most this many, a
     * strided sub-schedule when T is larger.
     */
    public static final int IMPUTATION_STEPS = 100;
    /**
     * Resampling rounds per step of imputation: 1, plain replacement. Measured: on Gaussian data
     * with exact reverse kernels (the Schur-complement check, 400 records, 100 draws) plain
     * replacement gave a conditional variance 8-10% above the exact one with 90% intervals covering
     * 90%, and 5 resampling rounds on a 50-step chain (Lugmayr et al. 2022) 1-2% above, covering
     * 89-90%; but on the demo's trained reefer model, resampling collapsed the draws of the two
     * strongly tied air temperatures (90% intervals covered 54% of hidden truths, against 82% with
     * plain replacement). Plain replacement is the robust default; its cost on the exact-kernel
     * model is imputed means that follow the observed cells with a slope 0.77 of the exact one,
     * 0.93 with 3 rounds (imputation-methods.txt, see {@link #IMPUTATION_CONDITIONING}). Checked
     * again on the demo's trained model (600 hidden cells, 20 draws, 100 steps): 1, 3 and 5 rounds
     * gave errors of 0.446, 0.362 and 0.353 column sd and 90% coverage of 80%, 57% and 50% (a
     * perfect model's 20-draw intervals cover about 81%, {@link Imputation#expectedCoverage()});
     * {@link #impute(Table, int, double, int, int, long)} chooses rounds.
     */
    public static final int IMPUTATION_ROUNDS = 1;
    /**
     * How imputation holds the chain to the observed cells: replacement. Measured on exact-kernel
     * models (no training, T = 1000, 400 records, 100 draws; the table and how to rerun it are in
     * diffusion-core/src/test/resources/org/backstep/imputation-methods.txt). At the same cost (the
     * same estimator evaluations) replacement was closer to the exact conditional than the kernel
     * product in every case measured. On 2-D Gaussian data (x2 given x1, against the Schur
     * complement), 100 steps, no resampling: variance ratio 1.08 against 1.19 (1.10 against 1.21 at
     * 1000 steps), slope of the imputed on the exact means 0.77 against 0.61, per-record mean error
     * 0.17 against 0.29 conditional sd, average mean error -0.002 against -0.017 sd, coverage of the
     * 90% intervals 0.90 for both; with 3 rounds replacement came to 1.02 and 0.045 sd, the kernel
     * product to 1.05 and 0.10 sd. On a continuous column given an observed binary one both were
     * too wide (variance ratio 1.33 against 1.43; slope 0.49 against 0.44), and a binary column
     * given a continuous one had per-record errors of 0.10 against 0.13 in probability. Wall time
     * showed no consistent difference. The kernel product stays available by
     * {@link #impute(Table, int, double, int, int, Conditioning, long)}.
     */
    public static final Conditioning IMPUTATION_CONDITIONING = Conditioning.REPLACEMENT;
    /** Steps of the chain used by {@link #denoise(Table, double[], int, long)} below the starting step, at most. */
    public static final int DENOISING_STEPS = 100;

    private final FitOptions options;
    private final TableTransform transform;
    private final ReverseNetwork network;     // null for a model over a supplied estimator
    private final Estimator estimator;
    private final Provenance provenance;
    private final Chain chain;

    DiffusionModel(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                   Provenance provenance) {
        this.options = options;
        this.transform = transform;
        this.network = network;
        this.estimator = estimator;
        this.provenance = provenance;
        this.chain = new Chain(options.continuousSchedule(), options.binarySchedule(),
                transform.modelledContinuous().length, transform.modelledBinary().length, options.variance(),
                estimator);
    }

    /** @return every option of the fit */
    public FitOptions options() {
        return options;
    }

    /** @return the column transforms fitted on the training rows */
    public TableTransform transform() {
        return transform;
    }

    /** @return how the model was made */
    public Provenance provenance() {
        return provenance;
    }

    /**
     * How the model was made, readably: library, Java and machine, the data's fingerprint, every
     * option, the column transforms, notes, and the training history.
     *
     * @return several lines of text
     */
    public String describe() {
        Provenance p = provenance;
        StringBuilder sb = new StringBuilder();
        sb.append(this).append('\n');
        sb.append("  library ").append(p.libraryVersion()).append(", Java ").append(p.javaVersion()).append(", ")
                .append(p.os()).append(" ").append(p.arch()).append('\n');
        sb.append("  fitted at ").append(p.fittedAt()).append(String.format(java.util.Locale.ROOT, " in %.1f s", p.trainingSeconds()))
                .append(" on ").append(p.trainingRows()).append(" of ").append(p.tableRows()).append(" rows (")
                .append(p.validationRows()).append(" held out); table SHA-256 ").append(p.tableSha256()).append('\n');
        sb.append("  options ").append(options).append('\n');
        sb.append("  columns ").append(transform).append('\n');
        for (String n : p.notes()) {
            sb.append("  note: ").append(n).append('\n');
        }
        sb.append("  history (epoch, loss, held-out bound, seconds):\n");
        for (EpochRecord e : p.history()) {
            sb.append(String.format(java.util.Locale.ROOT, "    %5d %10.4f %12s %8.1f%n", e.epoch(), e.loss(),
                    e.heldOutBound().isPresent() ? String.format(java.util.Locale.ROOT, "%.4f", e.heldOutBound().getAsDouble()) : "-",
                    e.seconds()));
        }
        return sb.toString();
    }

    /** @return the training history, one record per epoch */
    public List<EpochRecord> history() {
        return provenance.history();
    }

    /** @return T */
    public int steps() {
        return options.steps();
    }

    /** @return D, the number of diffused columns */
    public int dimensions() {
        return chain.d;
    }

    ReverseNetwork network() {
        return network;
    }

    Chain chain() {
        return chain;
    }

    // ------------------------------------------------------------------ bounds

    /**
     * The exact bound: all T terms per record, one draw of x_t per term (T network evaluations per
     * record).
     *
     * @param records complete records with the training table's columns
     * @param seed the seed of the x_t draws
     * @return the per-record bound, with the per-step breakdown
     * @throws IllegalArgumentException naming a column mismatch or the first missing cell
     */
    public BoundReport bound(Table records, long seed) {
        return bound(records, chain, seed);
    }

    /**
     * The exact bound on a strided chain of {@code steps} steps (a different, usually looser bound
     * of the same model; the planner compares them).
     *
     * @param records complete records
     * @param steps steps of the strided chain, 1..T
     * @param seed the seed
     * @return the per-record bound
     */
    public BoundReport bound(Table records, int steps, long seed) {
        Require.inRange("steps", steps, 1, steps());
        return bound(records, steps == steps() ? chain : chain.strided(steps), seed);
    }

    private BoundReport bound(Table records, Chain c, long seed) {
        float[] x = modelSpace(records, true);
        BoundEvaluator.Result r = BoundEvaluator.exact(c, x, records.rows(), seed, options.threads());
        return BoundReport.of(BoundReport.Method.EXACT, c.steps, c.steps, c.d, r.continuous, r.binary,
                transform.logJacobian(records), r.standardError, r.perStepMean);
    }

    /**
     * An unbiased Monte Carlo estimate of the bound: the prior term L_T and the decoder term L_0
     * exactly, and {@code draws} steps drawn uniformly from 2..T per record for the rest,
     * L_T + L_0 + ((T - 1)/K) sum_k L_{t_k - 1}, with its standard error (K + 1 network
     * evaluations per record).
     *
     * @param records complete records
     * @param draws K, at least 1
     * @param seed the seed
     * @return the per-record estimate with standard errors
     */
    public BoundReport boundMonteCarlo(Table records, int draws, long seed) {
        Require.atLeast("draws", draws, 1);
        float[] x = modelSpace(records, true);
        BoundEvaluator.Result r = BoundEvaluator.monteCarlo(chain, x, records.rows(), draws, seed, options.threads());
        return BoundReport.of(BoundReport.Method.MONTE_CARLO, chain.steps, draws, chain.d, r.continuous, r.binary,
                transform.logJacobian(records), r.standardError, r.perStepMean);
    }

    /**
     * Scores records against a threshold at a quantile of held-out records' bounds. Both bounds are
     * Monte Carlo estimates with {@code draws} steps per record.
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param heldOut complete records not trained on, to set the threshold
     * @param records complete records to screen
     * @param quantile in (0, 1), e.g. 0.99
     * @param seed the seed
     * @return the threshold, every score and the flagged rows
     */
    public AnomalyScreen screen(Table heldOut, Table records, double quantile, long seed) {
        Require.inOpen("quantile", quantile, 0.0, 1.0);
        int draws = Math.min(steps(), Defaults.VALIDATION_DRAWS * 4);
        double[] ref = boundMonteCarlo(heldOut, draws, seed).nats();
        double[] scores = boundMonteCarlo(records, draws, seed + 1).nats();
        double threshold = quantile(ref, quantile);
        int[] flagged = java.util.stream.IntStream.range(0, scores.length).filter(i -> scores[i] > threshold).toArray();
        return new AnomalyScreen(quantile, threshold, scores, flagged);
    }

    /** The empirical quantile with linear interpolation between order statistics (Hyndman &amp; Fan 1996, type 7). */
    static double quantile(double[] values, double q) {
        double[] s = values.clone();
        Arrays.sort(s);
        double h = (s.length - 1) * q;
        int lo = (int) Math.floor(h);
        int hi = Math.min(s.length - 1, lo + 1);
        return s[lo] + (h - lo) * (s[hi] - s[lo]);
    }

    // ------------------------------------------------------------------ sampling

    /**
     * Synthetic records by ancestral sampling through all T steps.
     *
     * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
     *
     * @param count how many, at least 1
     * @param seed the seed
     * @return a table with the training columns, in original units, binary columns 0/1
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Table sample(int count, long seed) {
        return sample(count, SamplingPlan.ancestral(), seed);
    }

    /**
     * Synthetic records by the given plan. Chunks of rows draw from generators seeded by the chunk's
     * index, so the result does not depend on the thread count.
     *
     * @param count how many, at least 1
     * @param plan sampler, steps and eta
     * @param seed the seed
     * @return a table with the training columns, in original units
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Table sample(int count, SamplingPlan plan, long seed) {
        Require.atLeast("count", count, 1);
        Require.notNull("plan", plan);
        Chain c = chainFor(plan.steps());
        float[] all = new float[count * c.d];
        Parallel.forEachChunk(Parallel.chunks(count), options.threads(), chunk -> {
            int from = chunk * Parallel.CHUNK_ROWS;
            int n = Math.min(Parallel.CHUNK_ROWS, count - from);
            SplittableRandom rng = Parallel.random(seed, chunk);
            float[] x = new float[n * c.d];
            c.drawPrior(x, n, rng);
            ReverseRun.run(c, x, n, c.steps, null, 1, plan.kind(), plan.eta(), rng);
            System.arraycopy(x, 0, all, from * c.d, n * c.d);
        });
        return transform.fromModelSpace(toRows(all, count, c.d));
    }

    private Chain chainFor(int steps) {
        Require.inRange("steps", steps, 0, steps());
        return steps == 0 || steps == steps() ? chain : chain.strided(steps);
    }

    // ------------------------------------------------------------------ imputation

    /**
     * Draws {@code draws} completions of the missing (NaN) cells of each record from the model's
     * conditional distribution given its observed cells, by the method
     * {@link #IMPUTATION_CONDITIONING} (replacement: after each reverse step the observed cells are
     * replaced by a fresh draw of q(x_{t-1} | x_0 = y) = N(sqrt(alpha-bar_{t-1}) y,
     * 1 - alpha-bar_{t-1}) of their values y; Lugmayr et al. 2022, algorithm 1), on a chain of at
     * most {@link #IMPUTATION_STEPS} steps with {@link #IMPUTATION_ROUNDS} round per step. Observed
     * cells come back unchanged. The other method, and the measurements that chose these defaults,
     * are described at {@link Conditioning}.
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param draws k, at least 1
     * @param level the central interval's coverage, in (0, 1)
     * @param seed the seed
     * @return the k completions, the per-cell mean and the interval
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Imputation impute(Table records, int draws, double level, long seed) {
        return impute(records, draws, level, Math.min(IMPUTATION_STEPS, steps()), IMPUTATION_ROUNDS, seed);
    }

    /**
     * {@link #impute(Table, int, double, long)} with the chain's step count and the resampling
     * rounds chosen, by the method {@link #IMPUTATION_CONDITIONING}: cost grows with steps x rounds
     * network evaluations per record and draw.
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param draws k, at least 1
     * @param level the central interval's coverage, in (0, 1)
     * @param chainSteps steps of the strided chain, 1..T
     * @param rounds resampling rounds per step, at least 1 (1 is plain replacement)
     * @param seed the seed
     * @return the k completions, the per-cell mean and the interval
     */
    public Imputation impute(Table records, int draws, double level, int chainSteps, int rounds, long seed) {
        return impute(records, draws, level, chainSteps, rounds, IMPUTATION_CONDITIONING, seed);
    }

    /**
     * {@link #impute(Table, int, double, int, int, long)} with the method that holds the chain to
     * the observed cells chosen: {@link Conditioning#REPLACEMENT} (after each reverse step the
     * observed cells are redrawn from q(x_{t-1} | x_0 = y); Lugmayr et al. 2022, algorithm 1) or
     * {@link Conditioning#KERNEL_PRODUCT} (each reverse kernel of an observed cell is multiplied by
     * q(x_{t-1} | x_0 = y) and renormalized; Sohl-Dickstein et al. 2015, section 2.5.2). Both run
     * the ancestral sampler; cost is steps x rounds network evaluations per record and draw for
     * either.
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param draws k, at least 1
     * @param level the central interval's coverage, in (0, 1)
     * @param chainSteps steps of the strided chain, 1..T
     * @param rounds resampling rounds per step, at least 1 (1 is no resampling)
     * @param conditioning the method, not null
     * @param seed the seed
     * @return the k completions, the per-cell mean and the interval
     * @throws IllegalArgumentException naming the first argument that is out of range or null
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Imputation impute(Table records, int draws, double level, int chainSteps, int rounds,
                             Conditioning conditioning, long seed) {
        Require.atLeast("draws", draws, 1);
        Require.inOpen("level", level, 0.0, 1.0);
        Require.inRange("chainSteps", chainSteps, 1, steps());
        Require.atLeast("rounds", rounds, 1);
        Require.notNull("conditioning", conditioning);
        checkColumns(records);
        int rows = records.rows();
        int[] todo = records.incompleteRowIndices();
        int n = todo.length;
        float[] known = n == 0 ? new float[0] : Trainer.toFloat(transform.toModelSpace(records.selectRows(todo)));
        Chain c = chainFor(chainSteps);
        List<Table> tables = new ArrayList<>();
        for (int k = 0; k < draws; k++) {
            float[] all = new float[n * c.d];
            long drawSeed = seed + 1_000_003L * k;
            Parallel.forEachChunk(Parallel.chunks(n), options.threads(), chunk -> {
                int from = chunk * Parallel.CHUNK_ROWS;
                int m = Math.min(Parallel.CHUNK_ROWS, n - from);
                SplittableRandom rng = Parallel.random(drawSeed, chunk);
                float[] kn = BoundEvaluator.slice(known, from, m, c.d);
                float[] x = new float[m * c.d];
                c.drawPrior(x, m, rng);
                ReverseRun.replaceKnown(c, x, kn, m, c.steps, rng);
                ReverseRun.run(c, x, m, c.steps, kn, rounds, SamplerKind.ANCESTRAL, 0.0, conditioning, rng);
                System.arraycopy(x, 0, all, from * c.d, m * c.d);
            });
            double[][] completed = records.toArray();
            if (n > 0) {
                Table drawn = transform.fromModelSpace(toRows(all, n, c.d));
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
        double[][] mean = new double[rows][records.columns()];
        double[][] lo = new double[rows][records.columns()];
        double[][] hi = new double[rows][records.columns()];
        double[] cell = new double[draws];
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < records.columns(); j++) {
                double obs = records.get(i, j);
                if (!Double.isNaN(obs)) {
                    mean[i][j] = obs;
                    lo[i][j] = obs;
                    hi[i][j] = obs;
                    continue;
                }
                for (int k = 0; k < draws; k++) {
                    cell[k] = tables.get(k).get(i, j);
                }
                mean[i][j] = Arrays.stream(cell).average().orElseThrow();
                lo[i][j] = quantile(cell, (1.0 - level) / 2.0);
                hi[i][j] = quantile(cell, 1.0 - (1.0 - level) / 2.0);
            }
        }
        return new Imputation(tables, withValues(records, mean), withValues(records, lo), withValues(records, hi), level);
    }

    /** Tables of the records' layout holding given values; binary cells as they are (a mean may be fractional). */
    private static Table withValues(Table layout, double[][] values) {
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < layout.columns(); j++) {
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(layout.names(), kinds, values);
    }

    // ------------------------------------------------------------------ denoising

    /**
     * Cleans readings observed with additive Gaussian noise of known standard deviation per column
     * (original units). In model space a reading is z_y = z + n with n ~ N(0, s_j^2), s_j the
     * column's noise over its scale; the chain starts at the first step t* whose noise level
     * (1 - alpha-bar)/alpha-bar reaches max_j s_j^2, with x_{t*} = sqrt(alpha-bar_{t*}) (z_y + m),
     * m ~ N(0, (1 - alpha-bar_{t*})/alpha-bar_{t*} - s_j^2) topping each column up to that level, so
     * that x_{t*} is exactly a draw of q(x_{t*} | x_0); then the reverse chain runs down to x_0 on a
     * strided subset of at most {@link #DENOISING_STEPS} steps. Binary and constant columns are
     * taken as observed exactly. Continuous columns must be standardized, not log-transformed.
     * Every column is brought to the level of the noisiest one (in units of its scale), so a column
     * whose noise is far below the others' loses precision: denoise such groups of columns in
     * separate calls, passing a tiny noise for the others.
     *
     * <p>Caution: denoised values are estimates, not measurements.
     *
     * @param readings complete noisy records with the training columns
     * @param noiseSd the noise standard deviation of each column in original units, above 0 for
     *     every diffused continuous column (other entries are ignored); not modified
     * @param draws k, at least 1
     * @param seed the seed
     * @return posterior mean and spread per cell
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Denoising denoise(Table readings, double[] noiseSd, int draws, long seed) {
        Require.notNull("noiseSd", noiseSd);
        Require.atLeast("draws", draws, 1);
        if (noiseSd.length != readings.columns()) {
            throw new IllegalArgumentException("noiseSd has " + noiseSd.length + " entries; expected one per column, "
                    + readings.columns());
        }
        float[] z = modelSpace(readings, true);
        int[] cont = transform.modelledContinuous();
        double[] s2 = new double[cont.length];
        double max = 0.0;
        for (int j = 0; j < cont.length; j++) {
            int col = cont[j];
            var tr = transform.transform(col);
            if (tr.kind() != org.backstep.table.ColumnTransform.Kind.STANDARDIZE) {
                throw new IllegalArgumentException("column '" + readings.name(col) + "' is " + tr.kind()
                        + "; denoising needs standardized columns (additive noise on a log scale is not Gaussian)");
            }
            double sd = noiseSd[col];
            if (!(sd > 0) || !Double.isFinite(sd)) {
                throw new IllegalArgumentException("noiseSd of column '" + readings.name(col) + "' is " + sd
                        + "; expected a finite number above 0");
            }
            s2[j] = (sd / tr.scale()) * (sd / tr.scale());
            max = Math.max(max, s2[j]);
        }
        int start = steps();
        for (int t = 1; t <= steps(); t++) {
            double level = options.continuousSchedule().oneMinusAlphaBar(t) / options.continuousSchedule().alphaBar(t);
            if (level >= max) {
                start = t;
                break;
            }
        }
        double startLevel = options.continuousSchedule().oneMinusAlphaBar(start) / options.continuousSchedule().alphaBar(start);
        if (startLevel < max) {
            throw new IllegalArgumentException("the noise is larger than the schedule's last step can absorb (noise over "
                    + "scale squared " + max + " > " + startLevel + "); these readings carry no usable signal");
        }
        int count = Math.min(DENOISING_STEPS, start);
        int[] keep = new int[count];
        for (int i = 0; i < count; i++) {
            keep[i] = count == 1 ? start : (int) Math.round(1.0 + (start - 1.0) * i / (count - 1.0));
        }
        Chain c = chain.subset(keep);
        double sqrtAbar = Math.sqrt(options.continuousSchedule().alphaBar(start));
        int rows = readings.rows();
        int d = c.d;
        float[] known = new float[rows * d];
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < d; j++) {
                known[r * d + j] = j < c.dc ? Float.NaN : z[r * d + j];
            }
        }
        double[][] sum = new double[rows][readings.columns()];
        double[][] sumSq = new double[rows][readings.columns()];
        final double startLevelF = startLevel;
        for (int k = 0; k < draws; k++) {
            float[] all = new float[rows * d];
            long drawSeed = seed + 1_000_003L * k;
            Parallel.forEachChunk(Parallel.chunks(rows), options.threads(), chunk -> {
                int from = chunk * Parallel.CHUNK_ROWS;
                int n = Math.min(Parallel.CHUNK_ROWS, rows - from);
                SplittableRandom rng = Parallel.random(drawSeed, chunk);
                float[] x = new float[n * d];
                float[] kn = BoundEvaluator.slice(known, from, n, d);
                for (int r = 0; r < n; r++) {
                    for (int j = 0; j < c.dc; j++) {
                        double extra = Math.sqrt(Math.max(0.0, startLevelF - s2[j])) * rng.nextGaussian();
                        x[r * d + j] = (float) (sqrtAbar * (z[(from + r) * d + j] + extra));
                    }
                }
                ReverseRun.replaceKnown(c, x, kn, n, c.steps, rng);
                ReverseRun.run(c, x, n, c.steps, kn, 1, SamplerKind.ANCESTRAL, 0.0, rng);
                System.arraycopy(x, 0, all, from * d, n * d);
            });
            Table drawn = transform.fromModelSpace(toRows(all, rows, d));
            for (int i = 0; i < rows; i++) {
                for (int j = 0; j < readings.columns(); j++) {
                    double v = drawn.get(i, j);
                    sum[i][j] += v;
                    sumSq[i][j] += v * v;
                }
            }
        }
        double[][] mean = new double[rows][readings.columns()];
        double[][] sd = new double[rows][readings.columns()];
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < readings.columns(); j++) {
                mean[i][j] = sum[i][j] / draws;
                double var = draws > 1 ? (sumSq[i][j] - draws * mean[i][j] * mean[i][j]) / (draws - 1) : 0.0;
                sd[i][j] = Math.sqrt(Math.max(0.0, var));
            }
        }
        return new Denoising(withValues(readings, mean), withValues(readings, sd), draws, start);
    }

    // ------------------------------------------------------------------ planning

    /** The step counts the planner tries by default, besides T itself. */
    public static final int[] PLANNER_STEP_COUNTS = {10, 25, 50, 100, 250};

    /**
     * Evaluates step counts for sampling: for each K, the exact held-out bound of the K-step strided
     * chain (nats per dimension), the quality of K-step samples against the held-out rows (energy
     * distance with a permutation p-value; the largest per-column Kolmogorov-Smirnov statistic) and
     * the measured milliseconds per 1,000 samples; recommends the smallest K whose bound is within
     * {@code tolerance} of the best.
     *
     * @param heldOut complete records not trained on (1,000 rows spread evenly over them are used)
     * @param tolerance in nats per dimension, at least 0
     * @param seed the seed
     * @param stepCounts the candidates, each in 1..T; none means {@link #PLANNER_STEP_COUNTS} and T
     * @return the table of findings and the recommendation
     */
    public StepPlan planSteps(Table heldOut, double tolerance, long seed, int... stepCounts) {
        Require.nonNegative("tolerance", tolerance);
        checkColumns(heldOut);
        int[] counts = stepCounts.length > 0 ? stepCounts
                : java.util.stream.IntStream.concat(Arrays.stream(PLANNER_STEP_COUNTS).filter(k -> k < steps()),
                        java.util.stream.IntStream.of(steps())).toArray();
        return StepPlanner.plan(this, heldOut, tolerance, seed, counts);
    }

    // ------------------------------------------------------------------ files

    /**
     * Saves the model to one file (see the format in the README): written to a temporary file in
     * the same folder, synced, then moved over {@code file}; a failure leaves an existing file as
     * it was.
     *
     * @param file where to save
     * @throws IOException if the file cannot be written
     */
    public void save(java.nio.file.Path file) throws java.io.IOException {
        Require.notNull("file", file);
        ModelFile.save(this, file);
    }

    /**
     * Loads a model saved by {@link #save(java.nio.file.Path)}; it behaves identically (the same
     * bounds and samples for the same seed).
     *
     * @param file the model file
     * @return the model
     * @throws ModelFileException if the file is foreign, truncated, of an unknown version, missing
     *     an entry, fails a checksum, or disagrees with its manifest
     * @throws java.io.IOException if the file cannot be read
     */
    public static DiffusionModel load(java.nio.file.Path file) throws java.io.IOException {
        Require.notNull("file", file);
        return ModelFile.load(file);
    }

    /**
     * A model over a supplied estimator instead of a trained network, for checking the bound and
     * sampling code against closed forms. Not saveable.
     */
    static DiffusionModel withEstimator(FitOptions options, TableTransform transform, Estimator estimator) {
        return new DiffusionModel(options, transform, null, estimator,
                new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"), "", "", "", 0.0, 0, 0, 0,
                        "", List.of(), List.of("supplied estimator")));
    }

    // ------------------------------------------------------------------ helpers

    private void checkColumns(Table records) {
        Require.notNull("records", records);
        if (!records.names().equals(transform.names()) || !records.kinds().equals(transform.kinds())) {
            throw new IllegalArgumentException("records have columns " + records.names() + " " + records.kinds()
                    + "; expected the training columns " + transform.names() + " " + transform.kinds());
        }
    }

    private float[] modelSpace(Table records, boolean complete) {
        checkColumns(records);
        if (complete && records.hasMissing()) {
            for (int i = 0; i < records.rows(); i++) {
                for (int j = 0; j < records.columns(); j++) {
                    if (Double.isNaN(records.get(i, j))) {
                        throw new IllegalArgumentException("row " + i + ", column '" + records.name(j)
                                + "' is missing; this needs complete records (impute them first)");
                    }
                }
            }
        }
        if (records.rows() == 0) {
            throw new IllegalArgumentException("records has 0 rows; expected at least 1");
        }
        return Trainer.toFloat(transform.toModelSpace(records));
    }

    static double[][] toRows(float[] x, int rows, int d) {
        double[][] out = new double[rows][d];
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < d; j++) {
                out[r][j] = x[r * d + j];
            }
        }
        return out;
    }

    @Override
    public String toString() {
        return "DiffusionModel[" + transform.names().size() + " columns (" + chain.dc + " continuous, " + chain.db
                + " binary diffused), T=" + steps() + ", " + options.continuousSchedule().kind().name().toLowerCase()
                + " + " + options.binarySchedule().kind().name().toLowerCase() + ", variance " + options.variance()
                + ", trained on " + provenance.trainingRows() + " rows in "
                + String.format(java.util.Locale.ROOT, "%.1f", provenance.trainingSeconds()) + " s]";
    }
}
