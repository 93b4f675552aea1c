package org.backstep.internal.train;

import org.backstep.internal.chain.Chain;
import org.backstep.option.Coordinates;
import org.backstep.option.Marginals;
import org.backstep.table.MarginalCriterion;
import org.backstep.table.Whitening;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.ScoringRange;
import org.backstep.option.FitOptions;
import org.backstep.report.CellNote;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;

/**
 * The rows a fit trains on, prepared: the log columns checked, the checkpoint rows split off
 * (drawn at random, seeded, unless the caller gives them), the column transforms fitted, and both
 * sets in model space as float32 rows. The transforms are fitted on every row of the table given to
 * the fit, each column on its observed cells (the checkpoint rows split off it included; rows a
 * caller gives separately as checkpoint rows are not), so that a model's nats are in the
 * standardized space of the caller's table (issue 11, item 5). What was done is kept as notes for the provenance.
 *
 * <p>Training rows with a missing cell are trained on: their missing cells are filled by
 * {@link GapFilling} (stochastic EM), first here from each column's distribution, then by the run
 * from the model. A table without missing training cells is prepared exactly as before gaps were
 * trained on (same transforms, same rows, same bits). Rows with no observed cell at all are left
 * out. The checkpoint bound needs every cell of a row, so it is taken on the complete checkpoint
 * rows only; when the seeded split leaves no complete checkpoint row (for instance when every row
 * has a gap), those rows are trained on as well and the last averaged weights are kept.
 *
 * <p>With coordinates WHITENED a whitened cell mixes every real continuous column, so a gap in one of
 * them leaves the row without a whitened value. Then the whitening's mean and covariance are the
 * maximum-likelihood normal's by EM with missing cells (Little &amp; Rubin 2002, section 11.2.1;
 * {@link Whitening#fitShrunkWithGaps}), shrunk as for complete rows, and the row's missing whitened
 * cells are drawn from that Gaussian's conditional given its observed whitened cells afresh at every
 * use ({@link GaussianGaps}, multiple imputation under the model's own closed-form part), then
 * whitened and trained on as targets: a whitened cell of such a row is part observed, part drawn, so
 * no cell could be left out of the loss alone, and the draws pull the network's correction toward
 * zero, the fitted Gaussian, only along what the row does not show. Gaps in the other columns
 * (integer, binary, categorical: not whitened) are filled by the stochastic EM above. The checkpoint
 * bound is taken on the complete checkpoint rows, as for standardized coordinates.
 */
final class TrainingRows {

    final TableTransform transform;
    final int dc;
    final int db;
    /** K of each modelled categorical column. */
    int[] categories = new int[0];
    final float[] x0;
    final int n;
    /** The checkpoint rows in model space, or null when there are none. */
    final float[] checkpoint;
    final int checkpointCount;
    final List<String> notes = new ArrayList<>();
    /** The training rows with a gap and how they are filled, or null when every training row is complete. */
    final GapFilling gaps;
    /** The transforms the caller gave, or null to fit them. */
    private final TableTransform given;
    /**
     * The whitening of the real continuous columns (coordinates WHITENED), fitted on the training rows
     * with Ledoit-Wolf shrinkage ({@link Whitening#fitShrunk}); x0 and the checkpoint rows are in its
     * coordinates. Null for standardized coordinates or without a real continuous column.
     */
    final Whitening whitening;
    /**
     * The training rows of a whitened fit that miss a whitened cell, drawn afresh from the fitted
     * Gaussian's conditional at every use; null when there are none.
     */
    final GaussianGaps gaussianGaps;
    /** The complete checkpoint rows in the caller's units, or null when there are none. */
    final Table checkpointTable;
    private static final long GAUSSIAN_FILL_SEED = 0x452821E638D01377L;   // any fixed constant (digits of pi)

