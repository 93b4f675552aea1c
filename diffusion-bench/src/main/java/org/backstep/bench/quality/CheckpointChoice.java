package org.backstep.bench.quality;

import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.train.CheckpointScore;
import org.backstep.internal.train.Trainer;
import org.backstep.internal.train.TrainingRun;
import org.backstep.option.BoundOptions;
import org.backstep.option.FitOptions;
import org.backstep.table.Table;

/**
 * The trainer's choice of the kept weights by each {@link CheckpointScore} (issue 11 items 1 and
 * 6): for each table of SOURCES.md's split and fit seed, two fits at the library's defaults (the
 * same seed, so the same updates: they differ only in the weights kept), and the held-out bound of
 * each fit's kept weights on the test rows, by the steady bound (BoundOptions.steady(K), bound seed
 * 1; a few hundredths of a nat per record) in SOURCES.md's standardized space, and the fit's wall
 * and process CPU seconds. A measuring program: it runs the trainer's internal {@link TrainingRun}.
 *
 * <pre>
 *   java -cp diffusion-bench/target/benchmarks.jar org.backstep.bench.quality.CheckpointChoice \
 *     --data diffusion-core/src/test/resources/data --labels diffusion-bench/data \
 *     [--tables iris,breast_cancer,diabetes_raw_without_SEX] [--seeds 1,2,3] [--held-out-draws 16]
 * </pre>
 */
public final class CheckpointChoice {

    private CheckpointChoice() {
    }

    /** @param args see the class comment @throws Exception on a file error */
    public static void main(String[] args) throws Exception {
        Map<String, String> opt = Options.parse(args, new java.util.TreeSet<>(Set.of("--data", "--labels", "--tables",
                "--seeds", "--held-out-draws")));
        Path data = Path.of(opt.get("--data"));
        Path labels = Path.of(opt.get("--labels"));
        List<String> tables = List.of(opt.getOrDefault("--tables", "iris,breast_cancer,diabetes_raw_without_SEX").split(","));
        List<Long> seeds = Arrays.stream(opt.getOrDefault("--seeds", "1,2,3").split(",")).map(Long::parseLong).toList();
        int heldOutDraws = Integer.parseInt(opt.getOrDefault("--held-out-draws", "16"));
        System.out.printf(Locale.ROOT, "CheckpointChoice started %s; %s %s %s, %d CPUs; load average %s; java %s;"
                        + " OPENBLAS_CORETYPE %s%n", java.time.Instant.now(), System.getProperty("os.name"),
                System.getProperty("os.version"), System.getProperty("os.arch"), Runtime.getRuntime().availableProcessors(),
                Options.load(), System.getProperty("java.version"), System.getenv().getOrDefault("OPENBLAS_CORETYPE", "(not set)"));
        System.out.println("table, seed, score, held-out nats (steady bound, SOURCES.md space), kept checkpoint bound, fit wall s, fit CPU s");
        // seeds outermost, so that a busy spell of the shared machine falls on every table alike
        for (long seed : seeds) {
            for (OpenTable t : OpenTable.ALL) {
                if (!tables.contains(t.key())) {
                    continue;
                }
                OpenTable.Split split = t.read(data, labels);
                Table train = split.train();
                Table test = split.test();
                double[] sourcesJacobian = split.standardized().logJacobian(test);
                double[] held = new double[CheckpointScore.values().length];
                for (CheckpointScore score : CheckpointScore.values()) {
                    // the Monte Carlo bound as the trainer drew it before the steady default: 32 steps per row.
                    // Standardized maps, as results/steady-use.txt measured: the defaults' Marginals.CHOSEN
                    // run through TrainingRun directly (as here) would take the criterion's maps but skip the
                    // comparison fit of MarginalChoice, neither the library's fit nor the one measured.
                    FitOptions options = score == CheckpointScore.SAMPLED
                            ? Lever.STANDARDIZED_MARGINALS.builder(seed).checkpointDraws(32).options()
                            : Lever.STANDARDIZED_MARGINALS.builder(seed).options();
                    long c0 = Options.cpu();
                    long w0 = System.nanoTime();
                    Trainer.Fitted fitted;
                    try (TrainingRun run = new TrainingRun(options, train, null, p -> { }, () -> false, null)) {
                        run.scoreCheckpointsBy(score);
                        run.advance(Long.MAX_VALUE);
                        fitted = run.finish();
                    }
                    double wall = (System.nanoTime() - w0) / 1e9;
                    double cpuS = (Options.cpu() - c0) / 1e9;
                    double[] nats = new Engine(fitted.parts()).bound(test, BoundOptions.steady(heldOutDraws), 1L)
                            .natsOriginalUnits();
                    for (int i = 0; i < nats.length; i++) {
                        nats[i] += sourcesJacobian[i];
                    }
                    held[score.ordinal()] = Measures.mean(nats);
                    double kept = fitted.parts().provenance().history().stream()
                            .filter(e -> e.checkpointBound().isPresent())
                            .mapToDouble(e -> e.checkpointBound().getAsDouble()).min().orElse(Double.NaN);
                    System.out.printf(Locale.ROOT, "%s, %d, %s, %.4f, %.4f, %.1f, %.1f%n", t.key(), seed, score,
                            held[score.ordinal()], kept, wall, cpuS);
                }
                System.out.printf(Locale.ROOT, "%s, %d, STEADY - SAMPLED, %.4f%n", t.key(), seed,
                        held[CheckpointScore.STEADY.ordinal()] - held[CheckpointScore.SAMPLED.ordinal()]);
            }
        }
        System.out.printf(Locale.ROOT, "finished %s; load average %s%n", java.time.Instant.now(), Options.load());
    }
}
