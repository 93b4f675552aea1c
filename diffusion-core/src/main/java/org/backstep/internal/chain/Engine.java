package org.backstep.internal.chain;

import org.backstep.option.BoundOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.report.BoundReport;
import org.backstep.report.CheckedSample;
import org.backstep.report.SampleCheck;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.Arrays;

/**
 * The jobs of a fitted model on its reverse chain: bounds, sampling, and (through {@link Imputer}
 * and {@link Denoiser}) imputation and denoising. Callers hand it validated arguments: the front
 * door ({@code org.backstep.DiffusionModel}) checks columns, ranges and missing cells first; the
 * planners call it directly.
 *
 * <p>Immutable and safe to share between threads.
 */
public final class Engine {

    private static final org.slf4j.Logger LOG = org.slf4j.LoggerFactory.getLogger(Engine.class);

    private final ModelParts parts;
    private final Chain chain;
    private final int threads;
    /** The profile of each chain's terms by its step count, measured when first asked for (a memo). */
    private final java.util.concurrent.ConcurrentHashMap<Integer, TermProfile.Lazy> profiles =
            new java.util.concurrent.ConcurrentHashMap<>();

    /** @param parts the model's parts */
    public Engine(ModelParts parts) {
        this.parts = parts;
        this.chain = parts.chain();
        this.threads = parts.options().threads();
    }

    /** @return the parts this engine runs */
    public ModelParts parts() {
        return parts;
    }

    /** @return the full chain */
    public Chain chain() {
        return chain;
    }

    /** @return the column transforms */
    public TableTransform transform() {
        return parts.transform();
    }

    /** @return T */
    public int steps() {
        return chain.steps;
    }

    /** @return worker threads of every job */
    int threads() {
        return threads;
    }

    /**
     * @param steps 0 or T for the full chain, else a strided chain of that many steps
     * @return the chain of that many steps
     */
    public Chain chainOf(int steps) {
        return steps == 0 || steps == chain.steps ? chain : chain.strided(steps);
    }

    /**
     * The profile of a chain's terms ({@link TermProfile}): measured on records the model draws
     * itself, the first time it is asked for, and kept for this engine's life.
     *
     * @param c a chain of this model ({@link #chainOf})
     * @return its profile
     */
    public TermProfile profile(Chain c) {
        return profiles.computeIfAbsent(c.steps, s -> new TermProfile.Lazy(c)).get(threads);
    }

    /**
     * @param how exact bound options
     * @param c the chain they run on ({@link #chainOf}(how.steps()))
     * @return the draws of each term: allocated by the chain's profile when {@code how.allocated()}
     *     (to the variance recordSd^2 when it is set, else at the noise of termDraws draws), else
     *     {@link TermDraws#of}
     */
    public TermDraws drawPlan(BoundOptions how, Chain c) {
        if (!how.allocated()) {
            return TermDraws.of(how, c.steps);
        }
        return how.recordSd() > 0.0
                ? profile(c).allocateTo(how.recordSd() * how.recordSd(), how.termDraws())
                : profile(c).allocate(how.termDraws());
    }

    /**
     * Records in the chain's coordinates as one row-major float array (rows x D), the layout every
     * chain job takes: the standardized model space ({@link #standardized}), whitened when the chain
     * is ({@link Chain#toChain}).
     *
     * @param records records with the training columns; missing cells stay NaN, but a whitened
     *     model refuses a missing cell of a whitened column (such a row has no whitened value)
     * @return rows x D
     */
    public float[] modelSpace(Table records) {
        float[] x = standardized(records);
        if (chain.whitened()) {
            int d = chain.d;
            int[] cols = chain.coordinates.columns;
            int[] cont = parts.transform().modelledContinuous();
            for (int r = 0; r < records.rows(); r++) {
                for (int j : cols) {
                    if (Float.isNaN(x[r * d + j])) {
                        throw new IllegalArgumentException("row " + r + ", column '" + records.name(cont[j])
                                + "' is missing; the model was fitted with coordinates WHITENED, where a cell mixes"
                                + " every continuous column, so this job needs complete rows");
                    }
                }
            }
            chain.toChain(x, records.rows());
        }
        return x;
    }

    /** @return log |det W| of a whitened model (added to log densities of the chain's coordinates), else 0 */
    public double logDeterminant() {
        return chain.logDeterminant();
    }

