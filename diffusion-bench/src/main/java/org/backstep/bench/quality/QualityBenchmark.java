package org.backstep.bench.quality;

import org.backstep.Defaults;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.BoundReport;
import org.backstep.report.Imputation;
import org.backstep.table.Table;

/**
 * Fits Backstep at its defaults on the fixed split of four open tables and prints one table beside
 * the classical models of {@code quality-baselines.sh} (read from its JSON file): held-out density in
 * nats per record in SOURCES.md's standardized space, imputation RMSE and interval coverage, anomaly
 * ranks (AUROC, recall) and fit seconds. With {@code --levers}, also fits Backstep on the table after
 * each transform of {@link Lever}, so that their effect shows on the same rows.
 *
 * <p>Per table, lever and fit seed:
 * <ul>
 *   <li><b>Density.</b> The exact bound ({@code DiffusionModel.bound}, all T terms) of the test rows
 *       with bound seeds 1..B; each record's {@code natsOriginalUnits()} (the density in the units of
 *       the table the model was fitted on), minus the lever's log-Jacobian log |de/dx| (the density in
 *       the caller's units), plus SOURCES.md's standardization log-Jacobian -sum_j log s_j (its space).
 *       The model standardizes by the rows it trained on, a 90% share of the training rows, so its
 *       own model space differs from SOURCES.md's; this conversion is exact. The figure is the mean
 *       over records and bound seeds; "rec sd" is the per-record standard deviation over the B bound
 *       seeds (root mean square over records), "mean sd" that of the table mean.</li>
 *   <li><b>Imputation.</b> The hidden cells of the baselines file (20% of the test rows' cells)
 *       are set missing; {@code DiffusionModel.impute} draws k = 20 completions at level 0.9; RMSE of
 *       the draws' mean in standardized units (for binary cells, of the share of 1s), and the share of
 *       hidden continuous cells inside their interval, beside {@code Imputation.expectedCoverage()}.
 *       For a lever the draws are decoded to the caller's units cell by cell and the mean and type-7
 *       interval taken there; a whitening lever mixes columns, so it does not impute.</li>
 *   <li><b>Anomaly ranks</b> (breast_cancer, digits_binary; SOURCES.md's protocol): a second model
 *       fitted on the normal training rows; {@code DiffusionModel.screen(held-out normal rows, *       held-out normal rows + every anomalous row, Defaults.screening().withQuantile(0.99), seed)}; its scores (model-space nats, minus
 *       the lever's log-Jacobian) give the AUROC and the recall of anomalies above the 99th and 95th
 *       percentiles of the normal rows' scores; "AUROC(b)" ranks by the exact bound (seed 1) instead.</li>
 * </ul>
 *
 * <p>Usage: {@code QualityBenchmark --baselines FILE --data DIR --labels DIR [--out FILE]
 * [--runs FILE] [--seeds 1,2,3] [--seeds:TABLE 1,2] [--tables iris,...] [--levers] [--only-levers A,B]
 * [--density-only] [--no-anomaly] [--bound-seeds 5] [--weight-decay 3e-4] [--steps 100] [--ema 0.995]
 * [--evaluations 20] [--patience 0] [--learning-rate 3e-3]}
 * ({@code --density-only}: no imputation and no anomaly ranks; {@code --no-anomaly}: no anomaly ranks;
 * {@code --weight-decay}: every fit, the anomaly models' too, with this decoupled weight decay per update
 * instead of {@code Defaults.WEIGHT_DECAY}; {@code --steps}: with T diffusion steps instead of
 * {@code Defaults.STEPS}; {@code --ema}: with this decay of the weights' moving average instead of
 * {@code Defaults.EMA_DECAY}; {@code --evaluations}, {@code --patience}: checkpoint evaluations per run and
 * early stopping instead of {@code Defaults.EVALUATIONS} and {@code Defaults.PATIENCE}; {@code --learning-rate}: Adam's peak step size instead of
 * {@code Defaults.LEARNING_RATE}; every other setting as the lever has it).
 * Progress goes to standard error; the table to standard output and, with {@code --out}, to a file.
 */
public final class QualityBenchmark {

    /** Draws per imputed record, and the interval level. */
    static final int DRAWS = 20;
    static final double LEVEL = 0.9;
    /** The quantile of {@code screen}'s threshold. */
    static final double SCREEN_QUANTILE = 0.99;

    private QualityBenchmark() {
    }

