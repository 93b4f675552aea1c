package org.backstep.bench.quality;

import java.lang.reflect.Field;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;

import org.backstep.DiffusionModel;
import org.backstep.internal.chain.BoundEvaluator;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.TermDraws;
import org.backstep.table.Table;

/**
 * The seed-to-seed spread of the per-record exact bound by the draws of its terms (issue 11 item
 * 1): fits Backstep (at its defaults, and whitened outside the library with the N(0, I) part, the
 * benchmark's WHITENED_STANDARD_NORMAL_PART lever) on the fixed split of SOURCES.md, measures each
 * term's spread over its draws on training rows (the per-step profile), and then, on the test rows,
 * the per-record sd of the bound over bound seeds and the CPU seconds of each candidate draw plan.
 * A measuring program: it reaches the chain through the model's engine by reflection.
 *
 * <pre>
 *   java -cp diffusion-bench/target/benchmarks.jar org.backstep.bench.quality.ScoreVariance \
 *     --data diffusion-core/src/test/resources/data --labels diffusion-bench/data [--tables iris,...]
 *     [--bound-seeds 5] [--models DIR (fitted models kept and reused)] [--plans LIST] [--test-rows N (the first N)]
 * </pre>
 */
public final class ScoreVariance {

    /** The first test rows measured, 0 for all (--test-rows). */
    private static int testRows;

    private ScoreVariance() {
    }

    /** @param args see the class comment @throws Exception on a file or reflection error */
    public static void main(String[] args) throws Exception {
        Map<String, String> opt = Options.parse(args, new java.util.TreeSet<>(Set.of("--data", "--labels", "--bound-seeds",
                "--pilot", "--pilot-rows", "--models", "--tables", "--plans", "--levers", "--test-rows")));
        Path data = Path.of(opt.get("--data"));
        Path labels = Path.of(opt.get("--labels"));
        int seeds = Integer.parseInt(opt.getOrDefault("--bound-seeds", "5"));
        int pilot = Integer.parseInt(opt.getOrDefault("--pilot", "8"));
        int pilotRows = Integer.parseInt(opt.getOrDefault("--pilot-rows", "120"));
        testRows = Integer.parseInt(opt.getOrDefault("--test-rows", "0"));
        Path models = opt.containsKey("--models") ? Path.of(opt.get("--models")) : null;
        List<String> tables = opt.containsKey("--tables") ? List.of(opt.get("--tables").split(","))
                : OpenTable.ALL.stream().map(OpenTable::key).toList();
        List<String> plans = List.of(opt.getOrDefault("--plans",
                "INDEPENDENT:1,INDEPENDENT:8,ANTITHETIC:8,SHIFTED_SOBOL:8,NEYMAN-INDEPENDENT:8,NEYMAN-SHIFTED_SOBOL:8").split(","));
        List<Lever> levers = opt.containsKey("--levers")
                ? Arrays.stream(opt.get("--levers").split(",")).map(Lever::valueOf).toList()
                : List.of(Lever.DEFAULTS, Lever.WHITENED_STANDARD_NORMAL_PART);
        System.out.printf(Locale.ROOT, "ScoreVariance started %s; %s %s %s, %d CPUs; load average %s; java %s; OPENBLAS_CORETYPE %s%n",
                java.time.Instant.now(), System.getProperty("os.name"), System.getProperty("os.version"),
                System.getProperty("os.arch"), Runtime.getRuntime().availableProcessors(), Options.load(),
                System.getProperty("java.version"), System.getenv().getOrDefault("OPENBLAS_CORETYPE", "(not set)"));
        for (OpenTable t : OpenTable.ALL) {
            if (!tables.contains(t.key())) {
                continue;
            }
            OpenTable.Split split = t.read(data, labels);
            for (Lever lever : levers) {
                if (lever != Lever.DEFAULTS && split.train().continuousColumns().length == 0) {
                    continue;
                }
                measure(split, lever, models, seeds, pilot, pilotRows, plans);
            }
        }
        System.out.printf(Locale.ROOT, "finished %s; load average %s%n", java.time.Instant.now(), Options.load());
    }