    /**
     * @param options the fit's options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @param given the column transforms to use, or null to fit them on {@code table}; given ones
     *     must have the table's names and kinds (checked by the caller)
     * @throws IllegalArgumentException naming a bad log column or a column without an observed
     *     training cell, or if fewer than 2 training rows (with an observed cell) remain, or if every
     *     column is constant
     */
    TrainingRows(FitOptions options, Table table, Table checkpointRows, TableTransform given) {
        this.given = given;
        for (String name : options.logColumns()) {
            if (!table.names().contains(name)) {
                throw new IllegalArgumentException("logColumns names '" + name + "', which is not a column of the table "
                        + table.names());
            }
            if (table.kind(table.indexOf(name)) != ColumnKind.CONTINUOUS) {
                throw new IllegalArgumentException("logColumns names '" + name + "', which is "
                        + table.kind(table.indexOf(name)).name().toLowerCase(java.util.Locale.ROOT)
                        + "; only continuous columns take a log scale");
            }
        }
        table = leaveOutUnscorable(options, table, "", notes);
        if (checkpointRows != null) {
            checkpointRows = leaveOutUnscorable(options, checkpointRows, "checkpoint ", notes);
        }
        Table train = table;
        Table held = checkpointRows;
        // the checkpoint rows are split off only when at least 2 rows stay for training
        boolean randomSplit = held == null && options.checkpointFraction() > 0.0 && table.rows() >= 3;
        if (held == null && options.checkpointFraction() > 0.0 && !randomSplit) {
            notes.add("no checkpoint rows: the table has " + table.rows() + " rows, all trained on; the last"
                    + " averaged weights are kept");
        }
        if (randomSplit) {
            int[][] split = split(table.rows(), options.checkpointFraction(), options.seed());
            train = table.selectRows(split[0]);
            held = table.selectRows(split[1]);
            notes.add("checkpoint rows: " + split[1].length + " rows drawn at random (fraction "
                    + options.checkpointFraction() + ", seed " + options.seed() + ")");
        } else if (held != null) {
            checkSameLayout(table, held, "checkpointRows");
            notes.add("checkpoint rows: " + held.rows() + " rows given by the caller");
        }
        Table complete = train.completeRows();
        if (complete.rows() == train.rows()) {
            // no gaps: exactly the preparation of tables without missing cells
            if (complete.rows() < 2) {
                throw new IllegalArgumentException("training has " + complete.rows() + " rows; expected at least 2 (the table"
                        + " needs at least 2 rows besides its checkpoint rows)");
            }
            // standardized on every row given (checkpoint rows included), so nats are in the caller's space
            transform = fitTransform(table, train, options);
            dc = transform.modelledContinuous().length;
            db = transform.modelledBinary().length;
            categories = transform.modelledCategories();
            x0 = Engine.toFloat(transform.toModelSpace(complete));
            n = complete.rows();
            gaps = null;
        } else {
            if (randomSplit && held.completeRows().rows() == 0) {
                notes.add("none of the " + held.rows() + " checkpoint rows is complete, so no bound could choose the"
                        + " kept weights: they were trained on instead, and the last averaged weights kept");
                train = table;
                held = null;
            }
            int[] observedRows = rowsWithObservedCell(train);
            if (observedRows.length < train.rows()) {
                notes.add((train.rows() - observedRows.length) + " training rows with no observed cell were left out");
                train = train.selectRows(observedRows);
            }
            if (train.rows() < 2) {
                throw new IllegalArgumentException("training has " + train.rows()
                        + " rows with an observed cell; expected at least 2");
            }
            // the transforms of each column from its observed cells in every row given (TableTransform.fit
            // skips missing cells), checkpoint rows included, so nats are in the caller's space
            transform = fitTransform(table, train, options);
            dc = transform.modelledContinuous().length;
            db = transform.modelledBinary().length;
            categories = transform.modelledCategories();
            n = train.rows();
            x0 = Engine.toFloat(transform.toModelSpace(train));
            GapFilling found = GapFilling.of(x0, n, dc + db + categories.length, dc, dc + db);
            gaps = found.rowCount() == 0 ? null : found;
            if (gaps == null) {
                notes.add("the missing cells of the training rows all lie in constant columns, which are not"
                        + " diffused; every training row was used as it is");
            }
        }
        float[] heldRows = null;
        int heldCount = 0;
        Table heldTable = null;
        if (held != null) {
            Table heldComplete = held.completeRows();
            heldCount = heldComplete.rows();
            if (heldCount > 0) {
                heldRows = Engine.toFloat(transform.toModelSpace(heldComplete));
                heldTable = heldComplete;
            }
            if (heldCount < held.rows()) {
                notes.add("the checkpoint bound is taken on the " + heldCount + " complete checkpoint rows of "
                        + held.rows() + " (a bound needs every cell of a row)");
            }
        }
        Whitening fitted = null;
        GaussianGaps drawn = null;
        int[] whitened = Chain.whitenedColumns(transform);
        int d = width();
        if (options.coordinates() == Coordinates.WHITENED && whitened.length > 0) {
            double[][] cells = new double[n][whitened.length];
            boolean missing = false;
            for (int r = 0; r < n; r++) {
                for (int a = 0; a < whitened.length; a++) {
                    cells[r][a] = x0[r * d + whitened[a]];
                    missing |= Double.isNaN(cells[r][a]);
                }
            }
            // the gaps still NaN here: with a gap the mean and covariance are the normal's by EM
            fitted = missing ? Whitening.fitShrunkWithGaps(cells) : Whitening.fitShrunk(cells);
            notes.add("continuous columns whitened by the training covariance (" + whitened.length + " columns, "
                    + (missing ? "mean and covariance by EM for the normal with missing cells, " : "")
                    + "Ledoit-Wolf shrinkage " + String.format(java.util.Locale.ROOT, "%.4f", fitted.shrinkage())
                    + ", log|det W| " + String.format(java.util.Locale.ROOT, "%.4f", fitted.logDeterminant()) + ")");
            // a missing whitened cell implies gaps != null (gaps is null only when no diffused cell is missing)
            drawn = missing ? GaussianGaps.of(fitted, whitened, x0, n, d) : null;
        }
        if (gaps != null) {
            gaps.initialFillInPlace(x0, n, options.seed());
            notes.add(gapNote(gaps, n));
            if (drawn != null) {
                // the whitened gaps start as (and at every use are) a draw of the fitted Gaussian's conditional
                drawn.fillInPlace(x0, new SplittableRandom(options.seed() ^ GAUSSIAN_FILL_SEED));
                notes.add(drawn.rowCount() + " training rows miss a whitened cell: at every use those cells were"
                        + " drawn afresh from the conditional distribution of the fitted Gaussian given the row's"
                        + " observed whitened cells, then whitened, and trained on as targets");
            }
        }
        gaussianGaps = drawn;
        whitening = fitted;
        if (fitted != null) {
            fitted.whitenInPlace(x0, n, width(), whitened);
            if (heldRows != null) {
                fitted.whitenInPlace(heldRows, heldCount, width(), whitened);
            }
        }
        checkpoint = heldRows;
        checkpointCount = heldCount;
        checkpointTable = heldTable;
    }