    /**
     * The figures of one fit.
     *
     * @param table the table key
     * @param lever the lever
     * @param seed the fit seed
     * @param fitSeconds wall-clock seconds of {@code fit}
     * @param boundMeans per bound seed, the mean held-out nats per record in SOURCES.md's space
     * @param recordSd the per-record sd over bound seeds, root mean square over records
     * @param rmse imputation RMSE, standardized units (NaN if not run)
     * @param coverage share of hidden continuous cells inside the interval (NaN if none)
     * @param expectedCoverage {@code Imputation.expectedCoverage()} (NaN if not run)
     * @param imputeSeconds wall-clock seconds of {@code impute}
     * @param auroc AUROC of {@code screen}'s scores (NaN without labels)
     * @param recall99 recall at the normal rows' 99th percentile
     * @param recall95 recall at the 95th
     * @param aurocBound AUROC of the exact bound
     * @param anomalyFitSeconds seconds of the anomaly model's fit
     */
    record Run(String table, Lever lever, long seed, double fitSeconds, double[] boundMeans, double recordSd,
               double rmse, double coverage, double expectedCoverage, double imputeSeconds, double auroc,
               double recall99, double recall95, double aurocBound, double anomalyFitSeconds) {

        double nats() {
            return Measures.mean(boundMeans);
        }
    }

    /**
     * Runs the benchmark.
     *
     * @param args see the class comment
     * @throws IOException if a file cannot be read or written
     */
    public static void main(String[] args) throws IOException {
        Map<String, String> opt = parse(args);
        Path baselinesFile = Path.of(required(opt, "--baselines"));
        Path data = Path.of(required(opt, "--data"));
        Path labels = Path.of(required(opt, "--labels"));
        int boundSeeds = Integer.parseInt(opt.getOrDefault("--bound-seeds", "5"));
        double weightDecay = Double.parseDouble(opt.getOrDefault("--weight-decay", String.valueOf(Defaults.WEIGHT_DECAY)));
        int steps = Integer.parseInt(opt.getOrDefault("--steps", String.valueOf(Defaults.STEPS)));
        double ema = Double.parseDouble(opt.getOrDefault("--ema", String.valueOf(Defaults.EMA_DECAY)));
        int evaluations = Integer.parseInt(opt.getOrDefault("--evaluations", String.valueOf(Defaults.EVALUATIONS)));
        int patience = Integer.parseInt(opt.getOrDefault("--patience", String.valueOf(Defaults.PATIENCE)));
        double learningRate = Double.parseDouble(opt.getOrDefault("--learning-rate", String.valueOf(Defaults.LEARNING_RATE)));
        Tweaks tweaks = new Tweaks(weightDecay, steps, ema, evaluations, patience, learningRate);
        List<Long> seeds = seeds(opt.getOrDefault("--seeds", "1"));
        List<Lever> levers = opt.containsKey("--only-levers")
                ? Arrays.stream(opt.get("--only-levers").split(",")).map(String::strip).map(Lever::valueOf).toList()
                : opt.containsKey("--levers") ? List.of(Lever.values()) : List.of(Lever.DEFAULTS);
        List<String> tableKeys = opt.containsKey("--tables") ? List.of(opt.get("--tables").split(","))
                : OpenTable.ALL.stream().map(OpenTable::key).toList();
        JsonNode baselines = new ObjectMapper().readTree(Files.readString(baselinesFile, StandardCharsets.UTF_8));

        String started = java.time.Instant.now().toString();
        double loadBefore = loadAverage();
        List<Run> runs = new ArrayList<>();
        List<OpenTable.Split> splits = new ArrayList<>();
        for (OpenTable t : OpenTable.ALL) {
            if (tableKeys.contains(t.key())) {
                splits.add(t.read(data, labels));
            }
        }
        StringBuilder runLines = new StringBuilder(RUNS_HEADER).append('\n');
        // seeds outermost, so that a busy spell of the shared machine falls on every table and lever alike
        int maxSeeds = splits.stream().mapToInt(s -> seedsFor(opt, s.table().key(), seeds).size()).max().orElse(0);
        for (int si = 0; si < maxSeeds; si++) {
            for (OpenTable.Split split : splits) {
                List<Long> own = seedsFor(opt, split.table().key(), seeds);
                if (si >= own.size()) {
                    continue;
                }
                for (Lever lever : levers) {
                    if (lever != Lever.DEFAULTS && split.train().continuousColumns().length == 0) {
                        continue; // every lever maps continuous columns; the table has none
                    }
                    Run run = measure(split, lever, own.get(si), boundSeeds, baselines, opt.containsKey("--density-only"),
                            opt.containsKey("--density-only") || opt.containsKey("--no-anomaly"), tweaks);
                    runs.add(run);
                    runLines.append(runLine(run)).append('\n');
                    System.err.printf(Locale.ROOT, "%s, %s, seed %d: %.3f nats (rec sd %.3f), rmse %.3f, auroc %.4f, fit %.1f s%n",
                            run.table(), lever, run.seed(), run.nats(), run.recordSd(), run.rmse(), run.auroc(), run.fitSeconds());
                }
            }
        }
        String settings = settings(started, loadBefore, opt.get("--git"), tweaks);
        String text = SideBySide.render(settings, splits, levers, runs, baselines, boundSeeds);
        System.out.print(text);
        if (opt.containsKey("--out")) {
            writeAtomically(Path.of(opt.get("--out")), text);
        }
        if (opt.containsKey("--runs")) {
            writeAtomically(Path.of(opt.get("--runs")), runLines.toString());
        }
    }

