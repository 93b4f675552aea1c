package org.backstep.spark;

import org.apache.spark.ml.param.BooleanParam;
import org.apache.spark.ml.param.DoubleArrayParam;
import org.apache.spark.ml.param.DoubleParam;
import org.apache.spark.ml.param.IntParam;
import org.apache.spark.ml.param.LongParam;
import org.apache.spark.ml.param.Param;
import org.apache.spark.ml.param.Params;
import org.apache.spark.ml.param.StringArrayParam;

/**
 * The Spark ML Params shared by {@link BackstepEstimator} and {@link BackstepModel}: which columns,
 * which job, the seed and the job's settings. A fitted model takes the estimator's values.
 *
 * <p>The jobs ({@link #job()}): {@code "score"} appends the negative variational bound of each row
 * in nats ({@link #outputCol()}; exact over all T steps when {@link #scoreDraws()} is 0, else a
 * Monte Carlo estimate with that many steps; Ho et al. 2020, eq. 5) and, when the model has a
 * threshold, a flag ({@link #flagCol()}: the bound is above the threshold, or NaN);
 * {@code "impute"} appends, per model column {@code c}, {@code c_mean}, {@code c_lower} and
 * {@code c_upper}: the mean and central interval at {@link #level()} of {@link #draws()} draws of
 * each missing cell given the observed ones (observed cells repeat their value; a categorical
 * column's most frequent label of the draws, as a string, in all three), and with
 * {@link #keepDraws()} also {@code c_draws}, the array of the draws themselves (labels for a
 * categorical column; an observed cell repeated);
 * {@code "denoise"} appends {@code c_denoised} and {@code c_sd}: the posterior mean and spread of
 * each cell of readings with Gaussian noise of standard deviation {@link #noiseSd()} (original
 * units, one per model column; 0 for a categorical column, which keeps its label); {@code "attribute"} scores and flags as {@code "score"} (the model
 * needs a threshold) and, for each flagged row, appends which columns make it unusual: the
 * conditional surprisal -log p(x_j | x_-j) of every model column in nats, model space
 * ({@link #surprisalCol()}, in the model's column order, NaN for a missing cell; the core's
 * {@code DiffusionModel.surprisal} with {@link #surprisalDraws()}, {@link #surprisalSteps()} and
 * {@link #surprisalRounds()}), and the {@link #culprits()} most surprising columns by their
 * DataFrame names, most surprising first ({@link #culpritCol()}); both arrays are empty for a row
 * that is not flagged.
 *
 * <p>Every row's random stream derives from {@link #seed()} and the row's key
 * ({@link #rowKeyCol()}, else the row's cells), so results do not depend on the partitioning
 * ({@link RowSeeds}).
 *
 * <p>Cautions: imputed and denoised values are not measurements; a likelihood score ranks records
 * and is not a calibrated probability of a fault; for safety-, health- or compliance-critical
 * decisions, defer to local regulations and qualified review.
 *
 * @param <S> the implementing class, returned by the setters
 */
public interface BackstepParams<S extends BackstepParams<S>> extends Params {

    /** The job names {@link #job()} accepts. */
    String SCORE = "score";
    /** @see #SCORE */
    String IMPUTE = "impute";
    /** @see #SCORE */
    String DENOISE = "denoise";
    /** @see #SCORE */
    String ATTRIBUTE = "attribute";

    /** The Param objects of one instance; internal, made by the implementing class's constructor. */
    final class Defs {
        final StringArrayParam inputCols;
        final Param<String> rowKeyCol;
        final Param<String> outputCol;
        final Param<String> flagCol;
        final LongParam seed;
        final Param<String> job;
        final IntParam scoreDraws;
        final IntParam draws;
        final DoubleParam level;
        final DoubleArrayParam noiseSd;
        final IntParam batchRows;
        final Param<String> culpritCol;
        final Param<String> surprisalCol;
        final IntParam culprits;
        final IntParam surprisalDraws;
        final IntParam surprisalSteps;
        final IntParam surprisalRounds;
        final BooleanParam keepDraws;

