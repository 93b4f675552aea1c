package org.backstep.bench;

import org.backstep.Backstep;
import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.io.AtomicFiles;
import org.backstep.option.BoundOptions;
import org.backstep.report.Imputation;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;

/**
 * Training on rows with missing cells, measured (issue 14, item 1). On open tables (iris,
 * breast_cancer, diabetes_raw without SEX; split of data/SOURCES.md: row i is a held-out row when
 * i % 5 == 0), 30% of the training rows get one or two missing cells completely at random (a fixed
 * seed), and three fits are compared:
 * <ul>
 *   <li>(a) COMPLETE: the complete training rows only (what the trainer did before);</li>
 *   <li>(b) GAPS: every training row, gaps filled by the trainer's stochastic EM;</li>
 *   <li>(c) FULL: the training rows without gaps (the ceiling).</li>
 * </ul>
 * Each is scored on the same held-out rows: the exact bound (all T terms), in nats per record in
 * the standardized space of data/SOURCES.md (the full training rows' mean and population sd, so
 * that the three models, whose own transforms differ, are compared in one space), and the RMSE of
 * the imputed means of 20% of the held-out cells, hidden at random (a fixed seed), in the same
 * standardized units. Library defaults except the number of updates.
 *
 * <p>Run: {@code diffusion-bench/incomplete-rows.sh [updates] [seeds]}; writes
 * {@code diffusion-bench/results/incomplete-rows.txt}.
 */
public final class IncompleteRowsMeasurement {

    /** Share of training rows given gaps. */
    static final double GAP_ROWS = 0.3;
    /** Share of held-out cells hidden for the imputation check. */
    static final double HIDDEN_CELLS = 0.2;
    static final long GAP_SEED = 14_001;
    static final long HIDE_SEED = 14_002;
    static final long SCORE_SEED = 14_003;

    private IncompleteRowsMeasurement() {
    }

    /** One table's rows, split and damaged. */
    record Case(String name, Table train, Table trainWithGaps, Table held, Table heldHidden, double[] mean,
                double[] sd, int gapRows, int gapCells, int hiddenCells) {
    }

    /** One fit's figures. */
    record Figures(double bound, double rmse, double seconds, int trainingRows) {
    }