    private static void measure(OpenTable.Split split, Lever lever, Path models, int seeds, int pilot, int pilotRows,
                                List<String> plans) throws Exception {
        Lever.Encoding enc = lever.fit(split.train());
        Table train = enc.encode(split.train());
        Table test = enc.encode(testRows > 0 && testRows < split.test().rows()
                ? split.test().selectRows(firstRows(testRows)) : split.test());
        DiffusionModel model;
        Path file = models == null ? null : models.resolve(split.table().key() + "-" + lever.name() + "-1.backstep");
        if (file != null && Files.exists(file)) {
            model = DiffusionModel.load(file);
        } else {
            model = lever.builder(1).fit(train);
            if (file != null) {
                model.save(file);
            }
        }
        Field f = DiffusionModel.class.getDeclaredField("engine");
        f.setAccessible(true);
        Engine engine = (Engine) f.get(model);
        Chain chain = engine.chainOf(0);
        float[] xTrain = engine.modelSpace(train.selectRows(firstRows(Math.min(pilotRows, train.rows()))));
        float[] xTest = engine.modelSpace(test);
        int nPilot = Math.min(pilotRows, train.rows());
        int nTest = test.rows();
        System.out.printf(Locale.ROOT, "%n%s, %s: %d training rows (%d in the pilot), %d test rows%n",
                split.table().label(), lever, train.rows(), nPilot, nTest);

        long c0 = Options.cpu();
        int pilotLinear = Integer.parseInt(System.getProperty("pilotLinear", "0"));
        double[] spread = BoundEvaluator.termSpread(chain, xTrain, nPilot, pilot, pilotLinear, 99L, 2);
        int steps = spread.length - 1;
        double pilotCpu = (Options.cpu() - c0) / 1e9;
        double var1 = 0;
        double sumSd = 0;
        Integer[] order = new Integer[steps];
        for (int s = 1; s <= steps; s++) {
            var1 += spread[s] * spread[s];
            sumSd += spread[s];
            order[s - 1] = s;
        }
        Arrays.sort(order, (a, b) -> Double.compare(spread[b], spread[a]));
        StringBuilder top = new StringBuilder();
        double cum = 0;
        for (int i = 0; i < 10; i++) {
            cum += spread[order[i]] * spread[order[i]];
            top.append(String.format(Locale.ROOT, " t=%d:%.3f", order[i], spread[order[i]]));
        }
        System.out.printf(Locale.ROOT, "  linearized up to step %d in the pilot%n", pilotLinear);
        System.out.printf(Locale.ROOT, "  per-term spread (pilot %d draws, %.1f CPU s): one draw per term predicts record sd %.3f;"
                        + " largest ten terms%s (%.0f%% of the variance); Neyman with K draws per term on average predicts"
                        + " %.3f / sqrt(K), uniform K %.3f / sqrt(K)%n",
                pilot, pilotCpu, Math.sqrt(var1), top, 100 * cum / var1, sumSd / Math.sqrt(steps), Math.sqrt(var1));
        StringBuilder prof = new StringBuilder("  spread by step:");
        for (int s = 1; s <= steps; s++) {
            prof.append(String.format(Locale.ROOT, " %.3g", spread[s]));
        }
        System.out.println(prof);

        // the model's own profile, which the STEADY and TARGET plans allocate by and every plan's
        // prediction reads: measured once per model and chain (Engine keeps it), so timed once, here
        long profileStart = Options.cpu();
        engine.profile(chain);
        System.out.printf(Locale.ROOT, "  the model's profile (TermProfile, measured once per model): %.1f CPU s%n",
                (Options.cpu() - profileStart) / 1e9);

        double baseCpu = Double.NaN;
        for (String plan : plans) {
            String[] p = plan.split(":");
            int k = p[0].equals("TARGET") ? 0 : Integer.parseInt(p[1]);
            TermDraws draws;
            if (p[0].equals("STEADY") || p[0].equals("TARGET")) {
                // the library's allocations by the profile: the noise of K draws per term (BoundOptions.steady(K)),
                // or a predicted per-record sd under a cap (TARGET:sd[:cap], BoundOptions.steadyWithin(sd, cap))
                org.backstep.option.BoundOptions how = p[0].equals("STEADY") ? org.backstep.option.BoundOptions.steady(k)
                        : org.backstep.option.BoundOptions.steadyWithin(Double.parseDouble(p[1]),
                                p.length > 2 ? Integer.parseInt(p[2]) : org.backstep.option.BoundOptions.MAX_TERM_DRAWS);
                draws = engine.drawPlan(how, chain);
                System.out.printf(Locale.ROOT, "  %s: %d draws, %d linearized steps; draws by step:%s%n",
                        plan, draws.total(), draws.linearizedSteps(), perStep(draws, steps));
                if (p[0].equals("TARGET")) {
                    p = new String[] {p[0], "0"};   // its third field is the cap, not linearized steps
                }
            } else if (p[0].startsWith("NEYMAN-")) {
                draws = TermDraws.allocated(TermDraws.Kind.valueOf(p[0].substring(7)), neyman(spread, k));
            } else {
                draws = TermDraws.uniform(TermDraws.Kind.valueOf(p[0]), k, steps);
            }
            if (p.length > 2) {
                draws = draws.linearizedUpTo(p[2].equals("T") ? steps : Integer.parseInt(p[2]));
            }
            double[][] nats = new double[seeds][];
            long before = Options.cpu();
            long wall = System.nanoTime();
            for (int b = 0; b < seeds; b++) {
                BoundEvaluator.Result r = BoundEvaluator.exact(chain, xTest, nTest, b + 1L, null, draws, 2);
                nats[b] = new double[nTest];
                for (int i = 0; i < nTest; i++) {
                    nats[b][i] = r.continuous[i] + r.binary[i];
                }
            }
            double cpuPerSeed = (Options.cpu() - before) / 1e9 / seeds;
            double wallPerSeed = (System.nanoTime() - wall) / 1e9 / seeds;
            if (Double.isNaN(baseCpu)) {
                baseCpu = cpuPerSeed;
            }
            double squares = 0;
            double mean = 0;
            for (int i = 0; i < nTest; i++) {
                double[] across = new double[seeds];
                for (int b = 0; b < seeds; b++) {
                    across[b] = nats[b][i];
                    mean += nats[b][i];
                }
                double sd = Measures.sd(across);
                squares += sd * sd;
            }
            double predicted = Math.sqrt(engine.profile(chain).predictedVariance(draws));
            long evals = draws.total() + (long) draws.linearizedSteps() * (2L * chain.continuousColumns() + 1L + chain.binaryColumns());
            System.out.printf(Locale.ROOT, "  %-26s evals/record %6d (with linearization %6d)  record sd %.4f (profile predicts %.4f)  mean nats (model space) %.4f  CPU s/seed %.2f"
                            + " (x%.1f)  wall s/seed %.2f%n", plan, draws.total(), evals, Math.sqrt(squares / nTest), predicted,
                    mean / nTest / seeds, cpuPerSeed, cpuPerSeed / baseCpu, wallPerSeed);
        }
    }

    private static String perStep(TermDraws draws, int steps) {
        StringBuilder b = new StringBuilder();
        for (int s = 1; s <= steps; s++) {
            b.append(' ').append(draws.at(s)).append(draws.linearizes(s) ? "L" : "");
        }
        return b.toString();
    }

    /** K_t proportional to the spread, at least 1, about K T in all (Cochran 1977, section 5.5). */
    static int[] neyman(double[] spread, int k) {
        int steps = spread.length - 1;
        double sum = 0;
        for (int s = 1; s <= steps; s++) {
            sum += spread[s];
        }
        int[] per = new int[steps + 1];
        for (int s = 1; s <= steps; s++) {
            per[s] = Math.max(1, (int) Math.round((double) k * steps * spread[s] / sum));
        }
        return per;
    }

    private static int[] firstRows(int n) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = i;
        }
        return r;
    }
}