        Defs(BackstepParams<?> owner) {
            inputCols = new StringArrayParam(owner, "inputCols",
                    "the DataFrame column of each model column, in the model's order (default: the model's column names)");
            rowKeyCol = new Param<>(owner, "rowKeyCol",
                    "an integer or string column whose value seeds each row's random stream; empty: the row's cells do");
            outputCol = new Param<>(owner, "outputCol", "the score column: the bound in nats per row");
            flagCol = new Param<>(owner, "flagCol", "the flag column: score above the threshold (or NaN)");
            seed = new LongParam(owner, "seed", "the job's seed; each row's seed derives from it and the row's key");
            job = new Param<>(owner, "job", "the job of transform: score, attribute, impute or denoise");
            scoreDraws = new IntParam(owner, "scoreDraws",
                    "0: the exact bound over all T steps; K > 0: a Monte Carlo estimate with K steps");
            draws = new IntParam(owner, "draws", "draws per row for impute and denoise, at least 1");
            level = new DoubleParam(owner, "level", "coverage of the imputation interval, in (0, 1)");
            noiseSd = new DoubleArrayParam(owner, "noiseSd",
                    "for denoise: the noise standard deviation of each model column, original units");
            batchRows = new IntParam(owner, "batchRows", "rows read from a partition at a time, at least 1");
            culpritCol = new Param<>(owner, "culpritCol",
                    "for attribute: the column of the most surprising columns' names of a flagged row");
            surprisalCol = new Param<>(owner, "surprisalCol",
                    "for attribute: the column of a flagged row's surprisal per model column, nats");
            culprits = new IntParam(owner, "culprits", "for attribute: how many column names to list, at least 1");
            surprisalDraws = new IntParam(owner, "surprisalDraws", "for attribute: draws per cell, at least "
                    + CoreCalls.fewestSurprisalDraws());
            surprisalSteps = new IntParam(owner, "surprisalSteps", "for attribute: the most chain steps, at least 1");
            surprisalRounds = new IntParam(owner, "surprisalRounds", "for attribute: resampling rounds per step, at least 1");
            keepDraws = new BooleanParam(owner, "keepDraws",
                    "for impute: also append c_draws per model column, the array of the draws of each cell");
            owner.setDefault(keepDraws, (Object) false);
            owner.setDefault(rowKeyCol, "");
            owner.setDefault(outputCol, "backstep_nats");
            owner.setDefault(flagCol, "backstep_flag");
            owner.setDefault(seed, (Object) 1L);
            owner.setDefault(job, SCORE);
            owner.setDefault(scoreDraws, (Object) 0);
            owner.setDefault(draws, (Object) 20);
            owner.setDefault(level, (Object) 0.9);
            owner.setDefault(noiseSd, new double[0]);
            owner.setDefault(batchRows, (Object) 256);
            int[] sd = CoreCalls.surprisalDefaults();
            owner.setDefault(culpritCol, "backstep_culprits");
            owner.setDefault(surprisalCol, "backstep_surprisal");
            owner.setDefault(culprits, (Object) 3);
            owner.setDefault(surprisalDraws, (Object) sd[0]);
            owner.setDefault(surprisalSteps, (Object) sd[1]);
            owner.setDefault(surprisalRounds, (Object) sd[2]);
        }
    }

    /** @return this instance's Param objects (internal) */
    Defs paramDefs();

    /** @return this, typed */
    @SuppressWarnings("unchecked")
    private S self() {
        return (S) this;
    }

    /** @return the Param: the DataFrame column of each model column */
    default StringArrayParam inputCols() {
        return paramDefs().inputCols;
    }

    /** @return the Param: the row key column ("" for the row's cells) */
    default Param<String> rowKeyCol() {
        return paramDefs().rowKeyCol;
    }

    /** @return the Param: the score column */
    default Param<String> outputCol() {
        return paramDefs().outputCol;
    }

    /** @return the Param: the flag column */
    default Param<String> flagCol() {
        return paramDefs().flagCol;
    }

    /** @return the Param: the job's seed */
    default LongParam seed() {
        return paramDefs().seed;
    }

    /** @return the Param: score, impute or denoise */
    default Param<String> job() {
        return paramDefs().job;
    }

    /** @return the Param: 0 for the exact bound, K for a Monte Carlo estimate */
    default IntParam scoreDraws() {
        return paramDefs().scoreDraws;
    }

    /** @return the Param: draws per row for impute and denoise */
    default IntParam draws() {
        return paramDefs().draws;
    }

