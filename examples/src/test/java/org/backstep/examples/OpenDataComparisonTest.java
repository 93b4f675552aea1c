package org.backstep.examples;

import org.backstep.Backstep;
import org.backstep.report.BoundReport;
import org.backstep.DiffusionModel;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

/**
 * Backstep against two classical baselines on three open tables, on the fixed split of
 * diffusion-core/src/test/resources/data/SOURCES.md (row i is a test row when i % 5 == 0; figures in
 * nats per record in the space standardized by the training rows' mean and population sd). Writes
 * the table to {@code examples/target/open-data-bounds.md}, checks the baselines against the figures
 * SOURCES.md lists, and checks the README's copy of the table against the figures computed here.
 *
 * <p>The CSV files are read in place from diffusion-core's test resources (with their SOURCES.md,
 * ATTRIBUTION.md and licence), through the relative path {@code ../diffusion-core/src/test/resources/data}
 * from this module's folder: one copy of the data and of its reference figures.
 */
class OpenDataComparisonTest {

    /**
     * The training budget: library defaults (Defaults) except 2 hidden layers of the default width
     * 256 instead of 3, and 2,000 epochs, which for these tables (fewer training rows than two
     * minibatches) is 2,000 minibatch steps instead of the default 4,000. Measured on 2 cores: the
     * full defaults take 36, 70 and 58 s on these three tables; this budget about a third of that.
     */
    static final int[] HIDDEN = {256, 256};
    static final int EPOCHS = 2000;
    /** The seed of the exact bound's draws. */
    static final long BOUND_SEED = 1;
    /** SOURCES.md: row i (0-based, file order) is a test row when i % 5 == 0. */
    static final int TEST_EVERY = 5;

    /** SOURCES.md lists the one-Gaussian figures to 3 decimals; a maximum-likelihood Gaussian is unique. */
    static final double GAUSSIAN_TOL = 0.01;
    /**
     * EM finds a local optimum that depends on its start (commons-math3 starts from bins of rows
     * sorted by their mean value; SOURCES.md's figures came from another implementation). Measured
     * here, with the same component counts as SOURCES.md: 0.000 nats off on iris, 0.300 on diabetes,
     * 0.470 on breast_cancer (30 columns, 2 full covariances from 364 rows).
     */
    static final double MIXTURE_TOL = 0.5;
    /** The README's figures were computed on another machine; training rounds differently there. */
    static final double README_TOL = 0.15;

    static final String START = "<!-- open-data-table:start -->";
    static final String END = "<!-- open-data-table:end -->";

    /**
     * One table of SOURCES.md with the figures it lists.
     *
     * @param label the table's name in the output
     * @param file the CSV file in data/
     * @param leftOut columns left out
     * @param listedGaussian SOURCES.md, one Gaussian
     * @param listedMixture SOURCES.md, Gaussian mixture
     * @param listedComponents SOURCES.md, the mixture's component count
     */
    record Case(String label, String file, List<String> leftOut, double listedGaussian, double listedMixture,
                int listedComponents) {
        String stem() {
            return file.replace(".csv", "");
        }
    }

    /** Figures computed here for one case. */
    record Figures(Case c, int rows, int columns, double backstep, double gaussian, double mixture, int components) {
    }

    // data/SOURCES.md, "Classical baselines on that split"
    static final List<Case> CASES = List.of(
            new Case("iris", "iris.csv", List.of(), 3.686, 2.514, 2),
            new Case("breast_cancer", "breast_cancer.csv", List.of(), 7.040, 0.592, 2),
            new Case("diabetes_raw, SEX left out", "diabetes_raw.csv", List.of("SEX"), 9.883, 8.487, 4));

    static List<Figures> figures;
    static Path markdown;