    /**
     * The column transforms: given, or fitted. Standardized maps are fitted on every row given
     * ({@code rows}, checkpoint rows split off it included: the caller's standardized space); with
     * {@code Marginals} NORMAL_SCORES or CHOSEN the criterion ({@link MarginalCriterion}) runs on the
     * complete training rows, and normal scores, when taken, are fitted on the training rows only
     * ({@code train}), so that the checkpoint rows are not among their knots and the bound there, which
     * chooses the kept weights and (CHOSEN) the family, is a held-out figure.
     */
    private TableTransform fitTransform(Table rows, Table train, FitOptions options) {
        if (given != null) {
            notes.add("column transforms given by the caller (computed elsewhere, e.g. over a whole distributed"
                    + " table), not fitted on these " + rows.rows() + " rows");
        }
        TableTransform t = given != null ? given : TableTransform.fit(rows, options.logColumns());
        if (given == null && options.marginals() != Marginals.STANDARDIZED && hasScoredColumn(t, options.logColumns())) {
            Table complete = train.completeRows();
            if (complete.rows() < 2 * MarginalCriterion.FOLDS) {
                notes.add("marginals " + options.marginals() + ": only " + complete.rows() + " complete training rows,"
                        + " fewer than the criterion's " + 2 * MarginalCriterion.FOLDS + "; the columns were standardized");
            } else {
                long t0 = System.nanoTime();
                MarginalCriterion.Figures f = MarginalCriterion.figures(complete, options.logColumns());
                double criterionSeconds = Trainer.seconds(t0);
                boolean scores = options.marginals() == Marginals.NORMAL_SCORES || f.scoresWin();
                notes.add("marginals " + options.marginals() + ": cross-validated nats per record of the closed-form"
                        + " part (" + MarginalCriterion.FOLDS + " folds of " + f.rows() + " of the " + complete.rows()
                        + " complete training rows, caller's units): " + f
                        + String.format(java.util.Locale.ROOT, ", %.1f s; ", criterionSeconds)
                        + (scores ? "normal scores at " + f.bestMultiple() + " x Silverman's bandwidth taken, fitted on the "
                                + train.rows() + " training rows" : "standardized maps taken"));
                if (scores) {
                    t = TableTransform.fitNormalScores(train, options.logColumns(), f.bestMultiple());
                }
            }
        }
        notes.addAll(t.notes());
        if (t.modelColumns() == 0) {
            throw new IllegalArgumentException("the table has no column to diffuse: every column is constant");
        }
        return t;
    }

