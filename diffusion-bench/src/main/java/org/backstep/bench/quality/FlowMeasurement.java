package org.backstep.bench.quality;

import org.apache.commons.math3.stat.correlation.SpearmansCorrelation;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.option.FlowOptions;
import org.backstep.report.FlowLikelihood;
import org.backstep.table.Table;

import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/**
 * The probability-flow likelihood ({@link DiffusionModel#flowLikelihood(Table)}) against the exact
 * bound ({@link DiffusionModel#bound(Table, long)}) on the open tables of the quality benchmark, at
 * the library's defaults (one fit, seed 1, on the training rows of SOURCES.md's split), on the test
 * rows, in SOURCES.md's standardized space: the mean of each, the per-record sd over bound seeds,
 * the rank correlation of the two per-record scores, the change under tighter tolerances and under
 * eps-hat interpolated between steps, the cost of each per record (wall and process CPU time, in one
 * run on a shared machine: read the ratio), and on tables with anomaly labels the AUROC of each as
 * an anomaly score (fit on the normal training rows, as {@link QualityBenchmark} does).
 *
 * <p>Usage: {@code FlowMeasurement --data DIR --labels DIR --out FILE [--tables a,b] [--bound-seeds 5]}.
 * A program, not a test.
 */
public final class FlowMeasurement {

    private FlowMeasurement() {
    }