    /** @return the Param: coverage of the imputation interval */
    default DoubleParam level() {
        return paramDefs().level;
    }

    /** @return the Param: noise standard deviation per model column for denoise */
    default DoubleArrayParam noiseSd() {
        return paramDefs().noiseSd;
    }

    /** @return the Param: rows read from a partition at a time */
    default IntParam batchRows() {
        return paramDefs().batchRows;
    }

    /** @return the Param: whether impute also appends each cell's draws */
    default BooleanParam keepDraws() {
        return paramDefs().keepDraws;
    }

    /** @param keep whether impute also appends {@code c_draws}, the array of each cell's draws @return this */
    default S setKeepDraws(boolean keep) {
        set(keepDraws(), (Object) keep);
        return self();
    }

    /** @param cols the DataFrame column of each model column @return this */
    default S setInputCols(String... cols) {
        set(inputCols(), cols.clone());
        return self();
    }

    /** @param col the row key column, "" for the row's cells @return this */
    default S setRowKeyCol(String col) {
        set(rowKeyCol(), col);
        return self();
    }

    /** @param col the score column @return this */
    default S setOutputCol(String col) {
        set(outputCol(), col);
        return self();
    }

    /** @param col the flag column @return this */
    default S setFlagCol(String col) {
        set(flagCol(), col);
        return self();
    }

    /** @param seed the job's seed @return this */
    default S setSeed(long seed) {
        set(seed(), (Object) seed);
        return self();
    }

    /** @param job score, impute or denoise @return this */
    default S setJob(String job) {
        set(job(), job);
        return self();
    }

    /** @param draws 0 for the exact bound, K at least 1 for a Monte Carlo estimate @return this */
    default S setScoreDraws(int draws) {
        set(scoreDraws(), (Object) draws);
        return self();
    }

    /** @param draws draws per row for impute and denoise @return this */
    default S setDraws(int draws) {
        set(draws(), (Object) draws);
        return self();
    }

    /** @param level coverage of the imputation interval, in (0, 1) @return this */
    default S setLevel(double level) {
        set(level(), (Object) level);
        return self();
    }

    /** @param sd noise standard deviation per model column, original units @return this */
    default S setNoiseSd(double... sd) {
        set(noiseSd(), sd.clone());
        return self();
    }

    /** @param rows rows read from a partition at a time @return this */
    default S setBatchRows(int rows) {
        set(batchRows(), (Object) rows);
        return self();
    }

    /** @return the Param: the culprit column (attribute) */
    default Param<String> culpritCol() {
        return paramDefs().culpritCol;
    }

    /** @return the Param: the surprisal column (attribute) */
    default Param<String> surprisalCol() {
        return paramDefs().surprisalCol;
    }

    /** @return the Param: how many culprit columns to name (attribute) */
    default IntParam culprits() {
        return paramDefs().culprits;
    }

    /** @return the Param: surprisal draws per cell (attribute) */
    default IntParam surprisalDraws() {
        return paramDefs().surprisalDraws;
    }

    /** @return the Param: the most chain steps of the surprisal draws (attribute) */
    default IntParam surprisalSteps() {
        return paramDefs().surprisalSteps;
    }

    /** @return the Param: resampling rounds per step of the surprisal draws (attribute) */
    default IntParam surprisalRounds() {
        return paramDefs().surprisalRounds;
    }

    /** @param col the culprit column @return this */
    default S setCulpritCol(String col) {
        set(culpritCol(), col);
        return self();
    }

    /** @param col the surprisal column @return this */
    default S setSurprisalCol(String col) {
        set(surprisalCol(), col);
        return self();
    }

    /** @param count how many culprit columns to name, at least 1 @return this */
    default S setCulprits(int count) {
        set(culprits(), (Object) count);
        return self();
    }

    /** @param draws surprisal draws per cell @return this */
    default S setSurprisalDraws(int draws) {
        set(surprisalDraws(), (Object) draws);
        return self();
    }

    /** @param steps the most chain steps of the surprisal draws @return this */
    default S setSurprisalSteps(int steps) {
        set(surprisalSteps(), (Object) steps);
        return self();
    }

    /** @param rounds resampling rounds per step of the surprisal draws @return this */
    default S setSurprisalRounds(int rounds) {
        set(surprisalRounds(), (Object) rounds);
        return self();
    }
}