    /**
     * @param args [data folder] [output file] [updates] [seeds]; defaults
     *     diffusion-core/src/test/resources/data, diffusion-bench/results/incomplete-rows.txt, 2000, 5
     * @throws Exception on a read or write failure
     */
    public static void main(String[] args) throws Exception {
        Path data = Path.of(args.length > 0 ? args[0] : "diffusion-core/src/test/resources/data");
        Path out = Path.of(args.length > 1 ? args[1] : "diffusion-bench/results/incomplete-rows.txt");
        int updates = args.length > 2 ? Integer.parseInt(args[2]) : 2000;
        int seeds = args.length > 3 ? Integer.parseInt(args[3]) : 5;
        List<Case> cases = List.of(
                prepare("iris", read(data.resolve("iris.csv"))),
                prepare("breast_cancer", read(data.resolve("breast_cancer.csv"))),
                prepare("diabetes_raw", withoutColumn(read(data.resolve("diabetes_raw.csv")), "SEX")));

        List<String> lines = new ArrayList<>();
        String started = java.time.Instant.now().toString();
        String load = Files.readString(Path.of("/proc/loadavg")).trim();
        lines.add("# Training on rows with missing cells: complete rows only (a), stochastic EM on every row (b),");
        lines.add("# the rows without gaps (c). Written by org.backstep.bench.IncompleteRowsMeasurement");
        lines.add("# (diffusion-bench/incomplete-rows.sh " + updates + " " + seeds + "), started " + started + ".");
        lines.add("# Machine: " + Runtime.getRuntime().availableProcessors() + " CPUs, shared with other work; load average at start "
                + load + "; Java " + System.getProperty("java.version") + "; OPENBLAS_CORETYPE "
                + (System.getenv("OPENBLAS_CORETYPE") == null ? "not set" : System.getenv("OPENBLAS_CORETYPE"))
                + "; training threads " + Defaults.threads() + ".");
        lines.add("# Library defaults (T = " + Defaults.STEPS + ", hidden " + Defaults.HIDDEN + ", batch " + Defaults.BATCH_SIZE
                + ", checkpoint fraction " + Defaults.CHECKPOINT_FRACTION + ") except " + updates + " updates per fit;");
        lines.add("# seeds 1.." + seeds + " (the fit's seed; the gaps and hidden cells are the same for every seed).");
        lines.add("# Split of data/SOURCES.md: row i held out when i % 5 == 0. Gaps: " + pct(GAP_ROWS)
                + " of the training rows, each with 1 or 2 (equally likely)");
        lines.add("# missing cells in distinct columns, completely at random (seed " + GAP_SEED + ").");
        lines.add("# bound: held-out exact bound (all T terms), nats per record, in the standardized space of the full");
        lines.add("#   training rows (SOURCES.md; comparable with its baselines); lower is better.");
        lines.add("# rmse: " + pct(HIDDEN_CELLS) + " of the held-out cells hidden at random (seed " + HIDE_SEED
                + "), imputed by Defaults.imputation()");
        lines.add("#   (20 draws, 100 steps, replacement); root mean square error of the imputed mean, in full-training-row sd.");
        lines.add("# s: wall seconds of the fit (a shared machine: indicative only).");
        for (Case c : cases) {
            lines.add("# " + c.name() + ": " + c.train().rows() + " training rows, " + c.gapRows() + " given gaps ("
                    + c.gapCells() + " cells), " + c.trainWithGaps().completeRows().rows() + " complete; "
                    + c.held().rows() + " held-out rows, " + c.hiddenCells() + " cells hidden; " + c.train().columns() + " columns.");
        }
        lines.add("#");
        lines.add(String.format(Locale.ROOT, "%-14s %4s | %8s %8s %8s | %7s %7s %7s | %6s %6s %6s",
                "table", "seed", "bound a", "bound b", "bound c", "rmse a", "rmse b", "rmse c", "s a", "s b", "s c"));
        write(out, lines);
        List<String> summary = new ArrayList<>();
        summary.add("#");
        summary.add("# Mean over seeds (sd over seeds in brackets); b - a < 0 and b - c near 0 are the goal.");
        summary.add(String.format(Locale.ROOT, "%-14s | %-15s %-15s %-15s | %-15s %-15s | %-13s %-13s %-13s | %-13s %-13s",
                "table", "bound a", "bound b", "bound c", "bound b-a", "bound b-c", "rmse a", "rmse b", "rmse c",
                "rmse b-a", "rmse b-c"));
        for (Case c : cases) {
            double[][] bound = new double[3][seeds];
            double[][] rmse = new double[3][seeds];
            for (int s = 1; s <= seeds; s++) {
                Figures a = fit(c, c.trainWithGaps().completeRows(), updates, s);
                Figures b = fit(c, c.trainWithGaps(), updates, s);
                Figures f = fit(c, c.train(), updates, s);
                Figures[] all = {a, b, f};
                for (int m = 0; m < 3; m++) {
                    bound[m][s - 1] = all[m].bound();
                    rmse[m][s - 1] = all[m].rmse();
                }
                lines.add(String.format(Locale.ROOT, "%-14s %4d | %8.3f %8.3f %8.3f | %7.4f %7.4f %7.4f | %6.1f %6.1f %6.1f",
                        c.name(), s, a.bound(), b.bound(), f.bound(), a.rmse(), b.rmse(), f.rmse(), a.seconds(),
                        b.seconds(), f.seconds()));
                write(out, lines);
            }
            summary.add(String.format(Locale.ROOT, "%-14s | %-15s %-15s %-15s | %-15s %-15s | %-13s %-13s %-13s | %-13s %-13s",
                    c.name(), ms(bound[0], 3), ms(bound[1], 3), ms(bound[2], 3), ms(diff(bound[1], bound[0]), 3),
                    ms(diff(bound[1], bound[2]), 3), ms(rmse[0], 4), ms(rmse[1], 4), ms(rmse[2], 4),
                    ms(diff(rmse[1], rmse[0]), 4), ms(diff(rmse[1], rmse[2]), 4)));
        }
        lines.addAll(summary);
        lines.add("# finished " + java.time.Instant.now() + "; load average " + Files.readString(Path.of("/proc/loadavg")).trim());
        write(out, lines);
    }