    static Run measure(OpenTable.Split split, Lever lever, long seed, int boundSeeds, JsonNode baselines,
                       boolean densityOnly, boolean noAnomaly, Tweaks tweaks) {
        Table train = split.train();
        Table test = split.test();
        Lever.Encoding enc = lever.fit(train);
        long t0 = System.nanoTime();
        DiffusionModel model = tweaks.apply(lever.builder(seed)).fit(enc.encode(train));
        double fitSeconds = (System.nanoTime() - t0) / 1e9;
        StringBuilder curve = new StringBuilder();
        for (var e : model.provenance().history()) {
            e.checkpointBound().ifPresent(b -> curve.append(String.format(Locale.ROOT, " %d:%.3f", e.epoch(), b)));
        }
        System.err.printf(Locale.ROOT, "%s, %s, seed %d: checkpoint bound by epoch (of %d):%s%n", split.table().key(), lever,
                seed, model.provenance().history().size(), curve);
        for (String note : model.provenance().notes()) {
            if (note.startsWith("marginals ")) {
                System.err.printf(Locale.ROOT, "%s, %s, seed %d: %s%n", split.table().key(), lever, seed, note);
            }
        }

        // density, in SOURCES.md's space
        Table encTest = enc.encode(test);
        double[] leverJacobian = enc.logJacobian(test);
        double[] sourcesJacobian = split.standardized().logJacobian(test);
        double[][] perRecord = new double[boundSeeds][];
        double[] boundMeans = new double[boundSeeds];
        for (int b = 0; b < boundSeeds; b++) {
            BoundReport r = model.bound(encTest, b + 1);
            double[] nats = r.natsOriginalUnits();
            for (int i = 0; i < nats.length; i++) {
                nats[i] += -leverJacobian[i] + sourcesJacobian[i];
            }
            perRecord[b] = nats;
            boundMeans[b] = Measures.mean(nats);
        }
        double squares = 0;
        for (int i = 0; i < test.rows(); i++) {
            double[] across = new double[boundSeeds];
            for (int b = 0; b < boundSeeds; b++) {
                across[b] = perRecord[b][i];
            }
            double sd = Measures.sd(across);
            squares += sd * sd;
        }
        double recordSd = Math.sqrt(squares / test.rows());

        // imputation
        double rmse = Double.NaN;
        double coverage = Double.NaN;
        double expected = Double.NaN;
        double imputeSeconds = Double.NaN;
        if (enc.imputes() && !densityOnly) {
            HiddenCells hidden = HiddenCells.of(baselines, split.table().key(), test);
            Table masked = hidden.masked();
            long i0 = System.nanoTime();
            Imputation imp = model.impute(enc.encode(masked), Defaults.imputation().withDraws(DRAWS).withLevel(LEVEL), seed);
            imputeSeconds = (System.nanoTime() - i0) / 1e9;
            expected = imp.expectedCoverage();
            double[][] mean;
            double[][] lower;
            double[][] upper;
            if (enc.identity()) {
                mean = imp.mean().toArray();
                lower = imp.lower().toArray();
                upper = imp.upper().toArray();
            } else {
                List<double[][]> draws = imp.draws().stream().map(d -> enc.decode(d).toArray()).toList();
                mean = new double[test.rows()][test.columns()];
                lower = new double[test.rows()][test.columns()];
                upper = new double[test.rows()][test.columns()];
                for (int[] rc : hidden.cells()) {
                    double[] v = draws.stream().mapToDouble(d -> d[rc[0]][rc[1]]).toArray();
                    mean[rc[0]][rc[1]] = Measures.mean(v);
                    lower[rc[0]][rc[1]] = Measures.quantile(v, (1 - LEVEL) / 2);
                    upper[rc[0]][rc[1]] = Measures.quantile(v, (1 + LEVEL) / 2);
                }
            }
            HiddenCells.Score score = hidden.score(mean, lower, upper, split.scales());
            rmse = score.rmse();
            coverage = score.coverage();
            if (Double.isNaN(coverage)) {
                expected = Double.NaN;
            }
        }

        // anomaly ranks
        double auroc = Double.NaN;
        double r99 = Double.NaN;
        double r95 = Double.NaN;
        double aurocBound = Double.NaN;
        double anomalyFit = Double.NaN;
        if (split.labels() != null && !noAnomaly) {
            Table normalTrain = split.normalTrain();
            Lever.Encoding encA = lever.fit(normalTrain);
            long a0 = System.nanoTime();
            DiffusionModel ma = tweaks.apply(lever.builder(seed)).fit(encA.encode(normalTrain));
            anomalyFit = (System.nanoTime() - a0) / 1e9;
            Table screened = split.screened();
            int nn = split.screenedNormal();
            Table encScreened = encA.encode(screened);
            double[] lj = encA.logJacobian(screened);
            AnomalyScreen s = ma.screen(encA.encode(split.normalTest()), encScreened, Defaults.screening().withQuantile(SCREEN_QUANTILE), seed);
            double[] scores = s.scores();
            double[] bound = ma.bound(encScreened, 1).natsOriginalUnits();
            for (int i = 0; i < scores.length; i++) {
                scores[i] -= lj[i];
                bound[i] -= lj[i];
            }
            double[] normal = Arrays.copyOf(scores, nn);
            double[] anomalous = Arrays.copyOfRange(scores, nn, scores.length);
            auroc = Measures.auroc(normal, anomalous);
            r99 = Measures.recallAt(normal, anomalous, 0.99);
            r95 = Measures.recallAt(normal, anomalous, 0.95);
            aurocBound = Measures.auroc(Arrays.copyOf(bound, nn), Arrays.copyOfRange(bound, nn, bound.length));
        }
        return new Run(split.table().key(), lever, seed, fitSeconds, boundMeans, recordSd, rmse, coverage, expected,
                imputeSeconds, auroc, r99, r95, aurocBound, anomalyFit);
    }

