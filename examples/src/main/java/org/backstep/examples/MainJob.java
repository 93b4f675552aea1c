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
import org.apache.commons.math3.stat.descriptive.rank.Percentile;
import org.backstep.report.AnomalyScreen;
import org.backstep.Backstep;
import org.backstep.report.BoundReport;
import org.backstep.report.Denoising;
import org.backstep.DiffusionModel;
import org.backstep.report.Imputation;
import org.backstep.option.SamplingPlan;
import org.backstep.report.StepPlan;
import org.backstep.io.AtomicFiles;
import org.backstep.plot.Charts;
import org.backstep.quality.EnergyTest;
import org.backstep.quality.SampleQuality;
import org.backstep.table.ColumnKind;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;
import org.knowm.xchart.XYChart;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;

/**
 * The main job, end to end, on one table: fit with a held-out split, report the bound beside two
 * classical baselines, screen records, impute, denoise, sample with a memorization check, plan the
 * step count, and write a report folder (HTML page, summary.json, the model file).
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
     * @param steps T
     * @param epochs epochs, 0 for the library default
     * @param hidden hidden widths
     * @param seed the seed
     * @param heldOutEvery row i is held out when i % heldOutEvery == 0
     * @param noiseSd per column, the sensor noise to add and remove in the denoising step (original units), or null for 10% of each column's sd
     */
    public record Config(Table table, Table truth, boolean[] faults, Path out, int steps, int epochs, int[] hidden,
                         long seed, int heldOutEvery, double[] noiseSd) {
    }

    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);
    /** Rows used per imputation, denoising and quality step, at most, to keep the demo within minutes. */
    static final int STEP_ROWS = 600;
    /** Draws per imputed cell; the 90% interval is read off their 5% and 95% quantiles. */
    static final int IMPUTATION_DRAWS = 20;

    private MainJob() {
    }

    /**
     * Runs steps 1-8.
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
        Map<String, String> charts = new LinkedHashMap<>();
        long started = System.nanoTime();

        // 1. CSV round trip and fit
        Path csv = c.out().resolve("table.csv");
        CsvTables.writer().write(c.table(), csv);
        List<String> binary = new ArrayList<>();
        for (int j = 0; j < c.table().columns(); j++) {
            if (c.table().kind(j) == ColumnKind.BINARY) {
                binary.add(c.table().name(j));
            }
        }
        List<String> continuous = new ArrayList<>(c.table().names());
        continuous.removeAll(binary);
        Table table = CsvTables.reader().binary(binary.toArray(String[]::new))
                .continuous(continuous.toArray(String[]::new)).read(csv);
        if (!table.equals(c.table())) {
            throw new IllegalStateException("the CSV round trip changed the table");
        }
        Table train = table.filterRows(i -> i % c.heldOutEvery() != 0);
        Table held = table.filterRows(i -> i % c.heldOutEvery() == 0);
        Table heldComplete = held.completeRows();
        Table trainComplete = train.completeRows();
        console.printf(Locale.ROOT, "1. Table: %d rows x %d columns (%d binary), %d missing cells; %d training rows, %d held out (row %% %d == 0)%n",
                table.rows(), table.columns(), binary.size(), table.missingCount(), train.rows(), held.rows(), c.heldOutEvery());
        ProgressBar bar = showProgress ? new ProgressBarBuilder().setTaskName("Training").setInitialMax(1)
                .setStyle(ProgressBarStyle.ASCII).setConsumer(new ConsoleProgressBarConsumer(System.err))
                .setUpdateIntervalMillis(250).build() : null;
        Backstep.Builder builder = Backstep.builder().steps(c.steps()).hidden(c.hidden()).seed(c.seed())
                .listener(p -> {
                    if (bar != null) {
                        bar.maxHint(p.totalSteps());
                        bar.stepTo(p.step());
                        bar.setExtraMessage(String.format(Locale.ROOT, " loss %.3f%s", p.loss(),
                                p.checkpointBound().isPresent() ? String.format(Locale.ROOT, ", bound %.3f", p.checkpointBound().getAsDouble()) : ""));
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
        console.println("   " + model);
        summary.put("rows", table.rows());
        summary.put("columns", table.columns());
        summary.put("trainingRows", model.provenance().trainingRows());
        summary.put("heldOutRows", held.rows());
        summary.put("trainingSeconds", model.provenance().trainingSeconds());
        summary.put("steps", model.steps());
        charts.put("Noise schedules of this model", png(Charts.schedules(Map.of(
                "continuous (" + model.options().continuousSchedule().kind().name().toLowerCase(Locale.ROOT) + ")",
                model.options().continuousSchedule(), "binary (binomial)", model.options().binarySchedule()))));
        charts.put("Training history", png(Charts.trainingHistory(model.history())));

        // 2. Held-out bound against baselines
        BoundReport bound = model.bound(heldComplete, c.seed());
        double[][] trainModel = model.transform().toModelSpace(trainComplete);
        double[][] heldModel = model.transform().toModelSpace(heldComplete);
        Baselines.Result base = Baselines.fit(model.transform(), trainModel, heldModel, c.seed());
        console.printf(Locale.ROOT, "2. Held-out negative log-likelihood, nats per record in model space (%d complete rows; lower is better):%n",
                heldComplete.rows());
        console.printf(Locale.ROOT, "   diffusion bound %.3f (+/- %.3f; %.4f bits per dimension) | one Gaussian %.3f | Gaussian mixture, %d components, %.3f%n",
                bound.meanNats(), bound.standardErrorOfMean(), bound.bitsPerDimension(), base.oneGaussian(), base.components(), base.mixture());
        console.printf(Locale.ROOT, "   (the bound in original units: %.3f nats per record)%n", bound.meanNatsOriginalUnits());
        ObjectNode b = summary.putObject("heldOutBound");
        b.put("natsPerRecordModelSpace", bound.meanNats());
        b.put("standardError", bound.standardErrorOfMean());
        b.put("natsPerRecordOriginalUnits", bound.meanNatsOriginalUnits());
        b.put("bitsPerDimension", bound.bitsPerDimension());
        b.put("oneGaussianNats", base.oneGaussian());
        b.put("mixtureNats", base.mixture());
        b.put("mixtureComponents", base.components());
        charts.put("Bound terms per step", png(Charts.boundBreakdown(bound)));

        // 3. Anomaly screen
        Table scoredRows = table.completeRows();
        int[] scoredIndex = table.completeRowIndices();
        AnomalyScreen screen = model.screen(heldComplete, scoredRows, Defaults.screening().withQuantile(0.99), c.seed());
        ObjectNode a = summary.putObject("anomalies");
        a.put("scoredRows", scoredRows.rows());
        a.put("threshold", screen.threshold());
        a.put("flagged", screen.flagged().length);
        console.printf(Locale.ROOT, "3. Screened %d complete rows against the held-out 99th percentile (%.2f nats): %d flagged%n",
                scoredRows.rows(), screen.threshold(), screen.flagged().length);
        if (c.faults() != null) {
            int tp = 0;
            int faultsScored = 0;
            for (int i = 0; i < scoredIndex.length; i++) {
                if (c.faults()[scoredIndex[i]]) {
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
            a.put("injectedFaultRows", faultsScored);
            a.put("precision", precision);
            a.put("recall", recall);
            double baseRate = faultsScored / (double) scoredIndex.length;
            a.put("faultBaseRate", baseRate);
            console.printf(Locale.ROOT, "   against the injected faults (never shown to the model): precision %.2f, recall %.2f "
                            + "(%d fault rows, %.1f%% of the screened rows)%n",
                    precision, recall, faultsScored, 100 * baseRate);
        }
        charts.put("Anomaly scores and threshold", png(Charts.scoreHistogram(screen.scores(), screen.threshold(), 60)));

        // 4. Imputation of cells hidden on purpose
        imputation(model, heldComplete, trainComplete, c, console, summary);

        // 5. Denoising
        denoising(model, heldComplete, c, console, summary);

        // 6. Sampling, quality, memorization
        int n = Math.min(STEP_ROWS * 2, heldComplete.rows());
        Table heldSub = heldComplete.selectRows(spread(n, heldComplete.rows()));
        Table samples = model.sample(n, SamplingPlan.ancestral(), c.seed());
        double[][] sm = model.transform().toModelSpace(samples);
        double[][] hm = model.transform().toModelSpace(heldSub);
        EnergyTest energy = EnergyTest.run(sm, hm, 199, c.seed());
        double[] ks = SampleQuality.kolmogorovSmirnov(sm, hm);
        double[][] trainSub = subsample(trainModel, 4000, c.seed());
        double[] synthNear = SampleQuality.nearestDistances(sm, trainSub);
        double[] heldNear = SampleQuality.nearestDistances(hm, trainSub);
        double heldP01 = quantile(heldNear, 0.01);
        long closer = Arrays.stream(synthNear).filter(v -> v < heldP01).count();
        ObjectNode s = summary.putObject("samples");
        s.put("count", n);
        s.put("energyDistance", energy.energyDistance());
        s.put("energyPValue", energy.pValue());
        s.put("maxKs", Arrays.stream(ks).max().orElse(0));
        s.put("medianNearestTrainingDistanceSynthetic", quantile(synthNear, 0.5));
        s.put("medianNearestTrainingDistanceHeldOut", quantile(heldNear, 0.5));
        s.put("shareCloserThanHeldOutFirstPercentile", closer / (double) n);
        console.printf(Locale.ROOT, "6. %d synthetic rows: energy distance %.4f (permutation p = %.3f), largest per-column KS %.3f%n",
                n, energy.energyDistance(), energy.pValue(), Arrays.stream(ks).max().orElse(0));
        console.printf(Locale.ROOT, "   memorization check: median distance to the closest training row %.3f (synthetic) vs %.3f (held-out); "
                + "%.1f%% of synthetic rows are closer than the closest 1%% of held-out rows%n",
                quantile(synthNear, 0.5), quantile(heldNear, 0.5), 100.0 * closer / n);
        ArrayNode cols = s.putArray("columns");
        console.printf(Locale.ROOT, "   %-16s %10s %10s %10s %10s %8s%n", "column", "mean data", "mean synth", "sd data", "sd synth", "KS");
        int[] modelled = concat(model.transform().modelledContinuous(), model.transform().modelledBinary());
        for (int j = 0; j < modelled.length; j++) {
            int col = modelled[j];
            double[] dv = heldSub.column(col);
            double[] sv = samples.column(col);
            ObjectNode o = cols.addObject();
            o.put("column", table.name(col));
            o.put("meanData", mean(dv));
            o.put("meanSynthetic", mean(sv));
            o.put("sdData", sd(dv));
            o.put("sdSynthetic", sd(sv));
            o.put("ks", ks[j]);
            console.printf(Locale.ROOT, "   %-16s %10.3f %10.3f %10.3f %10.3f %8.3f%n", table.name(col), mean(dv), mean(sv), sd(dv), sd(sv), ks[j]);
        }
        if (continuous.size() >= 2) {
            charts.put("Samples against held-out rows", png(Charts.pairPlot(samples, heldSub, continuous.get(0), continuous.get(1))));
        }

        // 7. Step-count planner
        Table planRows = heldComplete.selectRows(spread(Math.min(STEP_ROWS, heldComplete.rows()), heldComplete.rows()));
        StepPlan plan = model.planSteps(planRows, 0.02, c.seed());
        console.println("7. Step-count planner (" + planRows.rows() + " held-out rows):");
        for (String line : plan.toString().split("\n")) {
            console.println("   " + line);
        }
        ObjectNode p = summary.putObject("planner");
        p.put("recommended", plan.recommended());
        p.put("reason", plan.reason());
        ArrayNode pr = p.putArray("rows");
        for (StepPlan.Row r : plan.rows()) {
            ObjectNode o = pr.addObject();
            o.put("steps", r.steps());
            o.put("boundNatsPerDimension", r.boundNatsPerDimension());
            o.put("energyDistance", r.energyDistance());
            o.put("energyPValue", r.energyPValue());
            o.put("maxKs", r.maxKs());
            o.put("millisPer1000", r.millisPer1000());
        }
        AtomicFiles.write(c.out().resolve("planner.csv"), plan.toCsv().getBytes(StandardCharsets.UTF_8));
        charts.put("Step count: quality against cost", png(Charts.stepPlan(plan)));
        Charts.save(Charts.stepPlan(plan), c.out().resolve("planner.png"));

        // 8. Report folder
        Path modelFile = c.out().resolve("model.backstep");
        model.save(modelFile);
        summary.put("seconds", (System.nanoTime() - started) / 1e9);
        summary.put("modelFile", modelFile.getFileName().toString());
        AtomicFiles.write(c.out().resolve("summary.json"), JSON.writeValueAsBytes(summary));
        AtomicFiles.write(c.out().resolve("report.html"), Report.html(summary, charts, model).getBytes(StandardCharsets.UTF_8));
        console.printf(Locale.ROOT, "8. Report: %s (summary.json, model.backstep, planner.csv and planner.png beside it); %.0f s in all%n",
                c.out().resolve("report.html").toAbsolutePath(), summary.get("seconds").asDouble());
        return summary;
    }

    private static void imputation(DiffusionModel model, Table heldComplete, Table trainComplete, Config c, PrintStream console,
                                   ObjectNode summary) {
        int n = Math.min(STEP_ROWS, heldComplete.rows());
        Table truth = heldComplete.selectRows(spread(n, heldComplete.rows()));
        double[][] hidden = truth.toArray();
        SplittableRandom rng = new SplittableRandom(c.seed() + 17);
        int[] cont = model.transform().modelledContinuous();
        int hiddenCount = 0;
        for (double[] row : hidden) {
            int j = cont.length > 0 ? cont[rng.nextInt(cont.length)] : rng.nextInt(row.length);
            row[j] = Double.NaN;
            hiddenCount++;
        }
        Table masked = truth.withRows(hidden);
        Imputation imp = model.impute(masked, Defaults.imputation().withDraws(IMPUTATION_DRAWS).withLevel(0.9), c.seed());
        double se = 0;
        double seMean = 0;
        int covered = 0;
        double[] colMean = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colMean[j] = mean(trainComplete.column(j));
        }
        double[] colSd = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colSd[j] = sd(trainComplete.column(j));
        }
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < truth.columns(); j++) {
                if (Double.isNaN(hidden[i][j])) {
                    double t = truth.get(i, j);
                    double e = (imp.mean().get(i, j) - t) / colSd[j];
                    double em = (colMean[j] - t) / colSd[j];
                    se += e * e;
                    seMean += em * em;
                    if (t >= imp.lower().get(i, j) && t <= imp.upper().get(i, j)) {
                        covered++;
                    }
                }
            }
        }
        double rmse = Math.sqrt(se / hiddenCount);
        double rmseMean = Math.sqrt(seMean / hiddenCount);
        ObjectNode o = summary.putObject("imputation");
        o.put("hiddenCells", hiddenCount);
        o.put("rmseInColumnSd", rmse);
        o.put("rmseColumnMeanInColumnSd", rmseMean);
        o.put("coverage90", covered / (double) hiddenCount);
        o.put("coverage90OfPerfectModel", imp.expectedCoverage());
        console.printf(Locale.ROOT, "4. Imputed %d cells hidden on purpose (truth known), %d draws each: RMSE %.3f column sd "
                        + "(column mean: %.3f); 90%% intervals cover %.1f%% (%.1f%% expected of a perfect model with %d draws)%n",
                hiddenCount, IMPUTATION_DRAWS, rmse, rmseMean, 100.0 * covered / hiddenCount,
                100.0 * imp.expectedCoverage(), IMPUTATION_DRAWS);
    }

    private static void denoising(DiffusionModel model, Table heldComplete, Config c, PrintStream console, ObjectNode summary) {
        int n = Math.min(STEP_ROWS, heldComplete.rows());
        Table truth = heldComplete.selectRows(spread(n, heldComplete.rows()));
        double[] noise = new double[truth.columns()];
        int[] cont = model.transform().modelledContinuous();
        for (int j : cont) {
            noise[j] = c.noiseSd() != null ? c.noiseSd()[j] : 0.25 * sd(truth.column(j));
        }
        double[][] noisy = truth.toArray();
        SplittableRandom rng = new SplittableRandom(c.seed() + 23);
        for (double[] row : noisy) {
            for (int j : cont) {
                row[j] += noise[j] * rng.nextGaussian();
            }
        }
        Denoising d = model.denoise(truth.withRows(noisy), Defaults.denoising(noise).withDraws(8), c.seed());
        double before = 0;
        double after = 0;
        for (int i = 0; i < n; i++) {
            for (int j : cont) {
                double b = (noisy[i][j] - truth.get(i, j)) / noise[j];
                double a = (d.mean().get(i, j) - truth.get(i, j)) / noise[j];
                before += b * b;
                after += a * a;
            }
        }
        int cells = n * cont.length;
        ObjectNode o = summary.putObject("denoising");
        o.put("cells", cells);
        o.put("rmseBeforeInNoiseSd", Math.sqrt(before / Math.max(1, cells)));
        o.put("rmseAfterInNoiseSd", Math.sqrt(after / Math.max(1, cells)));
        o.put("startStep", d.step());
        console.printf(Locale.ROOT, "5. Denoised %d readings with known sensor noise: RMSE %.3f -> %.3f noise sd (chain from step %d)%n",
                n, Math.sqrt(before / Math.max(1, cells)), Math.sqrt(after / Math.max(1, cells)), d.step());
    }

    static String png(XYChart chart) throws IOException {
        return java.util.Base64.getEncoder().encodeToString(
                org.knowm.xchart.BitmapEncoder.getBitmapBytes(chart, org.knowm.xchart.BitmapEncoder.BitmapFormat.PNG));
    }

    /** Held-out rows are ordered by container and time: take rows spread evenly over them, not the first ones. */
    static int[] spread(int n, int total) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = (int) ((long) i * total / n);
        }
        return r;
    }

    static double[][] subsample(double[][] rows, int max, long seed) {
        if (rows.length <= max) {
            return rows;
        }
        double[][] out = new double[max][];
        double step = rows.length / (double) max;
        for (int i = 0; i < max; i++) {
            out[i] = rows[(int) (i * step)];
        }
        return out;
    }

    static int[] concat(int[] a, int[] b) {
        int[] r = Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, r, a.length, b.length);
        return r;
    }

    static double mean(double[] v) {
        return Arrays.stream(v).average().orElse(Double.NaN);
    }

    static double sd(double[] v) {
        double m = mean(v);
        double s = 0;
        for (double x : v) {
            s += (x - m) * (x - m);
        }
        return Math.sqrt(s / Math.max(1, v.length - 1));
    }

    /** The empirical q-quantile, type 7 of Hyndman &amp; Fan 1996 (commons-math3's R_7), q in (0, 1]. */
    static double quantile(double[] v, double q) {
        return new Percentile().withEstimationType(Percentile.EstimationType.R_7).evaluate(v, 100.0 * q);
    }
}