    private static Figures fit(Case c, Table training, int updates, long seed) {
        long t0 = System.nanoTime();
        DiffusionModel model = Backstep.builder().trainingSteps(updates).seed(seed).fit(training);
        double seconds = (System.nanoTime() - t0) / 1e9;
        // nats in original units, then into the standardized space of the full training rows:
        // -log p_z = -log p_x - sum_j log s_j (change of variables, z = (x - m) / s)
        double logSd = Arrays.stream(c.sd()).map(Math::log).sum();
        double bound = model.bound(c.held(), BoundOptions.exact(), SCORE_SEED).meanNatsOriginalUnits() - logSd;
        Imputation imp = model.impute(c.heldHidden(), Defaults.imputation(), SCORE_SEED);
        double sq = 0.0;
        int cells = 0;
        for (int i = 0; i < c.held().rows(); i++) {
            for (int j = 0; j < c.held().columns(); j++) {
                if (Double.isNaN(c.heldHidden().get(i, j))) {
                    double e = (imp.mean().get(i, j) - c.held().get(i, j)) / c.sd()[j];
                    sq += e * e;
                    cells++;
                }
            }
        }
        return new Figures(bound, Math.sqrt(sq / cells), seconds, model.provenance().trainingRows());
    }

    static Case prepare(String name, Table all) {
        Table train = all.filterRows(i -> i % 5 != 0);
        Table held = all.filterRows(i -> i % 5 == 0);
        int cols = all.columns();
        double[] mean = new double[cols];
        double[] sd = new double[cols];
        for (int j = 0; j < cols; j++) {
            double[] x = train.column(j);
            mean[j] = Arrays.stream(x).average().orElseThrow();
            double m = mean[j];
            sd[j] = Math.sqrt(Arrays.stream(x).map(v -> (v - m) * (v - m)).sum() / x.length);
        }
        // gaps: round(30% of the rows) rows drawn without replacement, each 1 or 2 distinct columns
        SplittableRandom rng = new SplittableRandom(GAP_SEED);
        double[][] rows = train.toArray();
        int[] order = shuffled(rows.length, rng);
        int gapRows = (int) Math.round(GAP_ROWS * rows.length);
        int gapCells = 0;
        for (int g = 0; g < gapRows; g++) {
            int cellsHere = rng.nextBoolean() ? 1 : 2;
            int[] columns = shuffled(cols, rng);
            for (int q = 0; q < cellsHere; q++) {
                rows[order[g]][columns[q]] = Double.NaN;
                gapCells++;
            }
        }
        Table withGaps = train.withRows(rows);
        // hidden cells: round(20% of the held-out cells) drawn without replacement
        SplittableRandom hide = new SplittableRandom(HIDE_SEED);
        double[][] h = held.toArray();
        int[] cellOrder = shuffled(h.length * cols, hide);
        int hidden = (int) Math.round(HIDDEN_CELLS * h.length * cols);
        for (int q = 0; q < hidden; q++) {
            h[cellOrder[q] / cols][cellOrder[q] % cols] = Double.NaN;
        }
        return new Case(name, train, withGaps, held, held.withRows(h), mean, sd, gapRows, gapCells, hidden);
    }

    /** A random permutation of 0..n-1 (Fisher-Yates; Knuth, TAOCP vol. 2, algorithm P). */
    static int[] shuffled(int n, SplittableRandom rng) {
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            p[i] = i;
        }
        for (int i = n - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = p[i];
            p[i] = p[j];
            p[j] = t;
        }
        return p;
    }

    private static Table read(Path csv) throws Exception {
        return CsvTables.reader().read(csv);
    }

    private static Table withoutColumn(Table t, String drop) {
        return t.selectColumns(t.names().stream().filter(n -> !n.equals(drop)).toArray(String[]::new));
    }

    private static double[] diff(double[] x, double[] y) {
        double[] d = new double[x.length];
        for (int i = 0; i < x.length; i++) {
            d[i] = x[i] - y[i];
        }
        return d;
    }

    /** "mean (sd)" over seeds; sd with n - 1. */
    private static String ms(double[] x, int digits) {
        double m = Arrays.stream(x).average().orElseThrow();
        double sd = x.length < 2 ? 0.0 : Math.sqrt(Arrays.stream(x).map(v -> (v - m) * (v - m)).sum() / (x.length - 1));
        return String.format(Locale.ROOT, "%+." + digits + "f (%." + digits + "f)", m, sd);
    }

    private static String pct(double share) {
        return Math.round(100 * share) + "%";
    }

    private static void write(Path out, List<String> lines) throws Exception {
        AtomicFiles.write(out, (String.join("\n", lines) + "\n").getBytes(StandardCharsets.UTF_8));
    }
}