    /**
     * Records in the standardized model space as one row-major float array (rows x D), never
     * whitened: the space of every reported figure, and of the observed cells that imputation and
     * denoising hold.
     *
     * @param records records with the training columns (missing cells stay NaN)
     * @return rows x D
     */
    public float[] standardized(Table records) {
        float[] x = toFloat(parts.transform().toModelSpace(records));
        int d = chain.d;
        for (int i = 0; i < x.length; i++) {
            if (Float.isInfinite(x[i])) {
                int row = i / d;
                int col = modelColumn(i % d);
                throw new IllegalArgumentException("row " + row + ", column '" + records.name(col) + "' is "
                        + records.get(row, col) + ", which its transform " + parts.transform().transform(col)
                        + " maps to " + parts.transform().toModelSpace(records.selectRows(new int[] {row}))[0][i % d]
                        + " in model space, beyond the float32 range (about 3.4e38) the network computes in");
            }
        }
        return x;
    }

    /** @return the table column of model-space column j (continuous columns first, then binary) */
    private int modelColumn(int j) {
        int[] cont = parts.transform().modelledContinuous();
        return j < cont.length ? cont[j] : parts.transform().modelledBinary()[j - cont.length];
    }

    /**
     * The bound of each record by the given method (see {@link BoundOptions}), with the
     * log-Jacobian of the column transforms so that the report also gives nats in original units.
     *
     * @param records complete records with the training columns
     * @param how exact (full or strided chain) or sampled
     * @param seed the seed of the x_t draws
     * @return the per-record report
     */
    public BoundReport bound(Table records, BoundOptions how, long seed) {
        return bound(records, how, seed, null);
    }

    /**
     * {@link #bound(Table, BoundOptions, long)} with a seed per record: record i draws its x_t (and
     * its Monte Carlo steps) as a one-record table seeded with {@code rowSeeds[i]} does, so its
     * figures do not depend on the other records.
     *
     * @param records complete records with the training columns
     * @param how exact (full or strided chain) or sampled
     * @param rowSeeds one seed per record (the length checked by the caller)
     * @return the per-record report
     */
    public BoundReport bound(Table records, BoundOptions how, long[] rowSeeds) {
        return bound(records, how, 0L, rowSeeds);
    }

    private BoundReport bound(Table records, BoundOptions how, long seed, long[] rowSeeds) {
        float[] x = modelSpace(records);
        double[] logJacobian = parts.transform().logJacobian(records);
        int rows = records.rows();
        if (how.sampled()) {
            BoundEvaluator.Result r = rowSeeds == null
                    ? BoundEvaluator.monteCarlo(chain, x, rows, how.draws(), seed, threads)
                    : BoundEvaluator.monteCarlo(chain, x, rows, how.draws(), rowSeeds, threads);
            return BoundReport.sampled(chain.steps, how.draws(), chain.d,
                    new BoundReport.RecordNats(standardizedNats(r.continuous), r.binary, logJacobian), r.standardError);
        }
        Chain c = chainOf(how.steps());
        BoundEvaluator.Result r = BoundEvaluator.exact(c, x, rows, seed, rowSeeds, drawPlan(how, c), threads);
        if (r.perStepMean.length > 1) {
            r.perStepMean[1] -= c.logDeterminant();   // the decoder term L_0 carries the change of variables
        }
        return BoundReport.exact(c.steps, c.d, new BoundReport.RecordNats(standardizedNats(r.continuous), r.binary,
                logJacobian), r.perStepMean);
    }

    /**
     * Per-record nats of the chain's coordinates to nats of the standardized model space: for a
     * whitened chain -log p_y(y) = -log p_z(z) - log |det W| (the change of variables; Dinh et al.
     * 2017, section 3.1); unchanged otherwise.
     *
     * @param nats per record, nats in the chain's coordinates (modified in place and returned)
     * @return the same array
     */
    public double[] standardizedNats(double[] nats) {
        double logDet = chain.logDeterminant();
        if (logDet != 0.0) {
            for (int i = 0; i < nats.length; i++) {
                nats[i] -= logDet;
            }
        }
        return nats;
    }

