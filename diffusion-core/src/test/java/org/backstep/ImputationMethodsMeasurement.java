package org.backstep;

import org.backstep.option.ImputationOptions;
import org.backstep.io.AtomicFiles;
import org.backstep.report.Imputation;

import org.backstep.option.Conditioning;

import org.backstep.schedule.NoiseSchedule;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * The measurement that chose {@link DiffusionModel#IMPUTATION_CONDITIONING}, as a program: both
 * methods of {@link Conditioning}, at several resampling rounds and chain lengths, on exact-kernel
 * models (no training) whose conditional distributions are known in closed form
 * ({@link ImputationCases}, which is why it lives beside the tests). It writes its table to the file
 * it is given, atomically, and prints one line per setting as it goes. Run it from the repository's
 * root (DEVELOPERS.md, "Build"; about 15 minutes on two cores):
 * <pre>
 * mvn -B -o -pl diffusion-schedules,diffusion-core test-compile exec:java -Dexec.classpathScope=test \
 *     -Dexec.mainClass=org.backstep.ImputationMethodsMeasurement -Dexec.args=diffusion-core/target/imputation-methods.txt
 * </pre>
 * The table the README and the Javadoc of {@link DiffusionModel#IMPUTATION_CONDITIONING} quote is
 * {@code src/test/resources/org/backstep/imputation-methods.txt}; replace it with a new run's output
 * only together with the figures that quote it.
 */
public final class ImputationMethodsMeasurement {

    private static final int RECORDS = 400;
    private static final int DRAWS = 100;
    private static final long SEED = 17;
    /** {steps, rounds} of each row, for each method. */
    private static final int[][] SETTINGS = {{100, 1}, {100, 3}, {100, 5}, {100, 10}, {1000, 1}, {1000, 3}, {1000, 5}};

    private ImputationMethodsMeasurement() {
    }

    /**
     * @param args one argument: the file to write the table to (its folder is created)
     * @throws Exception if the file cannot be written
     */
    public static void main(String[] args) throws Exception {
        if (args.length != 1 || args[0].startsWith("-")) {
            System.err.println("Usage: ImputationMethodsMeasurement OUTPUT.txt   (writes the table of imputation methods to OUTPUT.txt)");
            System.exit(2);
        }
        Path file = Path.of(args[0]).toAbsolutePath();
        List<String> lines = measure();
        if (file.getParent() != null) {
            Files.createDirectories(file.getParent());
        }
        AtomicFiles.write(file, (String.join("\n", lines) + "\n").getBytes(StandardCharsets.UTF_8));
        System.out.println("Wrote " + file);
    }

    /** @return the lines of the table */
    static List<String> measure() {
        NoiseSchedule schedule = NoiseSchedule.linear(1000);
        DiffusionModel gauss = ImputationCases.gaussianModel(schedule);
        DiffusionModel mixed = ImputationCases.mixedModel(schedule);
        ImputationCases.Case g = ImputationCases.gaussian(RECORDS, 3);
        ImputationCases.Case xGivenB = ImputationCases.mixed(RECORDS, 4, true);
        ImputationCases.Case bGivenX = ImputationCases.mixed(RECORDS, 5, false);
        for (Conditioning method : Conditioning.values()) {     // warm-up, so that the first row's time is not the JIT's
            gauss.impute(g.records(), new ImputationOptions(10, 0.9, 100, 1, method), SEED);
            mixed.impute(bGivenX.records(), new ImputationOptions(10, 0.9, 100, 1, method), SEED);
        }

        List<String> lines = new ArrayList<>(List.of(
                "# Imputation methods against the exact conditional distribution",
                "#",
                "# Written by ImputationMethodsMeasurement (a program in diffusion-core's test sources; DEVELOPERS.md).",
                "# Exact-kernel models, no training: T = 1000, linear schedule",
                "# (binomial for the binary column), learned-variance encoding, chains strided to 'steps'.",
                "# " + RECORDS + " records per case, " + DRAWS + " draws each, 90% intervals, seed " + SEED + ".",
                "#",
                "# gauss x2|x1: 2-D Gaussian, mean (1, 2), covariance [[4, 1.2], [1.2, 1]]; x2 missing, x1 observed;",
                "#              exact x2 | x1 by the Schur complement (variance 0.64).",
                "# mixed x|b  : b ~ Bernoulli(" + ImputationCases.PI + "), x | b ~ N(" + ImputationCases.M0 + " or "
                        + ImputationCases.M1 + ", " + ImputationCases.S + "^2); x missing, b observed; exact x | b = N(m_b, s^2).",
                "# mixed b|x  : the same table, b missing, x observed; exact P(b = 1 | x) by Bayes' rule.",
                "#",
                "# err : average over records of (imputed mean - exact mean) / exact sd (issue target |err| < 0.1);",
                "#       for b|x, of (share of draws that are 1 - exact P(1)), in probability.",
                "# rms : root mean square over records of the same error, less the part the draws' own noise",
                "#       explains: a systematic error that cancels in the average (e.g. a wrong slope) shows here.",
                "# slope: least-squares slope of the records' imputed means on their exact means (1 when the",
                "#       imputation follows the observed cells fully, below 1 when it leans to the unconditional mean).",
                "# var : the draws' squared deviations from the exact mean, pooled, over the exact variance",
                "#       (issue target 0.8-1.2).",
                "# cov : share of held-out true values inside the 90% interval (issue target 0.85-0.95).",
                "# evals: estimator evaluations per record and draw (steps x rounds), the cost; seconds: wall",
                "#       time of the three cases on this machine (2 threads, shared; indicative only).",
                "#",
                String.format(Locale.ROOT, "%-14s %5s %6s %5s | %-32s | %-32s | %-13s | %7s",
                        "", "", "", "", "gauss x2|x1", "mixed x|b", "mixed b|x", ""),
                String.format(Locale.ROOT, "%-14s %5s %6s %5s | %6s %5s %5s %5s %5s  | %6s %5s %5s %5s %5s  | %6s %5s  | %7s",
                        "method", "steps", "rounds", "evals", "err", "rms", "slope", "var", "cov", "err", "rms", "slope",
                        "var", "cov", "err", "rms", "seconds")));
        for (Conditioning method : Conditioning.values()) {
            for (int[] st : SETTINGS) {
                int steps = st[0];
                int rounds = st[1];
                long start = System.nanoTime();
                Imputation ig = gauss.impute(g.records(), new ImputationOptions(DRAWS, 0.9, steps, rounds, method), SEED);
                Imputation ix = mixed.impute(xGivenB.records(), new ImputationOptions(DRAWS, 0.9, steps, rounds, method), SEED);
                Imputation ib = mixed.impute(bGivenX.records(), new ImputationOptions(DRAWS, 0.9, steps, rounds, method), SEED);
                double seconds = (System.nanoTime() - start) / 1e9;
                System.out.printf(Locale.ROOT, "%s, %d steps, %d rounds: %.1f s%n", method, steps, rounds, seconds);
                ImputationCases.Continuous fg = ImputationCases.continuous(ig, g);
                ImputationCases.Continuous fx = ImputationCases.continuous(ix, xGivenB);
                ImputationCases.Binary fb = ImputationCases.binary(ib, bGivenX);
                lines.add(String.format(Locale.ROOT,
                        "%-14s %5d %6d %5d | %+6.3f %5.3f %5.3f %5.3f %5.3f  | %+6.3f %5.3f %5.3f %5.3f %5.3f  | %+6.3f %5.3f  | %7.1f",
                        method, steps, rounds, steps * rounds, fg.meanError(), fg.rmsMeanError(), fg.slope(),
                        fg.varianceRatio(), fg.coverage(), fx.meanError(), fx.rmsMeanError(), fx.slope(),
                        fx.varianceRatio(), fx.coverage(), fb.meanError(), fb.rmsError(), seconds));
            }
        }
        return lines;
    }
}
