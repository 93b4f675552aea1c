package org.backstep.examples;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.training.EpochRecord;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * The self-contained HTML page of the report folder, written for a practitioner who has not read
 * the source: every figure of summary.json with a label, its unit, the rows it was measured on and,
 * beside the main ones, what a good value looks like; cautions where a baseline beats the model or
 * a figure is weak; the time each stage took; the charts inline, each in the section it belongs to;
 * the training history as a chart and a short table; the provenance, wrapped.
 */
final class Report {

    /** Keys of the charts the main job hands over (PNG, base64). */
    static final String SCHEDULES = "schedules";
    static final String HISTORY = "history";
    static final String BOUND_TERMS = "boundTerms";
    static final String SCORES = "scores";
    static final String ROC = "roc";
    static final String SAMPLES = "samples";
    static final String STEP_PLAN = "stepPlan";
    /** The training-history table shows about this many rows: the first, every Nth and the last. */
    static final int HISTORY_ROWS = 12;
    /** A synthetic-row share closer to training rows than this (the held-out rows' own is 1%) gets a caution. */
    static final double MEMORIZATION_CAUTION = 0.05;
    /** Coverage this far below a perfect model's gets a caution (common practice, no source). */
    static final double COVERAGE_SHORTFALL = 0.10;
    /** Below this p-value the energy test tells synthetic rows from held-out rows (the usual 5% level). */
    static final double SIGNIFICANCE = 0.05;

    private static final String STYLE = "body{font-family:sans-serif;max-width:960px;margin:2em auto;padding:0 1em;color:#1F2933;"
            + "line-height:1.45}table{border-collapse:collapse;margin:0.8em 0}td,th{border:1px solid #D9D9CF;padding:3px 8px;"
            + "text-align:right;vertical-align:top}th{background:#F7F7F2}td.l,th.l{text-align:left}td.good{text-align:left;"
            + "color:#4A5568;font-style:italic}img{max-width:100%}.caution{background:#FFF6E0;border-left:4px solid #E0A030;"
            + "padding:0.4em 1em;margin:0.8em 0}.note{color:#4A5568}figure{margin:1em 0}figcaption{color:#4A5568}"
            + "pre{white-space:pre-wrap;overflow-wrap:anywhere;background:#F7F7F2;padding:0.8em;font-size:0.85em}"
            + "table.figures{width:100%}table.figures td:nth-child(1){width:26%}table.figures td:nth-child(3){width:30%}"
            + "table.figures td:nth-child(4){width:24%}td.v{white-space:nowrap}";

    private Report() {
    }

    /** One line of a figures table. */
    private record Figure(String label, String value, String rows, String good) {
    }