    static final String RUNS_HEADER = "table,lever,seed,fit_s,nats_mean,nats_per_bound_seed,record_sd,rmse,coverage,"
            + "expected_coverage,impute_s,auroc_screen,recall_99,recall_95,auroc_bound,anomaly_fit_s";

    static String runLine(Run r) {
        String perSeed = String.join(" ", Arrays.stream(r.boundMeans()).mapToObj(v -> String.format(Locale.ROOT, "%.4f", v)).toList());
        return String.format(Locale.ROOT, "%s,%s,%d,%.2f,%.4f,%s,%.4f,%.4f,%.4f,%.4f,%.2f,%.4f,%.4f,%.4f,%.4f,%.2f",
                r.table(), r.lever().name(), r.seed(), r.fitSeconds(), r.nats(), perSeed, r.recordSd(), r.rmse(),
                r.coverage(), r.expectedCoverage(), r.imputeSeconds(), r.auroc(), r.recall99(), r.recall95(),
                r.aurocBound(), r.anomalyFitSeconds());
    }

    private static String settings(String started, double loadBefore, String git, Tweaks tweaks) {
        double weightDecay = tweaks.weightDecay();
        return String.format(Locale.ROOT,
                "Backstep quality benchmark, started %s, finished %s%s%n"
                        + "weight decay %s per update (%s)%n"
                        + tweaks.changed()
                        + "machine: %s %s %s, %d CPUs (shared); load average (1 min) %.2f at start, %.2f at end%n"
                        + "java %s (%s); Backstep threads %d (library default); OPENBLAS_CORETYPE %s%n",
                started, java.time.Instant.now(), git == null ? "" : ", git " + git, weightDecay,
                weightDecay == Defaults.WEIGHT_DECAY ? "Defaults.WEIGHT_DECAY" : "--weight-decay; Defaults.WEIGHT_DECAY is " + Defaults.WEIGHT_DECAY,
                System.getProperty("os.name"), System.getProperty("os.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors(), loadBefore, loadAverage(),
                System.getProperty("java.version"), System.getProperty("java.vm.name"), org.backstep.Defaults.threads(),
                System.getenv().getOrDefault("OPENBLAS_CORETYPE", "not set"));
    }

    private static double loadAverage() {
        return java.lang.management.ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage();
    }

    private static void writeAtomically(Path file, String text) throws IOException {
        Path dir = file.toAbsolutePath().getParent();
        Files.createDirectories(dir);
        Path tmp = Files.createTempFile(dir, file.getFileName().toString(), ".tmp");
        Files.writeString(tmp, text, StandardCharsets.UTF_8);
        Files.move(tmp, file, java.nio.file.StandardCopyOption.REPLACE_EXISTING, java.nio.file.StandardCopyOption.ATOMIC_MOVE);
    }

    /**
     * The builder settings a run may change from the lever's (the options {@code --weight-decay},
     * {@code --steps}, {@code --ema}), applied to every fit of the run.
     *
     * @param weightDecay decoupled weight decay per update
     * @param steps diffusion steps T
     * @param ema decay of the weights' moving average
     * @param evaluations checkpoint evaluations per run
     * @param patience evaluations without improvement before stopping; 0: never
     * @param learningRate Adam's peak step size
     */
    record Tweaks(double weightDecay, int steps, double ema, int evaluations, int patience, double learningRate) {

        Backstep.Builder apply(Backstep.Builder b) {
            b = b.weightDecay(weightDecay);
            if (steps != Defaults.STEPS) {
                b = b.steps(steps);
            }
            if (ema != Defaults.EMA_DECAY) {
                b = b.emaDecay(ema);
            }
            if (evaluations != Defaults.EVALUATIONS) {
                b = b.evaluations(evaluations);
            }
            if (patience != Defaults.PATIENCE) {
                b = b.patience(patience);
            }
            if (learningRate != Defaults.LEARNING_RATE) {
                b = b.learningRate(learningRate);
            }
            return b;
        }

        /** @return a line per setting changed from the defaults (besides the decay, always printed) */
        String changed() {
            StringBuilder sb = new StringBuilder();
            if (steps != Defaults.STEPS) {
                sb.append("diffusion steps T = ").append(steps).append(" (--steps; Defaults.STEPS is ")
                        .append(Defaults.STEPS).append(")%n");
            }
            if (ema != Defaults.EMA_DECAY) {
                sb.append("moving average of the weights: decay ").append(ema).append(" (--ema; Defaults.EMA_DECAY is ")
                        .append(Defaults.EMA_DECAY).append(")%n");
            }
            if (learningRate != Defaults.LEARNING_RATE) {
                sb.append("learning rate ").append(learningRate).append(" (--learning-rate; Defaults.LEARNING_RATE is ")
                        .append(Defaults.LEARNING_RATE).append(")%n");
            }
            if (evaluations != Defaults.EVALUATIONS || patience != Defaults.PATIENCE) {
                sb.append("checkpoint evaluations ").append(evaluations).append(", patience ").append(patience)
                        .append(" (--evaluations, --patience; Defaults: ").append(Defaults.EVALUATIONS).append(", ")
                        .append(Defaults.PATIENCE).append(")%n");
            }
            return sb.toString();
        }
    }

    private static Map<String, String> parse(String[] args) {
        Map<String, String> out = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String a = args[i];
            if (!a.startsWith("--")) {
                throw new IllegalArgumentException("argument " + (i + 1) + " is '" + a + "'; expected an option --NAME");
            }
            if (a.equals("--levers") || a.equals("--density-only") || a.equals("--no-anomaly")) {
                out.put(a, "");
            } else {
                if (i + 1 >= args.length) {
                    throw new IllegalArgumentException("option " + a + " has no value");
                }
                out.put(a, args[++i]);
            }
        }
        return out;
    }

    private static String required(Map<String, String> opt, String name) {
        String v = opt.get(name);
        if (v == null) {
            throw new IllegalArgumentException("option " + name + " is missing");
        }
        return v;
    }

    private static List<Long> seeds(String list) {
        return Arrays.stream(list.split(",")).map(String::strip).map(Long::parseLong).toList();
    }

    private static List<Long> seedsFor(Map<String, String> opt, String table, List<Long> fallback) {
        String own = opt.get("--seeds:" + table);
        return own == null ? fallback : seeds(own);
    }
}