    /** @return whether {@code t} diffuses a CONTINUOUS column that is not a log column (one normal scores would map) */
    private static boolean hasScoredColumn(TableTransform t, java.util.Set<String> logColumns) {
        int[] mc = t.modelledContinuous();
        for (int j : t.realContinuousColumns()) {
            if (!logColumns.contains(t.names().get(mc[j]))) {
                return true;
            }
        }
        return false;
    }

    /** @return the indices of the rows of {@code t} with at least one observed cell, ascending */
    private static int[] rowsWithObservedCell(Table t) {
        int[] keep = new int[t.rows()];
        int count = 0;
        for (int r = 0; r < t.rows(); r++) {
            for (int c = 0; c < t.columns(); c++) {
                if (!Double.isNaN(t.get(r, c))) {
                    keep[count++] = r;
                    break;
                }
            }
        }
        return Arrays.copyOf(keep, count);
    }

    /** The provenance's account of the rows with gaps and of how they were used. */
    static String gapNote(GapFilling gaps, int rows) {
        return gaps.rowCount() + " of " + rows + " training rows had a missing cell (" + gaps.cellCount()
                + " cells); they were trained on with their missing cells filled by stochastic EM: first drawn"
                + " from each column's distribution fitted on its observed cells, then " + GapFilling.REFILLS
                + " times over the run drawn again from the model's conditional distribution given the row's"
                + " observed cells (averaged weights, a chain of " + GapFilling.CHAIN_STEPS + " steps, replacement with "
                + GapFilling.ROUNDS + " resampling rounds; from the prior the first time, then from the previous"
                + " draw diffused to step " + GapFilling.JUMP + ")";
    }

    /**
     * Leaves out the rows holding a cell beyond the model space's range or outside a log column's
     * support, judged on the rows' robust statistics ({@link ScoringRange#unscorableTraining}), with a
     * note per cell naming row and column; the fit goes on with the other rows.
     *
     * @param rows the rows given (not modified)
     * @param prefix put before "row r" in the notes ("" or "checkpoint ")
     * @param notes where the notes go (modified)
     * @return the rows kept
     */
    static Table leaveOutUnscorable(FitOptions options, Table rows, String prefix, List<String> notes) {
        List<CellNote> bad = ScoringRange.unscorableTraining(rows, options.logColumns(),
                ScoringRange.limit(options.continuousSchedule()));
        if (bad.isEmpty()) {
            return rows;
        }
        for (CellNote n : bad) {
            notes.add(prefix + n.text() + "; the row was left out of training");
        }
        int[] drop = ScoringRange.rows(bad);
        return rows.filterRows(r -> Arrays.binarySearch(drop, r) < 0);
    }

    /** @return D, the width of a model-space row */
    int width() {
        return dc + db + categories.length;
    }

    /**
     * @return {train rows, checkpoint rows}, each sorted: round(rows x fraction) rows (at least 1, at
     *     most rows - 1) drawn without replacement with the seed
     */
    static int[][] split(int rows, double fraction, long seed) {
        int held = Math.max(1, Math.min(rows - 1, (int) Math.round(rows * fraction)));
        int[] perm = identity(rows);
        shuffle(perm, new SplittableRandom(seed ^ 0x5DEECE66DL));
        int[] heldRows = Arrays.copyOf(perm, held);
        int[] trainRows = Arrays.copyOfRange(perm, held, rows);
        Arrays.sort(heldRows);
        Arrays.sort(trainRows);
        return new int[][] {trainRows, heldRows};
    }

    /** Refuses {@code b} (called {@code name} in the message) unless its columns are those of {@code a}. */
    static void checkSameLayout(Table a, Table b, String name) {
        if (!a.names().equals(b.names()) || !a.kinds().equals(b.kinds())) {
            throw new IllegalArgumentException(name + " has columns " + b.names() + " " + b.kinds()
                    + "; expected the training columns " + a.names() + " " + a.kinds());
        }
    }

    static int[] identity(int n) {
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            p[i] = i;
        }
        return p;
    }

    /** Fisher-Yates shuffle (Knuth, TAOCP vol. 2, algorithm P). */
    static void shuffle(int[] a, SplittableRandom rng) {
        for (int i = a.length - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int tmp = a[i];
            a[i] = a[j];
            a[j] = tmp;
        }
    }
}
