package org.backstep;

import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Denoiser;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.Estimator;
import org.backstep.internal.chain.Imputer;
import org.backstep.internal.flow.ProbabilityFlow;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.ScoringRange;
import org.backstep.internal.plan.StepPlanner;
import org.backstep.internal.screen.DriftTests;
import org.backstep.internal.screen.Screener;
import org.backstep.internal.screen.Scoring;
import org.backstep.internal.screen.SurprisalEstimator;
import org.backstep.internal.store.ModelFile;
import org.backstep.io.ModelFileException;
import org.backstep.option.BoundOptions;
import org.backstep.option.DenoisingOptions;
import org.backstep.option.DriftOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.FlowOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.Limits;
import org.backstep.option.SamplingPlan;
import org.backstep.option.MissingCells;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.SurprisalOptions;
import org.backstep.option.ThresholdRule;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.BoundReport;
import org.backstep.report.CheckedSample;
import org.backstep.report.Denoising;
import org.backstep.report.DriftReport;
import org.backstep.report.FlowLikelihood;
import org.backstep.report.Imputation;
import org.backstep.report.SampleCheck;
import org.backstep.report.StepPlan;
import org.backstep.report.Surprisal;
import org.backstep.schedule.Require;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.EpochRecord;
import org.backstep.training.Provenance;

import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.stream.IntStream;

/**
 * A fitted diffusion model of a table: immutable, safe to share between threads. Made by
 * {@link Backstep.Builder#fit(Table)}.
 *
 * <p>What it does, each on a batch of records, on {@link FitOptions#threads()} threads, from a
 * seed (same seed, same numbers):
 * <ul>
 *   <li>{@link #bound(Table, BoundOptions, long)}: the negative variational bound per record,
 *       exactly over all T steps or a strided chain, or by Monte Carlo (Ho et al. 2020, eq. 5);</li>
 *   <li>{@link #screen(Table, Table, ScreeningOptions, long)}: anomaly flags past a threshold set on
 *       held-out records, with the evidence, and the columns to blame
 *       ({@link #surprisal(Table, SurprisalOptions, long)});</li>
 *   <li>{@link #drift(Table, Table, DriftOptions, long)}: whether a new batch differs from a
 *       reference batch, in its scores or in a column;</li>
 *   <li>{@link #sample(int, SamplingPlan, long)}: synthetic records, ancestral or implicit, through
 *       all T or a strided subset of steps;</li>
 *   <li>{@link #impute(Table, ImputationOptions, long)}: draws of missing cells given observed
 *       ones, by one of the methods of {@link org.backstep.option.Conditioning};</li>
 *   <li>{@link #denoise(Table, DenoisingOptions, long)}: readings with known Gaussian noise cleaned
 *       by running the chain from the matching step.</li>
 * </ul>
 * Each job takes one options value ({@link BoundOptions}, {@link ScreeningOptions},
 * {@link SurprisalOptions}, {@link DriftOptions}, {@link ImputationOptions}, {@link DenoisingOptions},
 * {@link SamplingPlan}); {@link Defaults} makes
 * each with its defaults, and the short forms use them. The work itself runs in the engine
 * ({@code org.backstep.internal.chain}); this class checks every argument first.
 *
 * <p>Cautions: imputed, denoised and synthetic values are not measurements. Synthetic rows can
 * reproduce training rows: check their distance to the training rows, and local privacy law,
 * before sharing them. A likelihood score ranks records; it is not a calibrated probability of a
 * fault. For safety-, health- or compliance-critical decisions, defer to local regulations and
 * qualified review.
 *
 * <p>One file of more than 400 lines because it is the fitted model's whole contract: each job's
 * Javadoc states its formula, source and cautions; the work itself is in the engine.
 */
public final class DiffusionModel {

    private final Engine engine;

    private DiffusionModel(ModelParts parts) {
        this.engine = new Engine(parts);
    }

    /**
     * The model made of parts the engine returned (the trainer, the model file), or of a supplied
     * closed-form estimator in the tests.
     */
    static DiffusionModel of(ModelParts parts) {
        return new DiffusionModel(parts);
    }