    static String html(ObjectNode s, Map<String, String> charts, DiffusionModel model) {
        JsonNode data = s.path("data");
        JsonNode training = s.path("training");
        JsonNode bound = s.path("heldOutBound");
        JsonNode anomalies = s.path("anomalies");
        JsonNode imputation = s.path("imputation");
        JsonNode denoising = s.path("denoising");
        JsonNode samples = s.path("samples");
        JsonNode planner = s.path("planner");
        StringBuilder h = new StringBuilder();
        h.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>Backstep report</title>\n<style>")
                .append(STYLE).append("</style></head><body>\n<h1>Backstep report</h1>\n");
        h.append(p(String.format(Locale.ROOT, "A diffusion model with T = %d steps fitted to a table of %d rows and %d columns, "
                + "judged on %d held-out rows it never trained on. Fitted %s UTC; the whole job took %.0f s.", training.path("trainSteps").asInt(),
                data.path("rows").asInt(), data.path("columns").asInt(), data.path("heldOutRows").asInt(),
                model.provenance().fittedAt().replaceFirst("\\.\\d+Z$", "").replace('T', ' '), s.path("seconds").asDouble())));
        h.append("<div class=\"caution\"><p><b>Cautions.</b> Imputed, denoised and synthetic values are not measurements. ")
                .append("Synthetic rows can reproduce training rows: check the memorization figures below and local privacy law ")
                .append("before sharing them. A likelihood score ranks records; it is not a calibrated probability of a fault. ")
                .append("For safety-, health- or compliance-critical decisions, defer to local regulations and qualified review.</p></div>\n");
        List<String> cautions = cautions(bound, anomalies, imputation, denoising, samples);
        if (!cautions.isEmpty()) {
            h.append("<h2>Read this first</h2>\n");
            cautions.forEach(c -> h.append("<div class=\"caution\"><p>").append(c).append("</p></div>\n"));
        }

        h.append("<h2>The rows</h2>\n");
        int holdout = data.path("holdout").asInt();
        table(h, List.of(
                new Figure("Rows in the table", count(data, "rows"), "all", ""),
                new Figure("Columns", count(data, "columns") + " (" + count(data, "binaryColumns") + " binary, "
                        + count(data, "categoricalColumns") + " categorical, " + count(data, "integerColumns") + " integer)", "", ""),
                new Figure("Missing cells", count(data, "missingCells"), "all", ""),
                new Figure("Training part", count(data, "trainingPartRows") + " rows", "row index i with i % " + holdout + " != 0", ""),
                new Figure("Trained on", count(training, "trainedRows") + " rows", "training part, less the checkpoint rows and the"
                        + " rows not used", ""),
                new Figure("Trained on with missing cells filled", count(training, "trainedRowsWithGaps") + " rows ("
                        + count(training, "filledCells") + " cells)", "rows trained on that had a missing cell (of "
                        + count(training, "trainingPartRowsWithGaps") + " in the training part); see below", ""),
                new Figure("Checkpoint rows", count(training, "checkpointRows") + " rows",
                        "the trainer's own split of the training part, complete rows kept back to choose its weights", ""),
                new Figure("Not used", count(training, "rowsNotUsed") + " rows", escape(TrainingCounts.NOT_USED), ""),
                new Figure("Held-out rows", count(data, "heldOutRows") + " rows (" + count(data, "heldOutCompleteRows") + " complete)",
                        "row index i with i % " + holdout + " == 0; never trained on; the figures below are measured on them", "")));

        String gapNote = model.provenance().notes().stream().filter(n -> n.contains("training rows had a missing cell"))
                .findFirst().orElse("");
        String whitenedGaps = model.provenance().notes().stream().filter(n -> n.contains("miss a whitened cell"))
                .findFirst().orElse("");
        h.append(p(gapNote.isEmpty() ? "No row trained on had a missing cell." : "How the rows with a missing cell were used "
                + "(from the model's provenance): " + escape(gapNote) + ". A filled cell is an input of the network, never a "
                + "target of its loss, so a draw the model got wrong is not learned back as data (stochastic EM: Dempster, "
                + "Laird &amp; Rubin 1977; Celeux &amp; Diebolt 1985)"
                + (whitenedGaps.isEmpty() ? "." : "; but in the whitened coordinates a continuous cell mixes every continuous"
                + " column, so " + escape(whitenedGaps) + " (the Gaussian fitted by EM for data with missing values: Little"
                + " &amp; Rubin 2002, section 11.2.1).")));

        h.append("<h2>How well the model fits rows it never saw</h2>\n");
        int dims = bound.path("dimensions").asInt();
        String rows = count(bound, "rows") + " complete held-out rows";
        table(h, List.of(
                new Figure("Held-out bound", num(bound, "natsPerRecordModelSpace", 3) + " &plusmn; " + num(bound, "standardError", 3)
                        + " nats per record", rows + ", model space", "lower is better; below both baselines"),
                new Figure("One Gaussian (baseline)", num(bound, "oneGaussianNats", 3) + " nats per record", rows + ", model space",
                        "the model should come out lower"),
                new Figure("Gaussian mixture, " + count(bound, "mixtureComponents") + " components (baseline)",
                        num(bound, "mixtureNats", 3) + " nats per record", rows + ", model space", "the model should come out lower"),
                new Figure("Bits per dimension", num(bound, "bitsPerDimension", 4) + " bits", rows + ", " + dims + " columns",
                        "lower is better: the held-out bound / (" + dims + " ln 2)"),
                new Figure("Held-out bound in original units", num(bound, "natsPerRecordOriginalUnits", 3) + " nats per record",
                        rows + ", the table's own units", "compare only with figures in the same units")));
        h.append(p("The bound is an upper bound on the negative log-likelihood of a row under the model: the model's true "
                + "figure is at least this good. <i>Model space</i> is the table with each continuous column standardized by the "
                + "training rows' mean and standard deviation (or log-standardized). A negative value, such as "
                + num(bound, "bitsPerDimension", 3) + " bits per dimension, is not an error: on continuous columns the model gives "
                + "a <i>density</i>, not a probability, and a density is above 1 where rows crowd together, so its negative log "
                + "falls below 0. Compare bounds only on the same rows, in the same space. Binary columns are probabilities in "
                + "both spaces."));
        chart(h, charts, BOUND_TERMS, "How the bound splits over the diffusion steps: the mean term at each step t, on a log "
                + "scale; a term that is not above 0 (often the decoder term at t = 1) cannot be drawn there and is listed on the "
                + "chart instead.");

        h.append("<h2>Screening for unusual rows</h2>\n");
        List<Figure> screen = new ArrayList<>(List.of(
                new Figure("Rows screened", count(anomalies, "scoredRows"), "complete rows of the whole table", ""),
                new Figure("Threshold", num(anomalies, "threshold", 2) + " nats per record",
                        pct(anomalies.path("quantile").asDouble(), 0) + " quantile of the held-out rows' bounds", ""),
                new Figure("Rows flagged", count(anomalies, "flagged") + " (" + pct(anomalies.path("flagged").asDouble()
                        / Math.max(1, anomalies.path("scoredRows").asInt()), 1) + ")", "rows past the threshold",
                        "about " + pct(1 - anomalies.path("quantile").asDouble(), 0) + " of ordinary rows lie past it")));
        if (anomalies.has("precision")) {
            screen.add(new Figure("Injected fault rows", count(anomalies, "injectedFaultRows") + " ("
                    + pct(anomalies.path("faultBaseRate").asDouble(), 1) + ")", "screened rows; the model never saw the labels", ""));
            screen.add(new Figure("Precision", num(anomalies, "precision", 2), "flagged rows that are faults", "near 1"));
            screen.add(new Figure("Recall", num(anomalies, "recall", 2), "fault rows that are flagged", "near 1"));
        }
        table(h, screen);
        chart(h, charts, SCORES, "Each screened row's bound (higher is more unusual) and the threshold.");
        if (anomalies.has("detectors")) {
            comparison(h, anomalies);
            chart(h, charts, ROC, "The ROC curve of each screen against the injected faults: for every threshold, the share of "
                    + "normal rows flagged (across) and of fault rows flagged (up); the area under a curve is the chance that a "
                    + "fault row scores above a normal one (0.5 for a guess).");
        }
        if (anomalies.has("blame")) {
            JsonNode b = anomalies.path("blame");
            StringBuilder kinds = new StringBuilder();
            for (JsonNode k : b.path("byKind")) {
                kinds.append(kinds.length() == 0 ? "" : "; ").append(escape(k.path("kind").asText())).append(": ")
                        .append(k.path("injectedColumnFirst").asInt()).append(" of ").append(k.path("attributed").asInt());
            }
            h.append(p(String.format(Locale.ROOT, "<b>Columns to blame.</b> Of the %d fault rows the screen caught, the column the"
                            + " fault was injected into ranked first by surprisal, -log p(cell | the row's other cells), in %d (%s)%s.",
                    b.path("attributed").asInt(), b.path("injectedColumnFirst").asInt(),
                    pct(b.path("share").asDouble(), 0), kinds.length() == 0 ? "" : "; by kind, " + kinds)));
        }
        h.append(p("<b>What a screen of single rows can see.</b> " + escape(ScreenComparison.SINGLE_ROW_SENTENCE)));

        h.append("<h2>Filling in missing cells</h2>\n");
        table(h, List.of(
                new Figure("Cells imputed", count(imputation, "hiddenCells"), "one cell hidden on purpose in each of "
                        + count(imputation, "rows") + " complete held-out rows (truth known)", ""),
                new Figure("Error of the imputed mean", num(imputation, "rmseInColumnSd", 3) + " column sd (RMSE)", "the hidden cells",
                        "well below " + num(imputation, "rmseColumnMeanInColumnSd", 3) + ", the error of the column mean"),
                new Figure("Coverage of the " + pct(imputation.path("level").asDouble(), 0) + " intervals",
                        pct(imputation.path("coverage90").asDouble(), 1), "the hidden cells, " + count(imputation, "draws") + " draws each",
                        "near " + pct(imputation.path("coverage90OfPerfectModel").asDouble(), 1) + ", what a perfect model gives with "
                                + count(imputation, "draws") + " draws")));
        if (imputation.path("hiddenCategoryCells").asInt() > 0) {
            table(h, List.of(
                    new Figure("Categories hidden", count(imputation, "hiddenCategoryCells"), "one per row, in categorical columns", ""),
                    new Figure("Most likely category right", pct(imputation.path("categoryAccuracy").asDouble(), 1),
                            "the category most frequent among the draws", "above " + pct(imputation.path("categoryAccuracyMostFrequent")
                            .asDouble(), 1) + ", the training rows' most frequent category"),
                    new Figure("Share of the true category among the draws", num(imputation, "categoryTrueShare", 3),
                            "mean over the hidden categories", "high; 1 would be certain and right")));
        }

        h.append("<h2>Cleaning noisy readings</h2>\n");
        table(h, List.of(
                new Figure("Readings denoised", count(denoising, "cells"), count(denoising, "rows")
                        + " complete held-out rows x their continuous columns; noise added on purpose"
                        + (denoising.has("noiseShareOfColumnSd") ? ", " + pct(denoising.path("noiseShareOfColumnSd").asDouble(), 0)
                        + " of each column's sd" : ""), ""),
                new Figure("Error before", num(denoising, "rmseBeforeInNoiseSd", 3) + " noise sd (RMSE)", "the noisy readings",
                        "about 1: the noise as added"),
                new Figure("Error after", num(denoising, "rmseAfterInNoiseSd", 3) + " noise sd (RMSE)", "the denoised readings",
                        "below the error before")));

        h.append("<h2>Synthetic rows</h2>\n");
        table(h, List.of(
                new Figure("Rows drawn", count(samples, "count"), "compared with " + count(samples, "heldOutRows") + " complete held-out rows", ""),
                new Figure("Energy distance", num(samples, "energyDistance", 4), "model space", "near 0"),
                new Figure("Energy test p-value", num(samples, "energyPValue", 3), "permutation test",
                        "above 0.05: the test cannot tell synthetic from held-out rows"),
                new Figure("Largest Kolmogorov-Smirnov statistic", num(samples, "maxKs", 3), "one column at a time (table below)",
                        "small; the column with the largest is modelled worst"),
                new Figure("Median distance to the closest training row", num(samples, "medianNearestTrainingDistanceSynthetic", 3)
                        + " synthetic, " + num(samples, "medianNearestTrainingDistanceHeldOut", 3) + " held-out", "model space; "
                        + count(samples, "trainingRowsCompared") + " training rows", "synthetic rows not much closer than held-out rows"),
                new Figure("Synthetic rows closer than the closest 1% of held-out rows",
                        pct(samples.path("shareCloserThanHeldOutFirstPercentile").asDouble(), 1), "distance to the closest training row",
                        "near 1%; far above, samples copy training rows")));
        StringBuilder cols = new StringBuilder("<table>\n<tr><th class=\"l\">column</th><th>mean, held-out</th><th>mean, synthetic</th>"
                + "<th>sd, held-out</th><th>sd, synthetic</th><th>Kolmogorov-Smirnov</th></tr>\n");
        for (JsonNode c : samples.path("columns")) {
            cols.append("<tr><td class=\"l\">").append(escape(c.path("column").asText())).append("</td><td>").append(num(c, "meanData", 3))
                    .append("</td><td>").append(num(c, "meanSynthetic", 3)).append("</td><td>").append(num(c, "sdData", 3))
                    .append("</td><td>").append(num(c, "sdSynthetic", 3)).append("</td><td>").append(num(c, "ks", 3)).append("</td></tr>\n");
        }
        h.append(cols).append("</table>\n");
        if (samples.has("categories")) {
            StringBuilder cats = new StringBuilder("<table>\n<tr><th class=\"l\">column</th><th class=\"l\">category</th>"
                    + "<th>share, held-out</th><th>share, synthetic</th></tr>\n");
            for (JsonNode c : samples.path("categories")) {
                cats.append("<tr><td class=\"l\">").append(escape(c.path("column").asText())).append("</td><td class=\"l\">")
                        .append(escape(c.path("category").asText())).append("</td><td>").append(num(c, "shareData", 3))
                        .append("</td><td>").append(num(c, "shareSynthetic", 3)).append("</td></tr>\n");
            }
            h.append(p("Categorical columns have no mean or sd: the share of each category, held-out rows beside synthetic"
                    + " ones (every synthetic cell is one of the column's labels)."));
            h.append(cats).append("</table>\n");
        }
        chart(h, charts, SAMPLES, "Two continuous columns of the synthetic rows over the held-out rows, in the table's units.");

        h.append("<h2>Sampling step count</h2>\n");
        h.append(p("Recommended: <b>" + planner.path("recommended").asInt() + " steps</b>. " + escape(planner.path("reason").asText())));
        StringBuilder plan = new StringBuilder("<table>\n<tr><th>steps K</th><th>held-out bound, nats per dimension</th>"
                + "<th>energy distance</th><th>p-value</th><th>largest Kolmogorov-Smirnov</th><th>ms per 1,000 samples</th></tr>\n");
        for (JsonNode r : planner.path("stepCounts")) {
            boolean pick = r.path("steps").asInt() == planner.path("recommended").asInt();
            plan.append("<tr><td>").append(pick ? "<b>" + r.path("steps").asInt() + "</b>" : r.path("steps").asInt()).append("</td><td>")
                    .append(num(r, "boundNatsPerDimension", 4)).append("</td><td>").append(num(r, "energyDistance", 4)).append("</td><td>")
                    .append(num(r, "energyPValue", 3)).append("</td><td>").append(num(r, "maxKs", 3)).append("</td><td>")
                    .append(num(r, "millisPer1000", 1)).append("</td></tr>\n");
        }
        h.append(plan).append("</table>\n");
        h.append(p("On " + count(planner, "rows") + " complete held-out rows. The planner strides the training chain to K steps, "
                + "and recommends the smallest K whose bound lies within " + num(planner, "tolerance", 3)
                + " nats per dimension of the best. Lower bounds are better; cost grows with K."));
        chart(h, charts, STEP_PLAN, "Quality against cost, one point per step count K.");

        if (s.has("drift")) {
            drift(h, s.path("drift"));
        }
        files(h, s.path("files"), s.has("drift"));

        h.append("<h2>Training</h2>\n");
        h.append(p(String.format(Locale.ROOT, "%d epochs in %.1f s on %d rows. The checkpoint rows' bound is measured now and then "
                        + "during training; the weights with the best one are kept.", training.path("epochs").asInt(),
                training.path("seconds").asDouble(), training.path("trainedRows").asInt())));
        chart(h, charts, HISTORY, "Training loss per epoch (faint), its running mean, and the checkpoint rows' bound.");
        history(h, model.history());
        chart(h, charts, SCHEDULES, "The noise schedules: how much of the signal is left (alpha-bar) at each step t.");

        h.append("<h2>Time each stage took</h2>\n<table>\n<tr><th class=\"l\">stage</th><th>seconds</th><th>share</th></tr>\n");
        double total = s.path("seconds").asDouble();
        s.path("stageSeconds").fields().forEachRemaining(e -> h.append("<tr><td class=\"l\">").append(stageName(e.getKey()))
                .append("</td><td>").append(String.format(Locale.ROOT, "%.1f", e.getValue().asDouble())).append("</td><td>")
                .append(pct(e.getValue().asDouble() / total, 0)).append("</td></tr>\n"));
        h.append(String.format(Locale.ROOT, "<tr><td class=\"l\"><b>in all</b></td><td><b>%.1f</b></td><td></td></tr>\n</table>\n", total));

        h.append("<h2>Provenance</h2>\n<pre>").append(escape(withoutHistory(model.describeText()))).append("</pre>\n");
        h.append("</body></html>\n");
        return h.toString();
    }

