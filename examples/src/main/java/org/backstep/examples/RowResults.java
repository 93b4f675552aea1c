package org.backstep.examples;

import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.option.DriftOptions;
import org.backstep.option.MissingCells;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.Denoising;
import org.backstep.report.DriftReport;
import org.backstep.report.DriftTest;
import org.backstep.report.Imputation;
import org.backstep.table.Table;

import java.io.IOException;
import java.io.PrintStream;
import java.util.List;
import java.util.Locale;
import java.util.stream.IntStream;

/**
 * Step 8 of the main job: every result row by row in a file of the report folder
 * ({@link ResultFiles}): the input table completed, the synthetic rows of step 6, the scores of step
 * 3, the denoised readings when the noise of some columns is given, and the drift tests against a
 * second batch when one is given. Puts what it wrote under "files" (and "drift") in the summary.
 */
final class RowResults {

    /** The level of the intervals of completed.csv (the demo's imputation step uses the same). */
    static final double LEVEL = 0.9;

    private RowResults() {
    }

    /**
     * @param model the fitted model
     * @param table the input table
     * @param lines per row of the table, the line of its file it starts on (the input file, or table.csv)
     * @param held its held-out rows (the reference batch of the drift tests)
     * @param screen the screen of step 3
     * @param samples the synthetic rows of step 6
     */
    static void write(DiffusionModel model, Table table, long[] lines, Table held, AnomalyScreen screen, Table samples, MainJob.Config c,
                      PrintStream console, ObjectNode summary) throws IOException {
        ObjectNode files = summary.putObject("files");
        console.printf(Locale.ROOT, "8. Results row by row, in %s (column '%s': the row's line in %s, the header being line 1):%n",
                c.out(), ResultFiles.LINE, c.lines() == null ? "table.csv" : "the input file");

        int[] incomplete = table.incompleteRowIndices();
        Imputation imputation = incomplete.length == 0 ? null : model.impute(table.selectRows(incomplete),
                Defaults.imputation().withDraws(MainJob.IMPUTATION_DRAWS).withLevel(LEVEL), c.seed());
        ResultFiles.Completed completed = ResultFiles.completed(c.out(), table, lines, incomplete, imputation, LEVEL);
        files.put("completedRows", completed.rows());
        files.put("completedRowsWithGaps", incomplete.length);
        files.put("imputedCells", completed.imputedCells());
        console.printf(Locale.ROOT, "   %s: the %d rows, the %d missing cells of %d rows filled by the imputation's mean (binary: "
                        + "the most likely value; categorical: the label most frequent among the draws; integer: the median draw) with %.0f%% intervals of %d draws%n", ResultFiles.COMPLETED, completed.rows(),
                completed.imputedCells(), incomplete.length, 100 * LEVEL, MainJob.IMPUTATION_DRAWS);

        ResultFiles.synthetic(c.out(), samples);
        files.put("syntheticRows", samples.rows());
        console.printf(Locale.ROOT, "   %s: the %d synthetic rows of step 6, in the table's units%n", ResultFiles.SYNTHETIC, samples.rows());

        int[] screened = screenedRows(table, screen);
        int withFigures = ResultFiles.scores(c.out(), screen, screened, lines);
        files.put("scoredRows", screened.length);
        files.put("scoredRowsWithSurprisal", withFigures);
        console.printf(Locale.ROOT, "   %s: the %d screened rows' scores and flags; the three most surprising columns of the %d "
                + "flagged rows%n", ResultFiles.SCORES, screened.length, withFigures);

        if (!c.noise().isEmpty()) {
            int[] rows = table.completeRowIndices();
            if (rows.length == 0) {
                console.printf(Locale.ROOT, "   %s not written: no row is complete, and denoising needs every cell%n", ResultFiles.DENOISED);
            } else {
                Denoising d = model.denoise(table.selectRows(rows),
                        Defaults.denoising(ResultFiles.noiseOfEveryColumn(table, c.noise())), c.seed());
                ResultFiles.denoised(c.out(), table, lines, rows, d, c.noise());
                files.put("denoisedRows", rows.length);
                console.printf(Locale.ROOT, "   %s: %s of the %d complete rows denoised (%d draws each, the chain from step %d)%n",
                        ResultFiles.DENOISED, String.join(", ", c.noise().keySet()), rows.length, d.draws(), d.step());
            }
        }

        if (c.compare() != null) {
            drift(model, held, c, console, summary, files);
        }
    }

    /** The rows of the input table the screen scored: all of them, or its complete rows. */
    static int[] screenedRows(Table table, AnomalyScreen screen) {
        int n = screen.scores().length;
        if (n == table.rows()) {
            return IntStream.range(0, n).toArray();
        }
        int[] complete = table.completeRowIndices();
        if (n != complete.length) {
            throw new IllegalStateException("the screen scored " + n + " rows; the table has " + table.rows() + " rows, "
                    + complete.length + " of them complete");
        }
        return complete;
    }

    private static void drift(DiffusionModel model, Table held, MainJob.Config c, PrintStream console, ObjectNode summary,
                              ObjectNode files) throws IOException {
        Table batch = c.compare();
        DriftOptions how = Defaults.drift();
        if (held.hasMissing() || batch.hasMissing()) {
            how = how.withMissing(MissingCells.impute(Defaults.imputation().withDraws(MainJob.IMPUTATION_DRAWS)));
        }
        DriftReport report = model.drift(held, batch, how, c.seed());
        ResultFiles.drift(c.out(), report);
        files.put("driftTests", report.tests().size());
        boolean drifted = report.drifted(ResultFiles.DRIFT_LEVEL);
        List<DriftTest> ranked = report.rankedColumns();
        ObjectNode d = summary.putObject("drift");
        d.put("batch", c.compareName());
        d.put("batchRows", report.batchRows());
        d.put("referenceRows", report.referenceRows());
        d.put("level", ResultFiles.DRIFT_LEVEL);
        d.put("drifted", drifted);
        d.put("scorePValue", report.score().pValue());
        d.put("scoreAdjustedPValue", report.score().adjustedPValue());
        if (!ranked.isEmpty()) {
            d.put("firstColumn", ranked.get(0).subject());
            d.put("firstColumnAdjustedPValue", ranked.get(0).adjustedPValue());
        }
        d.put("rejectedTests", (int) report.tests().stream().filter(t -> t.rejects(ResultFiles.DRIFT_LEVEL)).count());
        console.printf(Locale.ROOT, "   %s: %s (%d rows) against the %d held-out rows: %s at the %.0f%% level (Holm-adjusted, %d tests); "
                        + "scores p = %.3g (adjusted %.3g)%s%n", ResultFiles.DRIFT, c.compareName(), report.batchRows(),
                report.referenceRows(), drifted ? "DRIFT" : "no drift found", 100 * ResultFiles.DRIFT_LEVEL, report.tests().size(),
                report.score().pValue(), report.score().adjustedPValue(), ranked.isEmpty() ? "" : String.format(Locale.ROOT,
                        "; first column '%s', adjusted p = %.3g", ranked.get(0).subject(), ranked.get(0).adjustedPValue()));
    }
}