    /**
     * Synthetic records drawn by the plan, chunk by chunk ({@link Parallel#fillChunks}), checked
     * against the training range in model space ({@link ModelRange#check}); if any row lies beyond
     * the bound, a warning says how many.
     *
     * @param count how many, at least 1
     * @param plan the sampler, steps and eta
     * @param seed the seed
     * @return the records in original units and the check
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public CheckedSample sampleChecked(int count, SamplingPlan plan, long seed) {
        return sampleChecked(count, plan, seed, null);
    }

    /**
     * {@link #sampleChecked(int, SamplingPlan, long)} with a seed per record: record i draws as the
     * only record of a one-record sample seeded with {@code rowSeeds[i]} does.
     *
     * @param plan the sampler, steps and eta
     * @param rowSeeds one seed per record, at least one (not modified)
     * @return the records in original units and the check
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public CheckedSample sampleChecked(SamplingPlan plan, long[] rowSeeds) {
        return sampleChecked(rowSeeds.length, plan, 0L, rowSeeds);
    }

    private CheckedSample sampleChecked(int count, SamplingPlan plan, long seed, long[] rowSeeds) {
        Chain c = chainOf(plan.steps());
        float[] all = Parallel.fillChunks(count, c.d, threads, seed, rowSeeds, (from, n, rng, x) -> {
            c.drawPrior(x, n, rng);
            ReverseRun.run(c, x, n, c.steps, null, 1, plan.kind(), plan.eta(), rng);
        });
        SampleCheck check = parts.range().check(all, count);
        if (check.diverged()) {
            LOG.warn("sampling with {} steps: {}", c.steps, check);
        }
        c.fromChain(all, count);
        return new CheckedSample(fromModelSpace(toRows(all, count, c.d)), check);
    }

    /** Rows per chunk of {@link #fromModelSpace}: enough cells to outweigh handing a chunk to a thread. */
    private static final int INVERSE_CHUNK_ROWS = 64;

    /**
     * {@code transform().fromModelSpace(model)} in chunks of {@link #INVERSE_CHUNK_ROWS} rows on the
     * engine's threads: the same table, because each cell's inverse map depends on that cell alone.
     * The inverse of a normal-scores map is a root search over the map's knots (thousands of
     * operations a cell), which on one thread was most of the time of imputing a table with such
     * maps (see {@code Imputer}); a NaN cell costs nothing and comes back NaN.
     *
     * @param model rows of model-space values (not modified)
     * @return the rows in original units
     */
    Table fromModelSpace(double[][] model) {
        int rows = model.length;
        int count = (rows + INVERSE_CHUNK_ROWS - 1) / INVERSE_CHUNK_ROWS;
        TableTransform transform = parts.transform();
        if (count <= 1 || threads <= 1) {
            return transform.fromModelSpace(model);
        }
        double[][] out = new double[rows][];
        Table[] first = new Table[1];
        Parallel.forEachChunk(count, threads, c -> {
            int from = c * INVERSE_CHUNK_ROWS;
            int to = Math.min(rows, from + INVERSE_CHUNK_ROWS);
            Table part;
            try {
                part = transform.fromModelSpace(Arrays.copyOfRange(model, from, to));
            } catch (IllegalArgumentException e) {
                // the chunk's own row numbers start at 0: say where the chunk sits
                throw new IllegalArgumentException("model rows " + from + " to " + (to - 1) + ", counted from 0 in the chunk: "
                        + e.getMessage(), e);
            }
            System.arraycopy(part.toArray(), 0, out, from, part.rows());
            if (c == 0) {
                first[0] = part;
            }
        });
        return first[0].withRows(out);
    }

    /**
     * @param count how many, at least 1
     * @param plan the sampler, steps and eta
     * @param seed the seed
     * @return the records of {@link #sampleChecked} in original units
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Table sample(int count, SamplingPlan plan, long seed) {
        return sampleChecked(count, plan, seed).table();
    }

    /**
     * @param rows a table's rows as doubles, every row of one width
     * @return the same values as one row-major float array
     */
    public static float[] toFloat(double[][] rows) {
        int d = rows.length == 0 ? 0 : rows[0].length;
        float[] f = new float[Math.multiplyExact(rows.length, d)];
        for (int r = 0; r < rows.length; r++) {
            for (int j = 0; j < d; j++) {
                f[r * d + j] = (float) rows[r][j];
            }
        }
        return f;
    }

    /**
     * @param x rows x d, row-major
     * @return the same values as rows of doubles
     */
    public static double[][] toRows(float[] x, int rows, int d) {
        double[][] out = new double[rows][d];
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < d; j++) {
                out[r][j] = x[r * d + j];
            }
        }
        return out;
    }
}