    /** The drift section: the batch of --compare against the held-out rows. */
    private static void drift(StringBuilder h, JsonNode d) {
        h.append("<h2>Drift: a new batch against the held-out rows</h2>\n");
        boolean drifted = d.path("drifted").asBoolean();
        String level = pct(d.path("level").asDouble(), 0);
        List<Figure> f = new ArrayList<>(List.of(
                new Figure("Batch", escape(d.path("batch").asText()) + ", " + count(d, "batchRows") + " rows",
                        "compared with the " + count(d, "referenceRows") + " held-out rows", ""),
                new Figure("Verdict", drifted ? "<b>the batch differs</b>" : "no difference found", count(d, "rejectedTests")
                        + " of the tests reject at " + level + " after Holm's adjustment", "no test rejects, for a batch like the reference"),
                new Figure("Scores, Kolmogorov-Smirnov p-value", num(d, "scorePValue", 3) + " (adjusted " + num(d, "scoreAdjustedPValue", 3)
                        + ")", "the two batches' scores", "above " + level)));
        if (d.has("firstColumn")) {
            f.add(new Figure("Column that differs most", escape(d.path("firstColumn").asText()) + ", adjusted p "
                    + num(d, "firstColumnAdjustedPValue", 3), "Kolmogorov-Smirnov (continuous) or chi-squared (binary)",
                    "above " + level));
        }
        table(h, f);
        h.append(p("Every test, with its statistic and p-values, is in " + ResultFiles.DRIFT + ". The p-values are adjusted "
                + "together for their number (Holm 1979), so the chance that any of them rejects for a batch like the "
                + "reference is at most " + level + ". A drift says the batches differ, not that the new one is faulty: a "
                + "new season or a new fleet differs too."));
    }

