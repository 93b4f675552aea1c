package org.backstep.examples;

import org.backstep.Defaults;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import me.tongfei.progressbar.ProgressBar;
import me.tongfei.progressbar.ProgressBarBuilder;
import me.tongfei.progressbar.ProgressBarStyle;
import me.tongfei.progressbar.ConsoleProgressBarConsumer;
import org.backstep.report.AnomalyScreen;
import org.backstep.Backstep;
import org.backstep.report.BoundReport;
import org.backstep.report.Denoising;
import org.backstep.DiffusionModel;
import org.backstep.report.Imputation;
import org.backstep.report.StepPlan;
import org.backstep.io.AtomicFiles;
import org.backstep.plot.Charts;
import org.backstep.table.ColumnKind;
import org.backstep.table.CsvReader;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;
import org.knowm.xchart.XYChart;

import java.io.IOException;
import java.io.OutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * The main job, end to end, on one table: fit with a held-out split, report the bound beside two
 * classical baselines, screen records, impute, denoise, sample with a memorization check, plan the
 * step count, write every result row by row ({@link RowResults}: the table completed, the synthetic
 * rows, the scores, and when asked the denoised readings and the drift tests), and write a report
 * folder (HTML page, summary.json, the model file).
 *
 * <p>Steps that need injected truth (fault labels, the cells before blanking) use it when given
 * and otherwise report what they can.
 */
public final class MainJob {