    /**
     * A model over a supplied estimator instead of a trained network, for checking the bound and
     * sampling code against closed forms (tests). Not saveable.
     */
    static DiffusionModel withEstimator(FitOptions options, TableTransform transform, Estimator estimator) {
        return new DiffusionModel(new ModelParts(options, transform, null, estimator,
                new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"), "", "", "", 0.0,
                        0, 0, 0, 0, 0, 0, "", List.of(), List.of("supplied estimator"))));
    }

    /** @return the parts (tests look at the network) */
    ModelParts parts() {
        return engine.parts();
    }

    /** @return the full chain (tests drive it directly) */
    Chain chain() {
        return engine.chain();
    }

    /** @return the engine (tests look at its memo of term profiles) */
    Engine engine() {
        return engine;
    }

    /** @return every option of the fit */
    public FitOptions options() {
        return engine.parts().options();
    }

    /** @return the column transforms fitted on the training rows */
    public TableTransform transform() {
        return engine.transform();
    }

    /** @return how the model was made */
    public Provenance provenance() {
        return engine.parts().provenance();
    }

    /**
     * How the model was made, readably: library, Java and machine, the data's fingerprint, every
     * option, the column transforms, notes, and the training history.
     *
     * @return several lines of text
     */
    public String describeText() {
        Provenance p = provenance();
        StringBuilder sb = new StringBuilder();
        sb.append(this).append('\n');
        sb.append("  library ").append(p.libraryVersion()).append(", Java ").append(p.javaVersion()).append(", ")
                .append(p.os()).append(" ").append(p.arch()).append('\n');
        sb.append("  fitted at ").append(p.fittedAt()).append(String.format(Locale.ROOT, " in %.1f s", p.trainingSeconds()))
                .append(" on ").append(p.trainingRows()).append(" of ").append(p.tableRows()).append(" rows (")
                .append(p.checkpointRows()).append(" checkpoint rows); table SHA-256 ").append(p.tableSha256()).append('\n');
        sb.append("  options ").append(options()).append('\n');
        sb.append("  columns ").append(transform()).append('\n');
        for (String n : p.notes()) {
            sb.append("  note: ").append(n).append('\n');
        }
        sb.append("  history (epoch, loss, checkpoint bound, seconds):\n");
        for (EpochRecord e : p.history()) {
            sb.append(String.format(Locale.ROOT, "    %5d %10.4f %12s %8.1f%n", e.epoch(), e.loss(),
                    e.checkpointBound().isPresent() ? String.format(Locale.ROOT, "%.4f", e.checkpointBound().getAsDouble()) : "-",
                    e.seconds()));
        }
        return sb.toString();
    }

    /** @return the training history, one record per epoch */
    public List<EpochRecord> history() {
        return provenance().history();
    }

    /** @return T */
    public int steps() {
        return options().steps();
    }

    /** @return D, the number of diffused columns */
    public int dimensions() {
        return engine.chain().width();
    }

    // ------------------------------------------------------------------ bounds

    /**
     * The exact bound ({@link Defaults#bound()}): all T terms per record, one draw of x_t per term
     * (T network evaluations per record).
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param records complete records with the training columns
     * @param seed the seed of the x_t draws
     * @return the per-record bound, with the per-step breakdown; never NaN
     * @throws IllegalArgumentException naming a column mismatch, the first missing cell, or the
     *     first cell the model cannot score (beyond the float32 model space's range or outside its
     *     column's support; see {@link #bound(Table, BoundOptions, long)}; {@link #screen screen}
     *     scores such records +infinity instead)
     */
    public BoundReport bound(Table records, long seed) {
        return bound(records, Defaults.bound(), seed);
    }

    /**
     * The bound of each record by the given method: exact on all T steps, exact on a strided
     * chain (a different, usually looser bound of the same model; the planner compares them), or
     * the Monte Carlo estimate with its standard errors; see {@link BoundOptions}.
     *
     * <p>Every record must be scorable: a finite cell beyond the range the float32 model space can
     * diffuse (|z| above sqrt(beta_1) 2^23 training standard deviations; 1e39 or 1e300 in an
     * ordinary column, and 1e15 in a column whose values are of order 1) or outside its column's
     * support (at or below 0 in a log column, off the one value of a constant column) is refused,
     * naming its row and column, never scored NaN. The bound is a figure of fit and a mean over
     * records, which one infinite record would swamp; to rank such records, {@link #screen screen}
     * them: a screen scores them +infinity and flags them with a note naming the cell.
     *
     * @param records complete records with the training columns
     * @param how the method
     * @param seed the seed
     * @return the per-record bound, every figure finite
     * @throws IllegalArgumentException naming a column mismatch, the first missing cell, the first
     *     cell beyond the model space's range or outside its column's support, or a strided step
     *     count above T
     */
    public BoundReport bound(Table records, BoundOptions how, long seed) {
        Require.notNull("how", how);
        Require.inRange("steps", how.steps(), 0, steps());
        checkComplete(records, "records");
        List<org.backstep.report.CellNote> unscorable = ScoringRange.unscorable(records, transform(),
                ScoringRange.limit(engine.chain()));
        if (!unscorable.isEmpty()) {
            throw new IllegalArgumentException("records: " + unscorable.get(0).text().replace("; the record scores +infinity", "")
                    + "; the bound cannot be computed for it (" + unscorable.size() + " such cell"
                    + (unscorable.size() == 1 ? "" : "s") + " in all; screen(...) scores such records +infinity and flags them)");
        }
        return engine.bound(records, how, seed);
    }

    /**
     * The bound of each record by the given method, each record with its own seed: record i draws
     * its x_t (and, for a sampled bound, its steps) from a generator seeded by {@code rowSeeds[i]}
     * alone, the draws {@code bound(recordI, how, rowSeeds[i])} makes on a one-record table. So a
     * record's draws depend only on its seed, not on the other records, their order or the batch
     * size, while the network still sees the records in batches (one-record calls cost about 17
     * times as much per record; {@code diffusion-bench/results/spark-scoring.txt}). For a
     * distributed job whose rows carry a stable key: seed each row from the key, and any
     * partitioning gives the same draws. The figures agree with the one-record call's to the
     * float32 network's rounding, not bit for bit: OpenBLAS rounds a row's products differently
     * with its place in the matrix (measured: up to 2e-6 nats; {@code RowSeedBoundTest}).
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param records complete records with the training columns
     * @param how the method
     * @param rowSeeds one seed per record (not modified)
     * @return the per-record bound; its per-step means (exact method) average over the records
     * @throws IllegalArgumentException naming a column mismatch, the first missing cell, a strided
     *     step count above T, or a seed count other than the record count
     */
    public BoundReport bound(Table records, BoundOptions how, long[] rowSeeds) {
        Require.notNull("how", how);
        Require.notNull("rowSeeds", rowSeeds);
        Require.inRange("steps", how.steps(), 0, steps());
        checkComplete(records, "records");
        checkRowSeeds(rowSeeds, records.rows());
        return engine.bound(records, how, rowSeeds.clone());
    }

    /**
     * The exact likelihood of each record under the probability-flow ODE of the model's continuous
     * columns ({@link Defaults#flow()}): -log p(x) = -log N(x(T); 0, I) - integral of the divergence
     * of the ODE's drift along the path from the record to the prior (Song et al. 2021, "Score-Based
     * Generative Modeling through Stochastic Differential Equations", section 4.3 and appendix D.2,
     * eq. 39), with the exact trace of the estimator's Jacobian (forward-mode tangents, one per
     * continuous column) and commons-math3's Dormand-Prince 5(4) integrator. See
     * {@link FlowLikelihood} for what the figure is: an exact likelihood (up to the integrator's
     * tolerance) of the flow that shares this model's estimator, not a bound on the ancestral
     * chain's likelihood that {@link #bound(Table, long)} bounds.
     *
     * <p>No seed: it draws nothing. The same record and model give the same figure, bit for bit,
     * whatever the other records and the thread count. Cost: each record is integrated on its own,
     * a few hundred to a few thousand evaluations of the estimator and its Jacobian trace (about
     * Dc forward passes each), so far more than one exact bound; the ratio for each open-data table
     * is in diffusion-bench/results/flow-likelihood.txt.
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param records complete records with the training columns
     * @return the per-record negative log-likelihood
     * @throws IllegalArgumentException naming a column mismatch, the first missing cell, or the
     *     model's binary columns (the flow covers continuous columns only; use
     *     {@link #bound(Table, long)} for a table with binary columns)
     * @throws IllegalStateException naming the row, if its integration does not converge
     */
    public FlowLikelihood flowLikelihood(Table records) {
        return flowLikelihood(records, Defaults.flow());
    }

    /**
     * {@link #flowLikelihood(Table)} with the integrator's tolerances chosen.
     *
     * @param records complete records with the training columns
     * @param how the tolerances
     * @return the per-record negative log-likelihood
     * @throws IllegalArgumentException naming a column mismatch, the first missing cell, or the
     *     model's binary columns
     * @throws IllegalStateException naming the row, if its integration does not converge
     */
    public FlowLikelihood flowLikelihood(Table records, FlowOptions how) {
        Require.notNull("how", how);
        checkComplete(records, "records");
        ProbabilityFlow.requireContinuousOnly(transform(), "records: ");
        ProbabilityFlow flow = new ProbabilityFlow(engine.parts(), how.relativeTolerance(), how.absoluteTolerance());
        float[] x = engine.modelSpace(records);
        ProbabilityFlow.Result r = flow.evaluate(x, records.rows(), options().threads());
        return FlowLikelihood.of(engine.chain().continuousColumns(), how.relativeTolerance(), how.absoluteTolerance(),
                engine.standardizedNats(r.nats), r.prior, transform().logJacobian(records), r.evaluations);
    }

    /**
     * Screens records by {@link Defaults#screening()}: each record's score is its steady bound
     * ({@link Defaults#steadyBound()}: an upper bound on the record's negative log-likelihood in
     * expectation over the seed, its draws allocated by the model's own profile to a per-record sd
     * of about 0.04 nats; every record shares the same draws, so its score is a fixed function of
     * the record and the seed, and hardly moves with the seed); a record is flagged when
     * its score is above the 0.99 quantile of the held-out records' scores; a record with a cell
     * beyond the model space's range or outside its column's support scores +infinity, is flagged
     * and noted; a missing cell is refused; the flagged records get the per-column surprisal
     * -log p(x_j | x_-j) of {@link Defaults#surprisal()}. See {@link AnomalyScreen} for the score,
     * the false-positive interval and the ROC curve, {@link Surprisal} for the per-column figures.
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param heldOut records not trained on, to set the threshold; each must be scorable
     * @param records records to screen
     * @param seed the seed
     * @return the held-out scores, the threshold, every score, the flagged rows, notes and surprisal
     * @throws IllegalArgumentException naming a column mismatch, an empty table, a missing cell, or
     *     a held-out cell the model cannot score
     */
    public AnomalyScreen screen(Table heldOut, Table records, long seed) {
        return screen(heldOut, records, Defaults.screening(), seed);
    }

    /**
     * {@link #screen(Table, Table, long)} with every setting chosen: the threshold rule (a quantile
     * of the held-out scores, an expected false-positive rate, or a score; see
     * {@link ThresholdRule}), the bound, missing cells refused or imputed ({@link MissingCells}),
     * and the surprisal of the flagged records ({@link SurprisalOptions}, none with 0 draws).
     * Held-out and screened records are scored with the same seed, so with the same draws. With
     * {@link ScreeningOptions#withFlow} each record is scored by its flow likelihood instead
     * ({@link #flowLikelihood(Table, FlowOptions)}: no draws, continuous columns only, far costlier;
     * {@link Defaults#SCREENING_SCORE} says why the bound is the default).
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param heldOut records not trained on, to set the threshold; each must be scorable
     * @param records records to screen
     * @param how the threshold rule, the bound, missing cells and surprisal
     * @param seed the seed of every draw
     * @return the held-out scores, the threshold, every score, the flagged rows, notes and surprisal
     * @throws IllegalArgumentException naming a column mismatch, an empty table, a missing cell
     *     (when refused), a held-out cell the model cannot score, or a false-positive rate below
     *     what the held-out rows can resolve (with the number of rows it needs)
     */
    public AnomalyScreen screen(Table heldOut, Table records, ScreeningOptions how, long seed) {
        Require.notNull("heldOut", heldOut);
        Require.notNull("records", records);
        Require.notNull("how", how);
        Require.inRange("steps", how.bound().steps(), 0, steps());
        checkColumns(heldOut, "heldOut");
        checkColumns(records, "records");
        return Screener.screen(engine, heldOut, records, how, seed);
    }

    /**
     * Which columns make each record unusual, by {@link Defaults#surprisal()}: for every column j the
     * conditional surprisal -log p(x_j | x_-j) in nats, model space, estimated from draws of the cell
     * given the others (see {@link Surprisal} for the estimator, its bias and its units).
     *
     * <p>Caution: a surprisal says which cells the model finds improbable given the others, not
     * which sensor is at fault.
     *
     * @param records the records; missing cells get no figure, the others are conditioned on the
     *     observed ones
     * @param seed the seed
     * @return per record and column, the surprisal
     */
    public Surprisal surprisal(Table records, long seed) {
        return surprisal(records, Defaults.surprisal(), seed);
    }

    /**
     * {@link #surprisal(Table, long)} with the draws, steps and rounds chosen.
     *
     * @param records the records
     * @param how draws per cell (at least {@link SurprisalOptions#FEWEST_DRAWS}), steps, rounds
     * @param seed the seed
     * @return per record and column, the surprisal
     * @throws IllegalArgumentException naming a column mismatch, an empty table, or 0 draws
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Surprisal surprisal(Table records, SurprisalOptions how, long seed) {
        Require.notNull("how", how);
        Require.atLeast("draws", how.draws(), SurprisalOptions.FEWEST_DRAWS);
        checkColumns(records, "records");
        Require.atLeast("records rows", records.rows(), 1);
        return SurprisalEstimator.estimate(engine, records, IntStream.range(0, records.rows()).toArray(), how, seed);
    }

    /**
     * Whether a new batch differs from a reference batch, by {@link Defaults#drift()}: a two-sample
     * Kolmogorov-Smirnov test on the two batches' scores (scored as in a screen, with common random
     * numbers), a Kolmogorov-Smirnov test per continuous column and a chi-squared test per binary
     * column, the p-values adjusted together for their number (Holm 1979); see {@link DriftReport}.
     *
     * <p>Caution: a drift alarm says the batches differ; it does not say the new batch is faulty.
     *
     * @param reference records the model is known to fit, e.g. held-out rows; at least 2
     * @param batch the new records; at least 2
     * @param seed the seed of the scores
     * @return the tests, the columns ranked by adjusted p-value
     */
    public DriftReport drift(Table reference, Table batch, long seed) {
        return drift(reference, batch, Defaults.drift(), seed);
    }

    /**
     * {@link #drift(Table, Table, long)} with the bound and the treatment of missing cells chosen.
     *
     * @param reference records the model is known to fit; at least 2
     * @param batch the new records; at least 2
     * @param how the bound and missing cells of the scores
     * @param seed the seed of the scores
     * @return the tests
     * @throws IllegalArgumentException naming a column mismatch, a batch of fewer than 2 rows, or a
     *     missing cell (when refused)
     */
    public DriftReport drift(Table reference, Table batch, DriftOptions how, long seed) {
        Require.notNull("how", how);
        Require.inRange("steps", how.bound().steps(), 0, steps());
        checkColumns(reference, "reference");
        checkColumns(batch, "batch");
        Require.atLeast("reference rows", reference.rows(), 2);
        Require.atLeast("batch rows", batch.rows(), 2);
        return DriftTests.drift(engine, reference, batch, how, seed);
    }

    /**
     * The score of each record as a screen and a drift test compute it: the bound by {@code how}
     * with common random numbers (every record shares the draws of the seed, so a record's score is
     * a fixed function of the record and the seed, whatever table it stands in), +infinity for a
     * record with a cell beyond the model space's range or outside its column's support. A table can
     * therefore be scored in parts, e.g. a DataFrame's partitions, and the parts' scores equal the
     * whole table's to the float32 network's rounding (OpenBLAS rounds a row's products differently
     * with its place in the matrix; measured up to about 1e-7 relative, {@code DriftInPartsTest});
     * pass them to {@link #drift(Table, double[], Table, double[])}.
     *
     * <p>Caution: the score ranks records; it is not a calibrated probability of a fault.
     *
     * @param records complete records with the training columns
     * @param how the bound (a sampled one uses at most T draws), e.g. {@code Defaults.drift().bound()}
     * @param seed the seed of the shared draws (the same for every part and every table compared)
     * @return per record, nats in model space, or +infinity
     * @throws IllegalArgumentException naming a column mismatch, an empty table, a strided step
     *     count above T, or the first missing cell
     */
    public double[] screeningScores(Table records, BoundOptions how, long seed) {
        Require.notNull("records", records);
        Require.notNull("how", how);
        Require.inRange("steps", how.steps(), 0, steps());
        checkColumns(records, "records");
        return Scoring.score(engine, records, how, MissingCells.refuse(), "records", seed).scores();
    }

    /**
     * The tests of {@link #drift(Table, Table, DriftOptions, long)} on complete batches whose scores
     * were computed by {@link #screeningScores(Table, BoundOptions, long)} (for example in parts, on
     * the partitions of a DataFrame), with the same bound and seed for both batches: with the scores
     * of {@code drift}'s own bound and seed, the report equals {@code drift}'s. The notes name each
     * batch's unscorable cells.
     *
     * <p>Caution: a drift alarm says the batches differ; it does not say the new batch is faulty.
     *
     * @param reference complete records the model is known to fit; at least 2
     * @param referenceScores their scores, one per record, not NaN (not modified)
     * @param batch the new complete records; at least 2
     * @param batchScores their scores, one per record, not NaN (not modified)
     * @return the tests
     * @throws IllegalArgumentException naming a column mismatch, a batch of fewer than 2 rows, a
     *     missing cell, a score count other than the row count, or a NaN score
     */
    public DriftReport drift(Table reference, double[] referenceScores, Table batch, double[] batchScores) {
        checkComplete(reference, "reference");
        checkComplete(batch, "batch");
        Require.atLeast("reference rows", reference.rows(), 2);
        Require.atLeast("batch rows", batch.rows(), 2);
        checkScores(referenceScores, "referenceScores", reference.rows(), "reference");
        checkScores(batchScores, "batchScores", batch.rows(), "batch");
        return DriftTests.ofScores(engine, reference, referenceScores, batch, batchScores);
    }

    private static void checkScores(double[] scores, String name, int rows, String table) {
        Require.notNull(name, scores);
        if (scores.length != rows) {
            throw new IllegalArgumentException(name + " has " + scores.length + " values; expected " + rows
                    + " (one per " + table + " row)");
        }
        for (int i = 0; i < rows; i++) {
            if (Double.isNaN(scores[i])) {
                throw new IllegalArgumentException(name + "[" + i + "] is NaN; expected a score (nats or +infinity)");
            }
        }
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
     * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
     *
     * @param count how many, at least 1; count x columns at most {@link Limits#MAX_CELLS}
     * @param plan sampler, steps and eta
     * @param seed the seed
     * @return a table with the training columns, in original units
     * @throws IllegalArgumentException naming count and the limit if the table would be too large
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Table sample(int count, SamplingPlan plan, long seed) {
        return sampleChecked(count, plan, seed).table();
    }

    /**
     * Synthetic records by the given plan, one per seed: record i is drawn from a generator seeded
     * by {@code rowSeeds[i]} alone, the record {@code sample(1, plan, rowSeeds[i])} draws, so a
     * record does not depend on the other seeds, their order or the batch size (for a distributed
     * job: seed record i from the job's seed and i, and any partitioning draws the same records). The records agree with the one-record calls' to the float32 network's
     * rounding, not bit for bit (see {@link #impute(Table, ImputationOptions, long[])}).
     *
     * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
     *
     * @param plan sampler, steps and eta
     * @param rowSeeds one seed per record, at least one; count x columns at most {@link Limits#MAX_CELLS} (not modified)
     * @return a table with the training columns, in original units
     * @throws IllegalArgumentException naming an empty or too long seed array, or a step count above T
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Table sample(SamplingPlan plan, long[] rowSeeds) {
        Require.notNull("rowSeeds", rowSeeds);
        Require.atLeast("rowSeeds length", rowSeeds.length, 1);
        Limits.checkCells("count x columns of the sample", rowSeeds.length, transform().names().size());
        Require.notNull("plan", plan);
        Require.inRange("steps", plan.steps(), 0, steps());
        return engine.sampleChecked(plan, rowSeeds.clone()).table();
    }

    /**
     * Synthetic records by the given plan, as {@link #sample(int, SamplingPlan, long)} draws them,
     * with the check of how far they strayed: the share of rows with a value beyond
     * {@link SampleCheck#BOUND_WIDTHS} widths of the training range in model space (see
     * {@link SampleCheck}). Such rows come from a chain that diverges (too few steps for the
     * schedule, an undertrained network); both methods also log a warning through SLF4J when any
     * row lies beyond the bound.
     *
     * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
     *
     * @param count how many, at least 1; count x columns at most {@link Limits#MAX_CELLS}
     * @param plan sampler, steps and eta
     * @param seed the seed
     * @return the table in original units and the check
     * @throws IllegalStateException if the chain diverges so far that a cell leaves the float range
     */
    public CheckedSample sampleChecked(int count, SamplingPlan plan, long seed) {
        Require.atLeast("count", count, 1);
        Limits.checkCells("count x columns of the sample", count, transform().names().size());
        Require.notNull("plan", plan);
        Require.inRange("steps", plan.steps(), 0, steps());
        return engine.sampleChecked(count, plan, seed);
    }

    // ------------------------------------------------------------------ imputation

    /**
     * Imputes the missing (NaN) cells of each record by {@link Defaults#imputation()}: 20 draws
     * from the model's conditional distribution given the observed cells, their mean and a 90%
     * interval, by replacement (after each reverse step the observed cells are replaced by a fresh
     * draw of q(x_{t-1} | x_0 = y); Lugmayr et al. 2022, algorithm 1) on at most 100 steps. Observed
     * cells come back unchanged.
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param seed the seed
     * @return the draws, the per-cell mean and the interval
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Imputation impute(Table records, long seed) {
        return impute(records, Defaults.imputation(), seed);
    }

    /**
     * Imputes the missing (NaN) cells of each record with every setting chosen (draws, level,
     * steps, rounds and method; see {@link ImputationOptions} and, for the two methods and how they
     * were measured, {@link org.backstep.option.Conditioning}). Cost: draws x min(steps, T) x rounds
     * network evaluations per incomplete record.
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param how the settings
     * @param seed the seed
     * @return the k completions, the per-cell mean and the interval
     * @throws IllegalArgumentException naming a column mismatch
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Imputation impute(Table records, ImputationOptions how, long seed) {
        Require.notNull("how", how);
        checkColumns(records, "records");
        Limits.checkCells("draws x rows x columns of the imputation", how.draws(), records.rows(), records.columns());
        return Imputer.impute(engine, records, how, seed);
    }

    /**
     * {@link #impute(Table, ImputationOptions, long)} with a seed per record: draw k of record i
     * comes from a generator seeded by {@code rowSeeds[i]} and k alone, the draws
     * {@code impute(recordI, how, rowSeeds[i])} makes on a one-record table. So a record's draws
     * depend only on its seed, not on the other records, their order or the batch size, while the
     * network sees the records in batches (one-record calls cost about 7 times the CPU time per record
     * for imputation and 9 for denoising, measured through Spark on a shared machine;
     * {@code diffusion-bench/results/spark-rowjobs.txt}). For a distributed job whose rows carry a
     * stable key: seed each row from the key, and any partitioning gives the same draws. The figures agree with the one-record call's to the float32 network's
     * rounding, not bit for bit: OpenBLAS's sgemm rounds a row's products differently with its place
     * in the matrix (its kernels treat a matrix's edges apart; measured up to 2e-6 nats on a bound,
     * and unchanged with -XX:-UseSuperWord, so not in Java). The chain carries such a difference
     * forward: a continuous draw moves by about float32 rounding times the chain's gain, and a
     * binary or categorical draw (a uniform u against a probability p) takes the other value only
     * when u lies within that rounding of p's threshold, on average once in some 10^6 such draws;
     * after it the record's chain follows another path (tests hold the agreement, see
     * {@code RowSeedJobsTest}).
     *
     * <p>Caution: imputed values are not measurements.
     *
     * @param records records with the training columns; NaN marks a missing cell
     * @param how the settings
     * @param rowSeeds one seed per record (not modified)
     * @return the k completions, the per-cell mean and the interval
     * @throws IllegalArgumentException naming a column mismatch, or a seed count other than the
     *     record count
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Imputation impute(Table records, ImputationOptions how, long[] rowSeeds) {
        Require.notNull("how", how);
        checkColumns(records, "records");
        checkRowSeeds(rowSeeds, records.rows());
        Limits.checkCells("draws x rows x columns of the imputation", how.draws(), records.rows(), records.columns());
        return Imputer.impute(engine, records, how, rowSeeds.clone());
    }

    private static void checkRowSeeds(long[] rowSeeds, int rows) {
        Require.notNull("rowSeeds", rowSeeds);
        if (rowSeeds.length != rows) {
            throw new IllegalArgumentException("rowSeeds has " + rowSeeds.length + " seeds; expected "
                    + rows + " (one per record)");
        }
    }

    // ------------------------------------------------------------------ denoising

    /**
     * Cleans readings observed with additive Gaussian noise of known standard deviation per column
     * (original units). In model space a reading is z_y = z + n with n ~ N(0, s_j^2), s_j the
     * column's noise over its scale (in the whitened coordinates of a {@code Coordinates.WHITENED}
     * model the noise of the whitened block is W S W, S = diag(s_j^2)); write the noise covariance as
     * U diag(lambda) U^T and L_t = (1 - alpha-bar_t)/alpha-bar_t. The chain starts at the first step t*
     * whose level L reaches max lambda, at an exact draw of q(x_{t*} | x_0) (the reading topped up to
     * that level; Ho et al. 2020, eq. 4), and runs down to x_0 on a strided subset of at most
     * {@link DenoisingOptions#steps()} steps; after each step, every direction i of U with lambda_i at
     * most the step's level is replaced by a fresh forward draw from the reading,
     * sqrt(alpha-bar) (U^T z_y + sqrt(L - lambda_i) xi)_i, so each direction is held down to the last
     * kept step whose level covers its own noise and released there. For independent Gaussian
     * directions (whitened data under the N(0, I) part is about that) this draws from the exact
     * posterior up to the step grid; for other data it is the replacement approximation of imputation
     * (Lugmayr et al. 2022, algorithm 1). Derivation in {@code internal.chain.Denoiser}; measured on
     * correlated Gaussian data with a default fit: RMSE within 1.03 to 1.08 times the exact Gaussian
     * posterior mean's (Anderson 2003, theorem 2.5.1). Binary, categorical and constant columns are
     * taken as observed exactly (a categorical column's noise must be 0: there is no Gaussian noise on
     * a category; its mean is its index and its spread 0). Continuous columns must be standardized,
     * not log-transformed.
     *
     * <p>Caution: denoised values are estimates, not measurements.
     *
     * @param readings complete noisy records with the training columns
     * @param how the noise of each column in original units (above 0 for every diffused continuous
     *     column; other entries are ignored), the draws and the most steps; start from
     *     {@link Defaults#denoising(double...)}
     * @param seed the seed
     * @return posterior mean and spread per cell
     * @throws IllegalArgumentException naming the column whose noise or transform is unusable (a
     *     column mapped other than STANDARDIZE: fit with {@code marginals(Marginals.STANDARDIZED)}), or a
     *     categorical column given a noise other than 0
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Denoising denoise(Table readings, DenoisingOptions how, long seed) {
        checkDenoising(readings, how);
        return Denoiser.denoise(engine, readings, how, seed);
    }

    /**
     * {@link #denoise(Table, DenoisingOptions, long)} with a seed per record: draw k of record i
     * comes from a generator seeded by {@code rowSeeds[i]} and k alone, the draws
     * {@code denoise(recordI, how, rowSeeds[i])} makes on a one-record table, so a record's draws do
     * not depend on the other records while the network sees them in batches. The figures agree with the one-record call's to the float32 network's
     * rounding, not bit for bit: OpenBLAS's sgemm rounds a row's products differently with its place
     * in the matrix (its kernels treat a matrix's edges apart; measured up to 2e-6 nats on a bound,
     * and unchanged with -XX:-UseSuperWord, so not in Java). The chain carries such a difference
     * forward: a continuous draw moves by about float32 rounding times the chain's gain, and a
     * binary or categorical draw (a uniform u against a probability p) takes the other value only
     * when u lies within that rounding of p's threshold, on average once in some 10^6 such draws;
     * after it the record's chain follows another path (tests hold the agreement, see
     * {@code RowSeedJobsTest}).
     *
     * <p>Caution: denoised values are estimates, not measurements.
     *
     * @param readings complete noisy records with the training columns
     * @param how the noise of each column in original units, the draws and the most steps
     * @param rowSeeds one seed per record (not modified)
     * @return posterior mean and spread per cell
     * @throws IllegalArgumentException as {@link #denoise(Table, DenoisingOptions, long)}, or naming a
     *     seed count other than the record count
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public Denoising denoise(Table readings, DenoisingOptions how, long[] rowSeeds) {
        checkDenoising(readings, how);
        checkRowSeeds(rowSeeds, readings.rows());
        return Denoiser.denoise(engine, readings, how, rowSeeds.clone());
    }

    private void checkDenoising(Table readings, DenoisingOptions how) {
        Require.notNull("how", how);
        checkComplete(readings, "readings");
        double[] noise = how.noiseSd();
        for (int c : transform().modelledCategorical()) {
            if (c < noise.length && noise[c] != 0.0) {
                throw new IllegalArgumentException("column '" + transform().names().get(c) + "' is CATEGORICAL and its"
                        + " noise is " + noise[c] + "; denoising removes Gaussian reading noise of known size, which"
                        + " categories do not have: give 0 for it, and its cells are held as observed (impute a"
                        + " category you distrust instead, with the cell missing)");
            }
        }
    }

    // ------------------------------------------------------------------ planning

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
     * @param stepCounts the candidates, each in 1..T; none means {@link Defaults#PLANNER_STEP_COUNTS}
     *     below T, and T
     * @return the table of findings and the recommendation
     */
    public StepPlan planSteps(Table heldOut, double tolerance, long seed, int... stepCounts) {
        Require.nonNegative("tolerance", tolerance);
        Require.notNull("stepCounts", stepCounts);
        checkColumns(heldOut, "heldOut");
        int[] counts = stepCounts.length > 0 ? stepCounts
                : IntStream.concat(Defaults.PLANNER_STEP_COUNTS.stream().mapToInt(Integer::intValue)
                        .filter(k -> k < steps()), IntStream.of(steps())).toArray();
        return StepPlanner.plan(engine, heldOut, tolerance, seed, counts);
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
    public void save(Path file) throws IOException {
        Require.notNull("file", file);
        ModelFile.save(engine.parts(), file);
    }

    /**
     * Loads a model saved by {@link #save(Path)}; it behaves identically (the same bounds and
     * samples for the same seed).
     *
     * @param file the model file
     * @return the model
     * @throws ModelFileException naming the part, if the file is foreign, truncated, of an unknown
     *     version, holds an entry the format does not name or misses one, fails a checksum, holds a
     *     field of the wrong type or past {@link Limits}, options the builder would refuse, or
     *     disagrees with its manifest (a model file is read as untrusted input; see the README)
     * @throws IOException if the file cannot be read
     */
    public static DiffusionModel load(Path file) throws IOException {
        Require.notNull("file", file);
        return new DiffusionModel(ModelFile.load(file));
    }

    // ------------------------------------------------------------------ helpers

    private void checkColumns(Table records) {
        checkColumns(records, "records");
    }

    private void checkColumns(Table records, String name) {
        Require.notNull(name, records);
        TableTransform t = transform();
        if (!records.names().equals(t.names()) || !records.kinds().equals(t.kinds())) {
            throw new IllegalArgumentException(name + " has columns " + records.names() + " " + records.kinds()
                    + "; expected the training columns " + t.names() + " " + t.kinds());
        }
    }

    /** Refuses a column mismatch, an empty table and the first missing cell (row and column named). */
    private void checkComplete(Table records, String name) {
        checkColumns(records, name);
        if (records.hasMissing()) {
            for (int i = 0; i < records.rows(); i++) {
                for (int j = 0; j < records.columns(); j++) {
                    if (Double.isNaN(records.get(i, j))) {
                        throw new IllegalArgumentException(name + ": row " + i + ", column '" + records.name(j)
                                + "' is missing; this needs complete records (impute them first)");
                    }
                }
            }
        }
        if (records.rows() == 0) {
            throw new IllegalArgumentException(name + " has 0 rows; expected at least 1");
        }
    }

    @Override
    public String toString() {
        return "DiffusionModel[" + transform().names().size() + " columns (" + engine.chain().continuousColumns()
                + " continuous, " + engine.chain().binaryColumns() + " binary"
                + (engine.chain().categoricalColumns() > 0 ? ", " + engine.chain().categoricalColumns() + " categorical" : "")
                + " diffused), T=" + steps() + ", "
                + options().continuousSchedule().kind().name().toLowerCase(Locale.ROOT) + " + "
                + options().binarySchedule().kind().name().toLowerCase(Locale.ROOT) + ", variance "
                + options().variance() + ", trained on " + provenance().trainingRows() + " rows in "
                + String.format(Locale.ROOT, "%.1f", provenance().trainingSeconds()) + " s]";
    }
}