    /** The files of the folder written row by row, with their row counts. */
    private static void files(StringBuilder h, JsonNode f, boolean drift) {
        h.append("<h2>Results row by row</h2>\n");
        h.append(p("Each result is a CSV file beside this page; the column <code>" + ResultFiles.LINE + "</code> is the row's "
                + "line in the input file (the header is line 1). The README lists every column."));
        StringBuilder t = new StringBuilder("<table>\n<tr><th class=\"l\">file</th><th>rows</th><th class=\"l\">what it holds</th></tr>\n");
        fileRow(t, ResultFiles.COMPLETED, count(f, "completedRows"), "the table with its " + count(f, "imputedCells")
                + " missing cells (in " + count(f, "completedRowsWithGaps") + " rows) filled by the imputation's mean, the most "
                + "likely value for binary cells, with intervals");
        fileRow(t, ResultFiles.SYNTHETIC, count(f, "syntheticRows"), "synthetic rows, in the table's units");
        fileRow(t, ResultFiles.SCORES, count(f, "scoredRows"), "each screened row's score and flag; the three most "
                + "surprising columns of the " + count(f, "scoredRowsWithSurprisal") + " flagged rows");
        if (f.has("denoisedRows")) {
            fileRow(t, ResultFiles.DENOISED, count(f, "denoisedRows"), "the columns given with --noise, denoised");
        }
        if (drift) {
            fileRow(t, ResultFiles.DRIFT, count(f, "driftTests"), "the drift tests, one per column and one on the scores");
        }
        h.append(t).append("</table>\n");
    }