    static Path basedir() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir"))).toAbsolutePath();
    }

    static Path dataDir() {
        Path d = basedir().resolve("../diffusion-core/src/test/resources/data").normalize();
        assertTrue(Files.isRegularFile(d.resolve("SOURCES.md")), "the open data are read from " + d + ", which is missing");
        return d;
    }

    @BeforeAll
    static void computeAndWrite() throws Exception {
        figures = new ArrayList<>();
        for (Case c : CASES) {
            figures.add(compute(c));
        }
        markdown = basedir().resolve("target/open-data-bounds.md");
        Files.createDirectories(markdown.getParent());
        Files.writeString(markdown, table(figures), StandardCharsets.UTF_8);
    }

    static Figures compute(Case c) throws Exception {
        Table all = CsvTables.reader().read(dataDir().resolve(c.file()));
        if (!c.leftOut().isEmpty()) {
            List<String> keep = new ArrayList<>(all.names());
            keep.removeAll(c.leftOut());
            all = all.selectColumns(keep.toArray(String[]::new));
        }
        Table train = all.filterRows(i -> i % TEST_EVERY != 0);
        Table test = all.filterRows(i -> i % TEST_EVERY == 0);
        // SOURCES.md's space: standardized by all training rows' mean and population sd
        TableTransform sources = TableTransform.fit(train, Set.of());

        DiffusionModel model = Backstep.builder().hidden(HIDDEN).epochs(EPOCHS).fit(train);
        BoundReport bound = model.bound(test, BOUND_SEED);
        assertEquals(BoundReport.Method.EXACT, bound.method());
        // The model standardizes by the rows it trained on (the default validation share is drawn
        // from the training rows), so its space differs slightly from SOURCES.md's. Change of
        // variables, exact: -log p_z(z) = -log p_x(x) + log|dz/dx|, with log|dz/dx| = -sum_j log s_j.
        double[] original = bound.natsOriginalUnits();
        double[] logJacobian = sources.logJacobian(test);
        double sum = 0;
        for (int i = 0; i < original.length; i++) {
            sum += original[i] + logJacobian[i];
        }
        double backstep = sum / original.length;

        Baselines.Result base = Baselines.fit(sources, sources.toModelSpace(train), sources.toModelSpace(test), BOUND_SEED);
        return new Figures(c, all.rows(), all.columns(), backstep, base.oneGaussian(), base.mixture(), base.components());
    }

    static String table(List<Figures> fs) {
        StringBuilder sb = new StringBuilder();
        sb.append("| data | rows x cols | Backstep bound | one Gaussian | mixture (components) |\n");
        sb.append("|---|---|---|---|---|\n");
        for (Figures f : fs) {
            sb.append(String.format(Locale.ROOT, "| %s | %d x %d | %.3f | %.3f | %.3f (%d) |%n", f.c().label(), f.rows(),
                    f.columns(), f.backstep(), f.gaussian(), f.mixture(), f.components()));
        }
        sb.append('\n').append(String.format(Locale.ROOT,
                "Held-out negative log-likelihood, nats per record (lower is better), in the space standardized by the "
                        + "training rows' mean and population standard deviation; test rows are those whose 0-based index i "
                        + "has i %% %d == 0 (the split of `diffusion-core/src/test/resources/data/SOURCES.md`). Backstep: the "
                        + "exact bound over all T steps, library defaults except hidden %s and %d epochs; baselines: "
                        + "maximum-likelihood Gaussian and a Gaussian mixture fitted by EM (commons-math3), components "
                        + "picked on a validation fold.%n",
                TEST_EVERY, Arrays.toString(HIDDEN).replaceAll("[\\[\\] ]", ""), EPOCHS));
        return sb.toString();
    }

    @Test
    void baselinesReproduceTheListedFigures() {
        for (Figures f : figures) {
            // data/SOURCES.md, "Classical baselines on that split"
            assertEquals(f.c().listedGaussian(), f.gaussian(), GAUSSIAN_TOL, f.c().label() + ", one Gaussian");
            assertEquals(f.c().listedMixture(), f.mixture(), MIXTURE_TOL, f.c().label() + ", mixture");
            assertTrue(f.mixture() < f.gaussian(), f.c().label() + ": the mixture should beat one Gaussian, as SOURCES.md lists");
        }
    }

    @Test
    void backstepBoundsAreFiniteAndWritten() throws IOException {
        assertEquals(CASES.size(), figures.size());
        // data/SOURCES.md, the table of files: shapes (diabetes without SEX)
        assertEquals(List.of(150, 569, 442), figures.stream().map(Figures::rows).toList());
        assertEquals(List.of(4, 30, 10), figures.stream().map(Figures::columns).toList());
        for (Figures f : figures) {
            assertTrue(Double.isFinite(f.backstep()), f.c().label() + ": bound " + f.backstep());
        }
        String md = Files.readString(markdown, StandardCharsets.UTF_8);
        for (Case c : CASES) {
            assertTrue(md.contains("| " + c.label() + " |"), md);
        }
    }

    @Test
    void readmeTableMatchesTheComputedBounds() throws IOException {
        Path readme = basedir().resolve("../README.md").normalize();
        String text = Files.readString(readme, StandardCharsets.UTF_8);
        int start = text.indexOf(START);
        int end = text.indexOf(END);
        String advice = "paste the content of " + markdown + " (written by this test) between the lines " + START + " and "
                + END + " in " + readme;
        if (start < 0 || end < start) {
            fail(readme + " has no open-data table markers; " + advice);
        }
        List<String[]> rows = new ArrayList<>();
        for (String line : text.substring(start + START.length(), end).split("\n")) {
            String l = line.strip();
            if (l.startsWith("|") && !l.startsWith("|---") && !l.toLowerCase(Locale.ROOT).startsWith("| data")) {
                rows.add(Arrays.stream(l.substring(1, l.length() - (l.endsWith("|") ? 1 : 0)).split("\\|"))
                        .map(String::strip).toArray(String[]::new));
            }
        }
        for (Figures f : figures) {
            String[] row = rows.stream().filter(r -> r[0].startsWith(f.c().stem())).findFirst()
                    .orElseGet(() -> fail("the README's open-data table has no row for " + f.c().stem() + "; " + advice));
            double listed = firstNumber(row.length > 2 ? row[2] : "", f.c().label());
            assertEquals(f.backstep(), listed, README_TOL, f.c().label() + ": the README lists " + listed
                    + " as the Backstep bound, this run computed " + String.format(Locale.ROOT, "%.3f", f.backstep())
                    + "; if the library changed, " + advice);
        }
    }

    private static double firstNumber(String cell, String label) {
        Matcher m = Pattern.compile("-?\\d+(\\.\\d+)?").matcher(cell);
        if (!m.find()) {
            fail("the README's Backstep bound of " + label + " is '" + cell + "', not a number");
        }
        return Double.parseDouble(m.group());
    }
}