    /**
     * What the job runs on and how.
     *
     * @param table the table (NaN for missing cells)
     * @param truth the same table before cells were blanked, or null
     * @param faults per row, whether a fault was injected, or null
     * @param out the report folder
     * @param trainSteps T, the diffusion steps of the training chain
     * @param epochs epochs, 0 for the library default
     * @param hidden hidden widths
     * @param seed the seed
     * @param holdout row i is held out when i % holdout == 0
     * @param sampleSteps the step counts K the step-count planner compares; empty for its default
     * @param tolerance the step-count planner's tolerance, nats per dimension
     * @param noiseSd per column, the sensor noise to add and remove in the denoising step (original units), or null for 25% of each column's sd
     * @param lines per row, the 1-based line of the input file it starts on (header line 1), or null for
     *     the table.csv the job writes (the lines its CSV round trip reads back)
     * @param noise the sensor noise of some continuous columns given by the user (original units), in
     *     the order given: their readings are denoised into denoised.csv; empty for none
     * @param compare a new batch with the table's columns to test for drift against the held-out rows, or null
     * @param compareName the batch's file name, for the console and the report (null without a batch)
     * @param faultKinds per row, the kind of the injected fault ("NONE" outside faults), or null
     * @param faultColumns per row, the column the fault was injected into (null outside faults), or null
     */
    public record Config(Table table, Table truth, boolean[] faults, Path out, int trainSteps, int epochs, int[] hidden,
                         long seed, int holdout, int[] sampleSteps, double tolerance, double[] noiseSd, long[] lines,
                         Map<String, Double> noise, Table compare, String compareName,
                         String[] faultKinds, String[] faultColumns) {

        /** Copies the noise map (null: none). */
        public Config {
            noise = noise == null ? Map.of() : java.util.Collections.unmodifiableMap(new LinkedHashMap<>(noise));
        }

        /** Without per-row files' options and fault kinds: no given noise, no batch to compare, the lines of table.csv. */
        public Config(Table table, Table truth, boolean[] faults, Path out, int trainSteps, int epochs, int[] hidden,
                      long seed, int holdout, int[] sampleSteps, double tolerance, double[] noiseSd) {
            this(table, truth, faults, out, trainSteps, epochs, hidden, seed, holdout, sampleSteps, tolerance, noiseSd,
                    null, Map.of(), null, null, null, null);
        }

        /** The same, with the kind of each row's injected fault and the column it was injected into. */
        Config withFaultKinds(String[] kinds, String[] columns) {
            return new Config(table, truth, faults, out, trainSteps, epochs, hidden, seed, holdout, sampleSteps, tolerance, noiseSd,
                    lines, noise, compare, compareName, kinds, columns);
        }

        /** The configuration a command line gives, on a table without injected truth. */
        static Config of(Table table, Settings s) {
            return new Config(table, null, null, s.out, s.trainSteps, s.epochs, s.hidden, s.seed, s.holdout, s.sampleSteps,
                    s.tolerance, null, null, s.noise, null, null, null, null);
        }

        /** The same, with the table before cells were blanked and the rows with an injected fault. */
        Config withTruth(Table truth, boolean[] faults) {
            return new Config(table, truth, faults, out, trainSteps, epochs, hidden, seed, holdout, sampleSteps, tolerance, noiseSd,
                    lines, noise, compare, compareName, faultKinds, faultColumns);
        }

        /** The same, with each row's line in the input file. */
        Config withLines(long[] lines) {
            return new Config(table, truth, faults, out, trainSteps, epochs, hidden, seed, holdout, sampleSteps, tolerance, noiseSd,
                    lines, noise, compare, compareName, faultKinds, faultColumns);
        }

        /** The same, with a batch to compare for drift. */
        Config withCompare(Table batch, String name) {
            return new Config(table, truth, faults, out, trainSteps, epochs, hidden, seed, holdout, sampleSteps, tolerance, noiseSd,
                    lines, noise, batch, name, faultKinds, faultColumns);
        }
    }

    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);
    /** Rows used per imputation, denoising and quality step, at most, to keep the demo within minutes. */
    static final int STEP_ROWS = 600;
    /** Draws per imputed cell; the 90% interval is read off their 5% and 95% quantiles. */
    static final int IMPUTATION_DRAWS = 20;
    /** The screen flags rows whose bound lies past this quantile of the held-out rows' bounds. */
    static final double SCREEN_QUANTILE = 0.99;
    /** Without a given noise level, the denoising step adds noise of this share of each column's sd. */
    static final double DEFAULT_NOISE_SHARE = 0.25;

    private MainJob() {
    }

    /**
     * Runs steps 1-9.
     *
     * @param c the configuration
     * @param console where to print the figures
     * @param showProgress whether to draw a progress bar on standard error
     * @return the summary that was written to summary.json
     * @throws IOException if the report folder cannot be written
     * @throws TableFormatException if the CSV round trip fails
     */
    public static ObjectNode run(Config c, PrintStream console, boolean showProgress) throws IOException, TableFormatException {
        Files.createDirectories(c.out());
        ObjectNode summary = JSON.createObjectNode();
        ObjectNode stages = JSON.createObjectNode();
        Map<String, String> charts = new LinkedHashMap<>();
        long started = System.nanoTime();
        long mark = started;

        // 1. CSV round trip, the user's split and the fit
        Path csv = c.out().resolve("table.csv");
        CsvTables.writer().write(c.table(), csv);
        List<String> binary = namesOf(c.table(), ColumnKind.BINARY);
        List<String> categorical = namesOf(c.table(), ColumnKind.CATEGORICAL);
        List<String> integer = namesOf(c.table(), ColumnKind.INTEGER);
        List<String> continuous = namesOf(c.table(), ColumnKind.CONTINUOUS);
        CsvReader.TableWithLines readBack = CsvTables.reader().binary(binary.toArray(String[]::new))
                .categorical(categorical.toArray(String[]::new)).integer(integer.toArray(String[]::new))
                .continuous(continuous.toArray(String[]::new)).readWithLines(csv);
        Table table = readBack.table();
        for (String name : categorical) {
            // the file keeps labels, not their order: the labels are put back in the table's order
            table = table.recode(name, c.table().categories(c.table().indexOf(name)));
        }
        if (!table.equals(c.table())) {
            throw new IllegalStateException("the CSV round trip changed the table");
        }
        Table train = table.filterRows(i -> i % c.holdout() != 0);
        Table held = table.filterRows(i -> i % c.holdout() == 0);
        Table heldComplete = held.completeRows();
        Table trainComplete = train.completeRows();
        console.printf(Locale.ROOT, "1. Table: %d rows x %d columns (%d binary, %d categorical, %d integer), %d missing cells; %d rows"
                        + " in the training part, %d held-out rows (row %% %d == 0, never trained on)%n",
                table.rows(), table.columns(), binary.size(), categorical.size(), integer.size(), table.missingCount(), train.rows(),
                held.rows(), c.holdout());
        ObjectNode data = summary.putObject("data");
        data.put("rows", table.rows());
        data.put("columns", table.columns());
        data.put("binaryColumns", binary.size());
        data.put("categoricalColumns", categorical.size());
        data.put("integerColumns", integer.size());
        data.put("missingCells", table.missingCount());
        data.put("holdout", c.holdout());
        data.put("trainingPartRows", train.rows());
        data.put("heldOutRows", held.rows());
        data.put("heldOutCompleteRows", heldComplete.rows());
        ProgressBar bar = showProgress ? new ProgressBarBuilder().setTaskName("Training").setInitialMax(1)
                .setStyle(ProgressBarStyle.ASCII).setConsumer(new ConsoleProgressBarConsumer(System.err))
                .setUpdateIntervalMillis(250).build() : null;
        // standardized coordinates without a closed-form part, not the library's default whitened ones: step 5
        // denoises readings with noise on every continuous column, and on the fleet a whitened fit still denoises
        // them somewhat worse (per-direction release; seeds 1, 2, 3: RMSE to 0.717, 0.699, 0.718 noise sd whitened
        // against 0.668, 0.649, 0.685 standardized; diffusion-bench/results/denoise-whitened.txt); and standardized
        // maps, not the library's chosen ones: denoising needs standardized columns (additive Gaussian noise)
        Backstep.Builder builder = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED)
                .marginals(org.backstep.option.Marginals.STANDARDIZED)
                .baseline(org.backstep.option.Baseline.NONE).steps(c.trainSteps()).hidden(c.hidden()).seed(c.seed())
                .listener(p -> {
                    if (bar != null) {
                        bar.maxHint(p.totalSteps());
                        bar.stepTo(p.step());
                        bar.setExtraMessage(String.format(Locale.ROOT, " loss %.3f%s", p.loss(),
                                p.checkpointBound().isPresent() ? String.format(Locale.ROOT, ", checkpoint bound %.3f",
                                        p.checkpointBound().getAsDouble()) : ""));
                    }
                });
        if (c.epochs() > 0) {
            builder.epochs(c.epochs());
        }
        DiffusionModel model;
        try {
            model = builder.fit(train);
        } finally {
            if (bar != null) {
                bar.close();
            }
        }
        TrainingCounts counts = TrainingCounts.of(train, model.provenance());
        console.println("   " + model);
        console.println("   " + counts.trainedSentence(train.rows(),
                model.options().coordinates() == org.backstep.option.Coordinates.WHITENED));
        console.printf(Locale.ROOT, "   %d checkpoint rows (the trainer's own split, complete rows kept back to choose its weights); "
                + "%d rows not used (%s)%n", counts.checkpoint(), counts.notUsed(), TrainingCounts.NOT_USED);
        ObjectNode training = summary.putObject("training");
        training.put("trainSteps", model.steps());
        training.put("epochs", model.history().size());
        training.put("trainingPartRowsWithGaps", counts.partWithGaps());
        training.put("trainedRows", counts.trained());
        training.put("trainedRowsWithGaps", counts.trainedWithGaps());
        training.put("filledCells", counts.filledCells());
        training.put("checkpointRows", counts.checkpoint());
        training.put("rowsNotUsed", counts.notUsed());
        training.put("seconds", model.provenance().trainingSeconds());
        charts.put(Report.SCHEDULES, png(Charts.schedules(Map.of(
                "continuous (" + model.options().continuousSchedule().kind().name().toLowerCase(Locale.ROOT) + ")",
                model.options().continuousSchedule(), "binary (binomial)", model.options().binarySchedule()))));
        charts.put(Report.HISTORY, png(Charts.trainingHistory(model.history())));
        mark = stage(stages, "fit", mark);

        // 2. Held-out bound against baselines
        BoundReport bound = model.bound(heldComplete, c.seed());
        ModelRows modelRows = ModelRows.of(model.transform(), table, c.holdout());
        double[][] trainModel = modelRows.train();
        Baselines.Result base = Baselines.fit(model.transform(), trainModel, modelRows.held(), c.seed());
        console.printf(Locale.ROOT, "2. Held-out negative log-likelihood, nats per record in model space (%d complete held-out rows; lower is better):%n",
                heldComplete.rows());
        console.printf(Locale.ROOT, "   diffusion bound %.3f (+/- %.3f; %.4f bits per dimension) | one Gaussian %.3f | Gaussian mixture, %d components, %.3f%n",
                bound.meanNats(), bound.standardErrorOfMean(), bound.bitsPerDimension(), base.oneGaussian(), base.components(), base.mixture());
        console.printf(Locale.ROOT, "   (the bound in original units: %.3f nats per record)%n", bound.meanNatsOriginalUnits());
        if (base.mixture() < bound.meanNats() || base.oneGaussian() < bound.meanNats()) {
            console.println("   Caution: a baseline fits the held-out rows better than this model (see the report)");
        }
        ObjectNode b = summary.putObject("heldOutBound");
        b.put("rows", heldComplete.rows());
        b.put("dimensions", model.transform().modelColumns());
        b.put("natsPerRecordModelSpace", bound.meanNats());
        b.put("standardError", bound.standardErrorOfMean());
        b.put("natsPerRecordOriginalUnits", bound.meanNatsOriginalUnits());
        b.put("bitsPerDimension", bound.bitsPerDimension());
        b.put("oneGaussianNats", base.oneGaussian());
        b.put("mixtureNats", base.mixture());
        b.put("mixtureComponents", base.components());
        charts.put(Report.BOUND_TERMS, png(Charts.boundBreakdown(bound)));
        mark = stage(stages, "bound", mark);

        // 3. Anomaly screen
        AnomalyScreen screened = screen(model, table, heldComplete, modelRows, base, c, console, summary, charts);
        mark = stage(stages, "screen", mark);

        // 4. Imputation of cells hidden on purpose
        KnownTruth.imputation(model, heldComplete, trainComplete, c, console, summary);
        mark = stage(stages, "imputation", mark);

        // 5. Denoising
        KnownTruth.denoising(model, heldComplete, c, console, summary);
        mark = stage(stages, "denoising", mark);

        // 6. Sampling, quality, memorization
        Table heldSub = heldComplete.selectRows(Stats.spread(Math.min(STEP_ROWS * 2, heldComplete.rows()), heldComplete.rows()));
        Table samples = SyntheticRows.run(model, heldSub, trainModel, c.seed(), console, summary);
        if (continuous.size() >= 2) {
            charts.put(Report.SAMPLES, png(Charts.pairPlot(samples, heldSub, continuous.get(0), continuous.get(1))));
        }
        mark = stage(stages, "samples", mark);

        // 7. Step-count planner
        Table planRows = heldComplete.selectRows(Stats.spread(Math.min(STEP_ROWS, heldComplete.rows()), heldComplete.rows()));
        StepPlan plan = model.planSteps(planRows, c.tolerance(), c.seed(), c.sampleSteps());
        console.println("7. Sampling step-count planner (" + planRows.rows() + " complete held-out rows):");
        for (String line : plan.toString().split("\n")) {
            console.println("   " + line);
        }
        ObjectNode p = summary.putObject("planner");
        p.put("rows", planRows.rows());
        p.put("tolerance", c.tolerance());
        p.put("recommended", plan.recommended());
        p.put("reason", plan.reason());
        ArrayNode pr = p.putArray("stepCounts");
        for (StepPlan.Row r : plan.rows()) {
            ObjectNode o = pr.addObject();
            o.put("steps", r.steps());
            o.put("boundNatsPerDimension", r.boundNatsPerDimension());
            o.put("energyDistance", r.energyDistance());
            o.put("energyPValue", r.energyPValue());
            o.put("maxKs", r.maxKs());
            o.put("millisPer1000", r.millisPer1000());
        }
        charts.put(Report.STEP_PLAN, png(Charts.stepPlan(plan)));
        PlanFiles.writeStepPlan(plan, c.out(), new PrintStream(OutputStream.nullOutputStream(), false, StandardCharsets.UTF_8));
        mark = stage(stages, "planner", mark);

        // 8. Results row by row, in files; drift against a second batch
        RowResults.write(model, table, c.lines() != null ? c.lines() : readBack.lines(), held, screened, samples, c, console,
                summary);
        mark = stage(stages, "files", mark);

        // 9. Report folder
        Path modelFile = c.out().resolve("model.backstep");
        model.save(modelFile);
        stage(stages, "report", mark);
        summary.set("stageSeconds", stages);
        summary.put("seconds", (System.nanoTime() - started) / 1e9);
        summary.put("modelFile", modelFile.getFileName().toString());
        AtomicFiles.write(c.out().resolve("summary.json"), JSON.writeValueAsBytes(summary));
        AtomicFiles.write(c.out().resolve("report.html"), Report.html(summary, charts, model).getBytes(StandardCharsets.UTF_8));
        console.printf(Locale.ROOT, "9. Report: %s (summary.json, model.backstep, %s and %s beside it); %.0f s in all%n",
                c.out().resolve("report.html").toAbsolutePath(), PlanFiles.STEP_PLAN_CSV, PlanFiles.STEP_PLAN_PNG,
                summary.get("seconds").asDouble());
        return summary;
    }

    /**
     * The table's complete rows in model space, converted once: all of them (the rows the screen
     * scores), and among them those of the training part and of the held-out part (row i is held out
     * when i % holdout == 0), in table order.
     *
     * @param index the complete rows' indices in the table, ascending
     * @param complete the complete rows of the table, in table order
     * @param all per complete row, its values in model space
     * @param trainIndex the indices of the complete rows of the training part
     * @param train their values in model space
     * @param held the values of the complete held-out rows in model space
     */
    record ModelRows(int[] index, Table complete, double[][] all, int[] trainIndex, double[][] train,
                     double[][] held) {

        static ModelRows of(org.backstep.table.TableTransform transform, Table table, int holdout) {
            int[] index = table.completeRowIndices();
            Table complete = table.hasMissing() ? table.selectRows(index) : table;
            double[][] all = transform.toModelSpace(complete);
            List<double[]> train = new ArrayList<>();
            List<double[]> held = new ArrayList<>();
            for (int k = 0; k < index.length; k++) {
                (index[k] % holdout != 0 ? train : held).add(all[k]);
            }
            int[] trainIndex = java.util.Arrays.stream(index).filter(i -> i % holdout != 0).toArray();
            return new ModelRows(index, complete, all, trainIndex, train.toArray(double[][]::new), held.toArray(double[][]::new));
        }
    }

    /** The names of the table's columns of one kind, in table order. */
    static List<String> namesOf(Table table, ColumnKind kind) {
        List<String> out = new ArrayList<>();
        for (int j = 0; j < table.columns(); j++) {
            if (table.kind(j) == kind) {
                out.add(table.name(j));
            }
        }
        return out;
    }

    /** Puts the seconds since {@code mark} under {@code name}; returns the new mark. */
    private static long stage(ObjectNode stages, String name, long mark) {
        long now = System.nanoTime();
        stages.put(name, (now - mark) / 1e9);
        return now;
    }

    private static AnomalyScreen screen(DiffusionModel model, Table table, Table heldComplete, ModelRows modelRows,
                                        Baselines.Result base, Config c, PrintStream console, ObjectNode summary,
                                        Map<String, String> charts) throws IOException {
        Table scoredRows = modelRows.complete();
        int[] scoredIndex = modelRows.index();
        AnomalyScreen screen = model.screen(heldComplete, scoredRows, Defaults.screening().withQuantile(SCREEN_QUANTILE), c.seed());
        ObjectNode a = summary.putObject("anomalies");
        a.put("scoredRows", scoredRows.rows());
        a.put("quantile", SCREEN_QUANTILE);
        a.put("threshold", screen.threshold());
        a.put("flagged", screen.flagged().length);
        console.printf(Locale.ROOT, "3. Screened %d complete rows against the held-out 99th percentile (%.2f nats): %d flagged%n",
                scoredRows.rows(), screen.threshold(), screen.flagged().length);
        if (c.faults() != null) {
            int tp = 0;
            int faultsScored = 0;
            for (int i : scoredIndex) {
                if (c.faults()[i]) {
                    faultsScored++;
                }
            }
            for (int f : screen.flagged()) {
                if (c.faults()[scoredIndex[f]]) {
                    tp++;
                }
            }
            double precision = screen.flagged().length == 0 ? 0 : tp / (double) screen.flagged().length;
            double recall = faultsScored == 0 ? 0 : tp / (double) faultsScored;
            double baseRate = faultsScored / (double) scoredIndex.length;
            a.put("injectedFaultRows", faultsScored);
            a.put("precision", precision);
            a.put("recall", recall);
            a.put("faultBaseRate", baseRate);
            console.printf(Locale.ROOT, "   against the injected faults (never shown to the model): precision %.2f, recall %.2f "
                            + "(%d fault rows, %.1f%% of the screened rows)%n",
                    precision, recall, faultsScored, 100 * baseRate);
            if (faultsScored > 0 && faultsScored < scoredIndex.length) {
                ScreenComparison.compare(model, table.names(), modelRows, base, screen, c, console, a, charts);
                ScreenComparison.blame(model, scoredRows, scoredIndex, screen, c, console, a);
            }
        }
        for (String line : ScreenComparison.wrap(ScreenComparison.SINGLE_ROW_SENTENCE, 96)) {
            console.println("   " + line);
        }
        charts.put(Report.SCORES, png(Charts.scoreHistogram(screen.scores(), screen.threshold(), 60)));
        return screen;
    }

    static String png(XYChart chart) throws IOException {
        return java.util.Base64.getEncoder().encodeToString(
                org.knowm.xchart.BitmapEncoder.getBitmapBytes(chart, org.knowm.xchart.BitmapEncoder.BitmapFormat.PNG));
    }
}