    private static void fileRow(StringBuilder t, String file, String rows, String what) {
        t.append("<tr><td class=\"l\">").append(file).append("</td><td>").append(rows).append("</td><td class=\"l\">")
                .append(what).append("</td></tr>\n");
    }

    /** The screens side by side: flagged rows, precision, recall, area under the ROC curve, recall per fault kind. */
    private static void comparison(StringBuilder h, JsonNode anomalies) {
        JsonNode first = anomalies.path("detectors").path(0);
        h.append(p("The same screen by classical detectors, each fitted on the same complete rows of the training part (model "
                + "space) and flagging the rows past the same " + pct(anomalies.path("quantile").asDouble(), 0)
                + " quantile of its own held-out scores. The range check looks at each column alone; the others at whole rows. "
                + "Per fault kind: the recall at that threshold, and the area under the ROC curve of that kind's rows against the "
                + "normal rows (the chance that such a fault row scores above a normal one), which shows what a screen ranks "
                + "high even where the threshold, set by the rarest normal rows, lets it pass."));
        h.append("<table>\n<tr><th class=\"l\">detector</th><th>flagged</th><th>precision</th><th>recall</th><th>area under ROC</th>");
        for (JsonNode k : first.path("byKind")) {
            h.append("<th>").append(escape(k.path("kind").asText().toLowerCase(Locale.ROOT).replace('_', ' ')))
                    .append(" (").append(k.path("rows").asInt()).append(" rows): recall / area</th>");
        }
        h.append("</tr>\n");
        for (JsonNode d : anomalies.path("detectors")) {
            h.append("<tr><td class=\"l\">").append(escape(d.path("detector").asText())).append("</td><td>")
                    .append(count(d, "flagged")).append("</td><td>").append(num(d, "precision", 2)).append("</td><td>")
                    .append(num(d, "recall", 2)).append("</td><td>").append(num(d, "auroc", 2)).append("</td>");
            for (JsonNode k : d.path("byKind")) {
                h.append("<td>").append(num(k, "recall", 2)).append(" / ").append(num(k, "auroc", 2)).append("</td>");
            }
            h.append("</tr>\n");
        }
        h.append("</table>\n");
    }

