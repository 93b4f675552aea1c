package org.backstep.bench.quality;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;

import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.report.Imputation;
import org.backstep.table.Table;

/**
 * Imputation against the number of draws (issue 11, item 3), on QualityBenchmark's protocol: a
 * model fitted at the defaults on the training rows of SOURCES.md's split, the hidden cells of the
 * baselines file (20% of the test rows' cells) set missing, {@code impute} with k draws at level 0.9
 * and two imputation seeds per fit (fit seed x 100 + 1 and + 2); RMSE of the imputed means in the
 * standardized units of SOURCES.md, the share of hidden continuous cells inside their interval,
 * {@code Imputation.expectedCoverage()} and the wall-clock seconds of {@code impute}. The mean of k
 * draws has a Monte Carlo error of 1/k of the conditional variance, which the RMSE carries.
 *
 * <pre>
 *   java -cp diffusion-bench/target/benchmarks.jar org.backstep.bench.quality.ImputationDraws \
 *     --baselines diffusion-bench/results/quality-baselines.json --data ../shared/data --labels ../shared/data \
 *     [--tables breast_cancer,diabetes_raw_without_SEX] [--draws 20,100,400] [--seeds 1,2]
 * </pre>
 */
public final class ImputationDraws {

    private ImputationDraws() {
    }

    /** @param args see the class comment @throws Exception on a file error */
    public static void main(String[] args) throws Exception {
        Map<String, String> opt = Options.parse(args, new TreeSet<>(Set.of("--baselines", "--data", "--labels", "--tables",
                "--draws", "--seeds")));
        JsonNode baselines = new ObjectMapper().readTree(Files.readString(Path.of(opt.get("--baselines")),
                StandardCharsets.UTF_8));
        Path data = Path.of(opt.get("--data"));
        Path labels = Path.of(opt.get("--labels"));
        List<String> tables = List.of(opt.getOrDefault("--tables", "breast_cancer,diabetes_raw_without_SEX").split(","));
        int[] draws = Arrays.stream(opt.getOrDefault("--draws", "20,100").split(",")).mapToInt(Integer::parseInt).toArray();
        long[] seeds = Arrays.stream(opt.getOrDefault("--seeds", "1,2").split(",")).mapToLong(Long::parseLong).toArray();
        System.out.printf(Locale.ROOT, "ImputationDraws started %s; %s %s %s, %d CPUs; load average %s; java %s;"
                        + " OPENBLAS_CORETYPE %s; Backstep threads %d%n", java.time.Instant.now(),
                System.getProperty("os.name"), System.getProperty("os.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors(), Options.load(), System.getProperty("java.version"),
                System.getenv().getOrDefault("OPENBLAS_CORETYPE", "(not set)"), Defaults.threads());
        System.out.println("table, fit seed, draws, imputation seed: RMSE (standardized units), coverage of the 90%"
                + " intervals, expected coverage, seconds");
        for (OpenTable t : OpenTable.ALL) {
            if (!tables.contains(t.key())) {
                continue;
            }
            OpenTable.Split split = t.read(data, labels);
            Table test = split.test();
            HiddenCells hidden = HiddenCells.of(baselines, t.key(), test);
            Table masked = hidden.masked();
            for (long seed : seeds) {
                DiffusionModel model = Lever.DEFAULTS.builder(seed).fit(split.train());
                for (int k : draws) {
                    for (long is = 1; is <= 2; is++) {
                        long t0 = System.nanoTime();
                        Imputation imp = model.impute(masked, Defaults.imputation().withDraws(k), seed * 100 + is);
                        double seconds = (System.nanoTime() - t0) / 1e9;
                        HiddenCells.Score score = hidden.score(imp.mean().toArray(), imp.lower().toArray(),
                                imp.upper().toArray(), split.scales());
                        System.out.printf(Locale.ROOT, "%s, %d, %d, %d: %.4f %.3f %.3f %.1f%n", t.key(), seed, k, seed * 100 + is,
                                score.rmse(), score.coverage(), imp.expectedCoverage(), seconds);
                    }
                }
            }
        }
    }
}
