package org.backstep.bench.quality;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;

import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.option.BoundOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.table.Table;

/**
 * The anomaly ranks of {@code screen} by the bound it scores with (issue 11 items 1 and 4), on
 * QualityBenchmark's protocol (SOURCES.md): a model fitted at the defaults on the normal training
 * rows; {@code screen(held-out normal rows, held-out normal rows + every anomalous row,
 * Defaults.screening().withBound(B).withQuantile(0.99), seed)} for each bound B of the list, on the
 * same fitted model (no per-column surprisal, so that the CPU time is the scores'); the AUROC of
 * the scores, the per-record sd of the scores over screen seeds (root mean square over the normal
 * screened records, and the median over all) and the process CPU seconds of one screen.
 *
 * <pre>
 *   java -cp diffusion-bench/target/benchmarks.jar org.backstep.bench.quality.ScreenScores \
 *     --data diffusion-core/src/test/resources/data --labels diffusion-bench/data \
 *     [--tables breast_cancer,digits_binary] [--seeds 1,2] [--screen-seeds 3] [--models DIR]
 *     [--bounds sampled:128,steady:16,exact]
 * </pre>
 */
public final class ScreenScores {

    private ScreenScores() {
    }

    /** @param args see the class comment @throws Exception on a file error */
    public static void main(String[] args) throws Exception {
        Map<String, String> opt = Options.parse(args, new java.util.TreeSet<>(Set.of("--data", "--labels", "--tables",
                "--seeds", "--screen-seeds", "--models", "--bounds")));
        Path data = Path.of(opt.get("--data"));
        Path labels = Path.of(opt.get("--labels"));
        List<String> tables = List.of(opt.getOrDefault("--tables", "breast_cancer,digits_binary").split(","));
        List<Long> seeds = Arrays.stream(opt.getOrDefault("--seeds", "1").split(",")).map(Long::parseLong).toList();
        int screenSeeds = Integer.parseInt(opt.getOrDefault("--screen-seeds", "2"));
        Path models = opt.containsKey("--models") ? Path.of(opt.get("--models")) : null;
        List<String> bounds = List.of(opt.getOrDefault("--bounds", "sampled:128,steady:16,exact").split(","));
        System.out.printf(Locale.ROOT, "ScreenScores started %s; %s %s %s, %d CPUs; load average %s; java %s;"
                        + " OPENBLAS_CORETYPE %s; Backstep threads %d%n", java.time.Instant.now(),
                System.getProperty("os.name"), System.getProperty("os.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors(), Options.load(), System.getProperty("java.version"),
                System.getenv().getOrDefault("OPENBLAS_CORETYPE", "(not set)"), Defaults.threads());
        for (OpenTable t : OpenTable.ALL) {
            if (!tables.contains(t.key())) {
                continue;
            }
            OpenTable.Split split = t.read(data, labels);
            if (split.labels() == null) {
                continue;
            }
            for (long seed : seeds) {
                Table normalTrain = split.normalTrain();
                DiffusionModel model;
                Path file = models == null ? null : models.resolve(t.key() + "-normal-" + seed + ".backstep");
                if (file != null && Files.exists(file)) {
                    model = DiffusionModel.load(file);
                } else {
                    model = Lever.DEFAULTS.builder(seed).fit(normalTrain);
                    if (file != null) {
                        model.save(file);
                    }
                }
                Table held = split.normalTest();
                Table screened = split.screened();
                int nn = split.screenedNormal();
                System.out.printf(Locale.ROOT, "%n%s, fit seed %d: %d normal training rows; screened %d normal + %d anomalous%n",
                        split.table().label(), seed, normalTrain.rows(), nn, screened.rows() - nn);
                double baseCpu = Double.NaN;
                for (String b : bounds) {
                    BoundOptions how = parse(b);
                    double[][] scores = new double[screenSeeds][];
                    double cpuSum = 0;
                    double[] aurocs = new double[screenSeeds];
                    for (int s = 0; s < screenSeeds; s++) {
                        long c0 = Options.cpu();
                        AnomalyScreen screen = model.screen(held, screened,
                                Defaults.screening().withBound(how).withQuantile(0.99)
                                        .withSurprisal(org.backstep.option.SurprisalOptions.none()), 100L + s);
                        cpuSum += (Options.cpu() - c0) / 1e9;
                        scores[s] = screen.scores();
                        aurocs[s] = Measures.auroc(Arrays.copyOf(scores[s], nn), Arrays.copyOfRange(scores[s], nn, scores[s].length));
                    }
                    // normal records: rms of the per-record sd (an anomaly's score can be 1e5 nats, its sd as large)
                    double squares = 0;
                    double[] sds = new double[screened.rows()];
                    for (int i = 0; i < screened.rows(); i++) {
                        double[] across = new double[screenSeeds];
                        for (int s = 0; s < screenSeeds; s++) {
                            across[s] = scores[s][i];
                        }
                        sds[i] = screenSeeds > 1 ? Measures.sd(across) : Double.NaN;
                        if (i < nn) {
                            squares += sds[i] * sds[i];
                        }
                    }
                    double cpuPer = cpuSum / screenSeeds;
                    if (Double.isNaN(baseCpu)) {
                        baseCpu = cpuPer;
                    }
                    System.out.printf(Locale.ROOT, "  %-14s AUROC %s (mean %.4f)  record sd: normal rms %.4f, median all %.4f"
                                    + "  CPU s/screen %.2f (x%.1f of the first; %.2f ms per record scored)%n",
                            b, Arrays.toString(Arrays.stream(aurocs).mapToObj(a -> String.format(Locale.ROOT, "%.4f", a)).toArray()),
                            Measures.mean(aurocs), Math.sqrt(squares / nn), Measures.quantile(sds, 0.5), cpuPer, cpuPer / baseCpu,
                            1e3 * cpuPer / (held.rows() + screened.rows()));
                }
            }
        }
        System.out.printf(Locale.ROOT, "finished %s; load average %s%n", java.time.Instant.now(), Options.load());
    }

    private static BoundOptions parse(String b) {
        String[] p = b.split(":");
        return switch (p[0]) {
            case "sampled" -> BoundOptions.sampled(Integer.parseInt(p[1]));
            case "steady" -> BoundOptions.steady(Integer.parseInt(p[1]));
            case "uniform" -> BoundOptions.steady(Integer.parseInt(p[1])).withAllocation(false);
            case "exact" -> BoundOptions.exact();
            case "target" -> BoundOptions.steadyWithin(Double.parseDouble(p[1]), Integer.parseInt(p[2]));
            case "default" -> Defaults.screening().bound();
            default -> throw new IllegalArgumentException("bound '" + b + "'; expected sampled:K, steady:K, uniform:K,"
                    + " target:SD:CAP, default or exact");
        };
    }
}