    /** Specific cautions: where a baseline beats the model, and figures that are weak. */
    static List<String> cautions(JsonNode bound, JsonNode anomalies, JsonNode imputation, JsonNode denoising, JsonNode samples) {
        List<String> c = new ArrayList<>();
        double model = bound.path("natsPerRecordModelSpace").asDouble();
        double mixture = bound.path("mixtureNats").asDouble();
        double gauss = bound.path("oneGaussianNats").asDouble();
        if (mixture < model || gauss < model) {
            boolean both = mixture < model && gauss < model;
            c.add(String.format(Locale.ROOT, "<b>A simpler model fits better.</b> On the held-out rows, %s (%.3f nats per record) "
                            + "than the diffusion model's bound (%.3f). At this training budget the table is described better by %s; "
                            + "train longer or on more rows, and prefer %s for scoring until the model catches up.",
                    both ? "both baselines score lower" : (mixture < model ? "the Gaussian mixture scores lower" : "one Gaussian scores lower"),
                    Math.min(mixture, gauss), model, both || mixture < model ? "a Gaussian mixture" : "one Gaussian",
                    both || mixture < model ? "the mixture" : "it"));
        }
        if (anomalies.has("recall") && anomalies.path("injectedFaultRows").asInt() > 0 && anomalies.path("recall").asDouble() < 0.5) {
            c.add(String.format(Locale.ROOT, "<b>The screen misses most injected faults</b> (recall %.2f): these faults do not make "
                    + "rows unusual enough under this model at a %s threshold.", anomalies.path("recall").asDouble(),
                    pct(anomalies.path("quantile").asDouble(), 0)));
        }
        double coverage = imputation.path("coverage90").asDouble();
        double perfect = imputation.path("coverage90OfPerfectModel").asDouble();
        if (coverage < perfect - COVERAGE_SHORTFALL) {
            c.add(String.format(Locale.ROOT, "<b>Imputation intervals are too narrow:</b> they cover %s of the hidden truths, against %s "
                    + "for a perfect model; treat them as too confident.", pct(coverage, 1), pct(perfect, 1)));
        }
        if (denoising.path("cells").asInt() > 0
                && denoising.path("rmseAfterInNoiseSd").asDouble() >= denoising.path("rmseBeforeInNoiseSd").asDouble()) {
            c.add("<b>Denoising did not help:</b> the readings are no closer to the truth after it than before.");
        }
        if (samples.path("energyPValue").asDouble() < SIGNIFICANCE) {
            c.add(String.format(Locale.ROOT, "<b>Synthetic rows differ detectably from real ones</b> (energy test p = %.3f).",
                    samples.path("energyPValue").asDouble()));
        }
        if (samples.path("shareCloserThanHeldOutFirstPercentile").asDouble() > MEMORIZATION_CAUTION) {
            c.add(String.format(Locale.ROOT, "<b>Synthetic rows may copy training rows:</b> %s of them lie closer to a training row "
                    + "than all but 1%% of held-out rows do.", pct(samples.path("shareCloserThanHeldOutFirstPercentile").asDouble(), 1)));
        }
        return c;
    }