    /**
     * @param args see the class comment
     * @throws IOException if a file cannot be read or written
     */
    public static void main(String[] args) throws IOException {
        Path data = null;
        Path labels = null;
        Path out = null;
        List<String> tables = List.of("iris", "diabetes_raw_without_SEX", "breast_cancer");
        int boundSeeds = 5;
        for (int i = 0; i + 1 < args.length; i += 2) {
            switch (args[i]) {
                case "--data" -> data = Path.of(args[i + 1]);
                case "--labels" -> labels = Path.of(args[i + 1]);
                case "--out" -> out = Path.of(args[i + 1]);
                case "--tables" -> tables = List.of(args[i + 1].split(","));
                case "--bound-seeds" -> boundSeeds = Integer.parseInt(args[i + 1]);
                default -> throw new IllegalArgumentException("unknown option " + args[i]);
            }
        }
        if (data == null || labels == null || out == null) {
            throw new IllegalArgumentException("--data, --labels and --out are required");
        }
        StringBuilder text = new StringBuilder();
        text.append(String.format(Locale.ROOT, "Probability-flow likelihood against the exact bound, started %s%n",
                java.time.Instant.now()));
        text.append(String.format(Locale.ROOT, "machine: %s %s %s, %d CPUs (shared); load average (1 min) %.2f at start;"
                        + " java %s; Backstep threads %d (library default); OPENBLAS_CORETYPE %s%n",
                System.getProperty("os.name"), System.getProperty("os.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors(), load(), System.getProperty("java.version"),
                org.backstep.Defaults.threads(), System.getenv().getOrDefault("OPENBLAS_CORETYPE", "not set")));
        text.append(String.format(Locale.ROOT, "flow: Dormand-Prince 5(4), tolerances %s; nats per record, test rows,"
                + " SOURCES.md's standardized space; bound: exact, %d seeds%n%n", org.backstep.Defaults.flow(), boundSeeds));
        for (OpenTable t : OpenTable.ALL) {
            if (tables.contains(t.key())) {
                String block = measure(t.read(data, labels), boundSeeds);
                System.err.print(block);
                text.append(block);
            }
        }
        text.append(String.format(Locale.ROOT, "finished %s, load average (1 min) %.2f%n", java.time.Instant.now(), load()));
        Files.writeString(out, text.toString(), StandardCharsets.UTF_8);
    }

    private static String measure(OpenTable.Split split, int boundSeeds) {
        StringBuilder sb = new StringBuilder();
        Table train = split.train();
        Table test = split.test();
        long f0 = System.nanoTime();
        DiffusionModel model = Backstep.builder().seed(1).fit(train);
        double fitSeconds = (System.nanoTime() - f0) / 1e9;
        double[] toSources = split.standardized().logJacobian(test);
        int n = test.rows();
        sb.append(String.format(Locale.ROOT, "%s: %d training rows, %d test rows, %d columns; default fit %.1f s%n",
                split.table().label(), train.rows(), n, train.columns(), fitSeconds));

        // the bound, several seeds
        double[][] bounds = new double[boundSeeds][];
        Cost boundCost = new Cost();
        for (int b = 0; b < boundSeeds; b++) {
            long seed = b + 1;
            bounds[b] = boundCost.time(() -> model.bound(test, seed).natsOriginalUnits());
            add(bounds[b], toSources);
        }
        double[] boundMean = new double[n];
        double squares = 0;
        for (int i = 0; i < n; i++) {
            double[] across = new double[boundSeeds];
            for (int b = 0; b < boundSeeds; b++) {
                across[b] = bounds[b][i];
                boundMean[i] += bounds[b][i] / boundSeeds;
            }
            double sd = Measures.sd(across);
            squares += sd * sd;
        }
        double boundRecordSd = Math.sqrt(squares / n);
        double[] seedMeans = new double[boundSeeds];
        for (int b = 0; b < boundSeeds; b++) {
            seedMeans[b] = Measures.mean(bounds[b]);
        }

        // the flow: twice (determinism), tighter tolerances, interpolated eps-hat
        Cost flowCost = new Cost();
        FlowLikelihood[] runs = new FlowLikelihood[2];
        for (int k = 0; k < 2; k++) {
            runs[k] = flowCost.time(() -> model.flowLikelihood(test));
        }
        double[] flow = runs[0].natsOriginalUnits();
        add(flow, toSources);
        double[] again = runs[1].natsOriginalUnits();
        add(again, toSources);
        int differing = 0;
        for (int i = 0; i < n; i++) {
            if (Double.doubleToLongBits(flow[i]) != Double.doubleToLongBits(again[i])) {
                differing++;
            }
        }
        double[] tight = model.flowLikelihood(test, FlowOptions.of(1e-8, 1e-8)).natsOriginalUnits();
        add(tight, toSources);
        double evaluations = Arrays.stream(runs[0].evaluations()).average().orElse(Double.NaN);

        SpearmansCorrelation spearman = new SpearmansCorrelation();
        sb.append(String.format(Locale.ROOT, "  exact bound    mean %8.3f (seed means %s), per-record sd over seeds %.3f%n",
                Measures.mean(boundMean), format(seedMeans), boundRecordSd));
        sb.append(String.format(Locale.ROOT, "  flow NLL       mean %8.3f, per-record sd 0 (no draws; %d of %d records differ"
                        + " between two calls), %.0f evaluations per record%n",
                Measures.mean(flow), differing, n, evaluations));
        sb.append(String.format(Locale.ROOT, "  medians: bound (mean of seeds) %.3f, flow %.3f; flow quantiles 0.9 %.3f, 0.99 %.3f,"
                        + " largest %.4g; records where flow > bound + 10 nats: %d%n",
                Measures.quantile(boundMean, 0.5), Measures.quantile(flow, 0.5), Measures.quantile(flow, 0.9),
                Measures.quantile(flow, 0.99), Arrays.stream(flow).max().orElse(Double.NaN), above(flow, plus(boundMean, 10))));
        sb.append(String.format(Locale.ROOT, "  flow minus bound (mean of seeds): mean %.3f, sd %.3f; records where flow > bound: %d of %d%n",
                Measures.mean(minus(flow, boundMean)), Measures.sd(minus(flow, boundMean)), above(flow, boundMean), n));
        sb.append(String.format(Locale.ROOT, "  tolerances 1e-8: largest per-record change %.2e nats%n", maxAbs(minus(tight, flow))));
        sb.append(String.format(Locale.ROOT, "  Spearman rank correlation, flow vs bound seed 1: %.3f; vs mean of %d bound seeds: %.3f;"
                        + " bound seed 1 vs seed 2: %.3f%n",
                spearman.correlation(flow, bounds[0]), boundSeeds, spearman.correlation(flow, boundMean),
                boundSeeds > 1 ? spearman.correlation(bounds[0], bounds[1]) : Double.NaN));
        sb.append(String.format(Locale.ROOT, "  cost per record: bound %.2f ms wall, %.2f ms CPU; flow %.2f ms wall, %.2f ms CPU;"
                        + " ratio flow/bound %.0f (wall), %.0f (CPU)%n",
                boundCost.wallMs() / boundSeeds / n, boundCost.cpuMs() / boundSeeds / n, flowCost.wallMs() / 2 / n,
                flowCost.cpuMs() / 2 / n, (flowCost.wallMs() / 2) / (boundCost.wallMs() / boundSeeds),
                (flowCost.cpuMs() / 2) / (boundCost.cpuMs() / boundSeeds)));

        if (split.labels() != null) {
            Table normalTrain = split.normalTrain();
            DiffusionModel normalModel = Backstep.builder().seed(1).fit(normalTrain);
            Table screened = split.screened();
            int nn = split.screenedNormal();
            double[] flowScores = normalModel.flowLikelihood(screened).natsOriginalUnits();
            double[] boundScores = normalModel.bound(screened, 1).natsOriginalUnits();
            double[] boundAverage = new double[screened.rows()];
            for (int b = 0; b < boundSeeds; b++) {
                double[] s = normalModel.bound(screened, b + 1).natsOriginalUnits();
                for (int i = 0; i < s.length; i++) {
                    boundAverage[i] += s[i] / boundSeeds;
                }
            }
            sb.append(String.format(Locale.ROOT, "  anomaly ranks (fit on %d normal training rows; %d normal test rows,"
                            + " %d anomalous rows): AUROC flow %.4f, bound seed 1 %.4f, mean of %d bound seeds %.4f%n",
                    normalTrain.rows(), nn, screened.rows() - nn, auroc(flowScores, nn), auroc(boundScores, nn),
                    boundSeeds, auroc(boundAverage, nn)));
        }
        sb.append('\n');
        return sb.toString();
    }

    private static double auroc(double[] scores, int normal) {
        return Measures.auroc(Arrays.copyOf(scores, normal), Arrays.copyOfRange(scores, normal, scores.length));
    }

    private static void add(double[] a, double[] b) {
        for (int i = 0; i < a.length; i++) {
            a[i] += b[i];
        }
    }

    private static double[] minus(double[] a, double[] b) {
        double[] d = new double[a.length];
        for (int i = 0; i < a.length; i++) {
            d[i] = a[i] - b[i];
        }
        return d;
    }

    private static double[] plus(double[] a, double margin) {
        double[] d = a.clone();
        for (int i = 0; i < d.length; i++) {
            d[i] += margin;
        }
        return d;
    }

    private static int above(double[] a, double[] b) {
        int c = 0;
        for (int i = 0; i < a.length; i++) {
            if (a[i] > b[i]) {
                c++;
            }
        }
        return c;
    }

    private static double maxAbs(double[] a) {
        double m = 0;
        for (double v : a) {
            m = Math.max(m, Math.abs(v));
        }
        return m;
    }

    private static String format(double[] a) {
        List<String> s = new ArrayList<>();
        for (double v : a) {
            s.add(String.format(Locale.ROOT, "%.3f", v));
        }
        return String.join(" ", s);
    }

    private static double load() {
        return ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage();
    }

    /** Wall and process CPU time summed over timed calls. */
    private static final class Cost {
        private long wall;
        private long cpu;

        <T> T time(java.util.function.Supplier<T> work) {
            com.sun.management.OperatingSystemMXBean os =
                    (com.sun.management.OperatingSystemMXBean) ManagementFactory.getOperatingSystemMXBean();
            long c0 = os.getProcessCpuTime();
            long w0 = System.nanoTime();
            T result = work.get();
            wall += System.nanoTime() - w0;
            cpu += os.getProcessCpuTime() - c0;
            return result;
        }

        double wallMs() {
            return wall / 1e6;
        }

        double cpuMs() {
            return cpu / 1e6;
        }
    }
}