    /**
     * The history as a short table: the first epoch, every Nth epoch at which the checkpoint rows'
     * bound was measured (every Nth epoch when it never was), and the last; each row with the mean
     * training loss over the epochs since the row above, which is steadier than one epoch's.
     */
    private static void history(StringBuilder h, List<EpochRecord> history) {
        List<Integer> marks = new ArrayList<>();
        for (int i = 0; i < history.size(); i++) {
            if (history.get(i).checkpointBound().isPresent()) {
                marks.add(i);
            }
        }
        boolean byBound = marks.size() >= 2;
        if (!byBound) {
            marks.clear();
            for (int i = 0; i < history.size(); i++) {
                marks.add(i);
            }
        }
        int every = Math.max(1, (int) Math.ceil(marks.size() / (double) HISTORY_ROWS));
        java.util.TreeSet<Integer> shown = new java.util.TreeSet<>();
        shown.add(0);
        for (int k = every - 1; k < marks.size(); k += every) {
            shown.add(marks.get(k));
        }
        shown.add(history.size() - 1);
        h.append("<table>\n<tr><th>epoch</th><th>training loss, mean since the row above</th>"
                + "<th>checkpoint rows' bound, nats per record</th><th>seconds</th></tr>\n");
        int from = 0;
        for (int i : shown) {
            double sum = 0;
            for (int k = from; k <= i; k++) {
                sum += history.get(k).loss();
            }
            EpochRecord r = history.get(i);
            h.append(String.format(Locale.ROOT, "<tr><td>%d</td><td>%.4f</td><td>%s</td><td>%.1f</td></tr>%n", r.epoch(),
                    sum / (i - from + 1), r.checkpointBound().isPresent()
                            ? String.format(Locale.ROOT, "%.4f", r.checkpointBound().getAsDouble()) : "", r.seconds()));
            from = i + 1;
        }
        h.append("</table>\n");
        String which = byBound ? (every == 1 ? "every measurement" : "every " + ordinal(every) + " measurement")
                + " of the checkpoint rows' bound" : every == 1 ? "every epoch" : "every " + ordinal(every) + " epoch";
        h.append(p("The first epoch, " + which + ", and the last, of " + history.size() + " epochs; model.backstep keeps them all."));
    }

    private static String ordinal(int n) {
        String suffix = (n % 100 >= 11 && n % 100 <= 13) ? "th" : switch (n % 10) {
            case 1 -> "st";
            case 2 -> "nd";
            case 3 -> "rd";
            default -> "th";
        };
        return n + suffix;
    }

    /** The model's description without its per-epoch history (shown above as a chart and a short table). */
    static String withoutHistory(String describe) {
        StringBuilder out = new StringBuilder();
        boolean skipping = false;
        for (String line : describe.split("\n", -1)) {
            if (line.strip().startsWith("history (")) {
                skipping = true;
                out.append(line.replaceFirst("history \\(.*", "history: see \"Training\" above")).append('\n');
                continue;
            }
            if (skipping && line.strip().matches("\\d+\\s.*")) {
                continue;
            }
            skipping = false;
            out.append(line).append('\n');
        }
        return out.toString().stripTrailing();
    }

    private static String stageName(String key) {
        return switch (key) {
            case "fit" -> "reading the table and fitting the model";
            case "bound" -> "held-out bound and baselines";
            case "screen" -> "screening";
            case "imputation" -> "imputation";
            case "denoising" -> "denoising";
            case "samples" -> "synthetic rows and their checks";
            case "planner" -> "sampling step-count planner";
            case "files" -> "results row by row in files (imputing the table's own gaps, denoising, drift)";
            case "report" -> "saving the model";
            default -> escape(key);
        };
    }

    private static void table(StringBuilder h, List<Figure> figures) {
        boolean good = figures.stream().anyMatch(f -> !f.good().isEmpty());
        h.append("<table class=\"figures\">\n<tr><th class=\"l\">figure</th><th>value</th><th class=\"l\">rows</th>")
                .append(good ? "<th class=\"l\">what good looks like</th>" : "").append("</tr>\n");
        for (Figure f : figures) {
            h.append("<tr><td class=\"l\">").append(f.label()).append("</td><td class=\"v\">").append(f.value())
                    .append("</td><td class=\"l\">").append(f.rows()).append("</td>")
                    .append(good ? "<td class=\"good\">" + f.good() + "</td>" : "").append("</tr>\n");
        }
        h.append("</table>\n");
    }

    private static void chart(StringBuilder h, Map<String, String> charts, String key, String caption) {
        String png = charts.get(key);
        if (png != null) {
            h.append("<figure><img alt=\"").append(escape(caption)).append("\" src=\"data:image/png;base64,").append(png)
                    .append("\"><figcaption>").append(escape(caption)).append("</figcaption></figure>\n");
        }
    }

    private static String p(String html) {
        return "<p>" + html + "</p>\n";
    }

    private static String count(JsonNode node, String field) {
        return String.format(Locale.ROOT, "%,d", node.path(field).asLong());
    }

    private static String num(JsonNode node, String field, int digits) {
        return String.format(Locale.ROOT, "%." + digits + "f", node.path(field).asDouble());
    }

    private static String pct(double share, int digits) {
        return String.format(Locale.ROOT, "%." + digits + "f%%", 100 * share);
    }

    static String escape(String s) {
        return s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace("\"", "&quot;");
    }
}
