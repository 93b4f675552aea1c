package org.backstep.examples;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

/**
 * The main job end to end on a small invented fleet (run once, its report folder kept in
 * target/demo-report), and the demo command's handling of its arguments. Figures are checked for
 * presence and sanity, not for quality (a model trained for seconds); counts printed against counts
 * written; summary.json's keys against a golden list. The generator's determinism is tested in the
 * fleet tests and not repeated here; report.html rendered by headless Chromium, its screenshot kept beside it.
 */
class DemoPipelineTest {

    /** A small fleet: 6 containers for 1 day is 576 readings (ReeferFleet.READINGS_PER_DAY = 96). */
    static final int CONTAINERS = 6;
    static final int DAYS = 1;
    /** Seed of the fleet; with 6 containers, round(0.125 x 6) = 1 gets a fault (ReeferFleet's Javadoc). */
    static final long FLEET_SEED = 2027;
    /**
     * T = 50, 2,000 epochs (one minibatch each on this fleet) of a 32 x 2 network: about 5 s of
     * training. Measured: with T = 20 (last beta 0.999) or a few hundred epochs, the sampling and
     * imputation chains of such a small model diverged on some seeds (the learned variances leave
     * [0, 1] once x drifts); with this budget, seeds 1 to 10 all ran through.
     */
    static final int STEPS = 50;
    static final int EPOCHS = 2000;
    static final int[] HIDDEN = {32, 32};
    /** Probabilities and shares lie in [0, 1] (definition). */
    static final double UNIT_LOW = 0.0;
    static final double UNIT_HIGH = 1.0;
    /** The step-count planner's tolerance, nats per dimension (the commands' default). */
    static final double TOLERANCE = Settings.TOLERANCE;

    /** The report folder of the one main-job run these tests share; kept under target/ for a person to open. */
    static final Path OUT = JShellScriptsTest.basedir().resolve("target/demo-report");
    /** The golden list of summary.json's keys (one path a line; "[]" marks an array of objects). */
    static final String GOLDEN_KEYS = "/org/backstep/examples/summary-keys.txt";

    /** Width of the browser window for the screenshot, pixels (a laptop's window, wider than the page's 960). */
    static final int SCREENSHOT_WIDTH = 1000;
    /** Height of the browser window: taller than the page, whose screenshot is then cut below its end. */
    static final int SCREENSHOT_WINDOW_HEIGHT = 14000;

    private static Table table;
    private static ObjectNode returned;
    private static String console;

    /** Runs the main job once on the small fleet; the tests below read what it wrote. */
    @BeforeAll
    static void runMainJob() throws Exception {
        Telemetry t = ReeferFleet.generate(ReeferFleet.options().withContainers(CONTAINERS).withDays(DAYS).withSeed(FLEET_SEED));
        assertEquals(CONTAINERS * DAYS * ReeferFleet.READINGS_PER_DAY, t.rows());
        int faultRows = 0;
        for (boolean f : t.faultRows()) {
            faultRows += f ? 1 : 0;
        }
        assertTrue(faultRows > 0, "the small fleet has no fault rows; the screen's precision and recall need some");
        table = FleetTables.cells(t);
        deleteRecursively(OUT);
        MainJob.Config config = new MainJob.Config(table, FleetTables.truth(t), t.faultRows(), OUT, STEPS, EPOCHS, HIDDEN, 3, 5,
                new int[0], TOLERANCE, null).withFaultKinds(FleetTables.faultKinds(t), FleetTables.faultColumns(t));
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        returned = MainJob.run(config, new PrintStream(bytes, true, StandardCharsets.UTF_8), false);
        console = bytes.toString(StandardCharsets.UTF_8);
    }

    @Test
    void mainJobWritesASaneReportFolder() throws Exception {
        Path out = OUT;
        // every step printed its line (MainJob numbers them 1 to 9)
        String text = console;
        for (int step = 1; step <= 9; step++) {
            assertTrue(text.contains("\n" + step + ". ") || text.startsWith(step + ". "), "no line for step " + step + ":\n" + text);
        }

        // the files of the report folder; the step plan's names are those plan-steps writes (PlanFiles)
        for (String f : List.of("summary.json", "report.html", "model.backstep", PlanFiles.STEP_PLAN_CSV, PlanFiles.STEP_PLAN_PNG,
                "table.csv", ResultFiles.COMPLETED, ResultFiles.SYNTHETIC, ResultFiles.SCORES)) {
            assertTrue(Files.size(out.resolve(f)) > 0, f + " is missing or empty");
        }
        // without --noise and --compare, no denoised readings of the user's and no drift tests
        assertFalse(Files.exists(out.resolve(ResultFiles.DENOISED)), ResultFiles.DENOISED + " written without --noise");
        assertFalse(Files.exists(out.resolve(ResultFiles.DRIFT)), ResultFiles.DRIFT + " written without --compare");
        JsonNode s = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
        assertEquals(returned, s, "summary.json differs from the summary returned");

        JsonNode b = s.path("heldOutBound");
        for (String f : List.of("natsPerRecordModelSpace", "standardError", "natsPerRecordOriginalUnits", "bitsPerDimension",
                "oneGaussianNats", "mixtureNats")) {
            assertFinite(b, f);
        }
        assertTrue(b.path("standardError").asDouble() > 0, "standard error of the bound");
        // bits per dimension = nats / (D ln 2) (BoundReport's Javadoc); D = 9 modelled columns here (alarm_code one of them)
        assertEquals(9, b.path("dimensions").asInt());
        assertEquals(b.path("natsPerRecordModelSpace").asDouble() / (9 * Math.log(2)), b.path("bitsPerDimension").asDouble(), 1e-9);
        assertTrue(b.path("mixtureComponents").asInt() >= 1);

        JsonNode a = s.path("anomalies");
        assertTrue(a.path("scoredRows").asInt() > 0);
        assertFinite(a, "threshold");
        assertTrue(a.path("flagged").asInt() >= 0 && a.path("flagged").asInt() <= a.path("scoredRows").asInt());
        assertTrue(a.path("injectedFaultRows").asInt() > 0, "fault rows among the scored rows");
        assertUnit(a, "precision");
        assertUnit(a, "recall");

        JsonNode imp = s.path("imputation");
        assertTrue(imp.path("hiddenCells").asInt() > 0);
        assertFinite(imp, "rmseInColumnSd");
        assertUnit(imp, "coverage90");
        assertUnit(imp, "coverage90OfPerfectModel");
        // the fleet has a categorical column (alarm_code): denoising holds it as observed and cleans the readings
        JsonNode den = s.path("denoising");
        assertTrue(den.path("cells").asInt() > 0, den.toString());
        assertFinite(den, "rmseBeforeInNoiseSd");
        assertFinite(den, "rmseAfterInNoiseSd");
        assertTrue(den.path("startStep").asInt() >= 1 && den.path("startStep").asInt() <= STEPS);
        // common practice, no source: a posterior mean given the known noise is closer than the noisy reading
        assertTrue(den.path("rmseAfterInNoiseSd").asDouble() < den.path("rmseBeforeInNoiseSd").asDouble(), den.toString());
        assertTrue(imp.path("hiddenCategoryCells").asInt() > 0, imp.toString());
        assertUnit(imp, "categoryAccuracy");
        assertUnit(imp, "categoryTrueShare");

        JsonNode smp = s.path("samples");
        assertTrue(smp.path("count").asInt() > 0);
        assertFinite(smp, "energyDistance");
        assertUnit(smp, "energyPValue");
        assertUnit(smp, "maxKs");
        assertUnit(smp, "shareCloserThanHeldOutFirstPercentile");
        assertEquals(8, smp.path("columns").size()); // every modelled column but the categorical alarm_code
        assertEquals(ReeferFleet.ALARM_CODES.size(), smp.path("categories").size());

        // the planner: Defaults.PLANNER_STEP_COUNTS below T, and T itself
        JsonNode p = s.path("planner");
        JsonNode rows = p.path("stepCounts");
        int[] expectedSteps = java.util.stream.IntStream.concat(
                org.backstep.Defaults.PLANNER_STEP_COUNTS.stream().mapToInt(Integer::intValue).filter(k -> k < STEPS),
                java.util.stream.IntStream.of(STEPS)).toArray();
        assertEquals(expectedSteps.length, rows.size(), "planner rows");
        int[] got = new int[rows.size()];
        for (int i = 0; i < rows.size(); i++) {
            JsonNode r = rows.get(i);
            got[i] = r.path("steps").asInt();
            assertFinite(r, "boundNatsPerDimension");
            assertFinite(r, "energyDistance");
            assertUnit(r, "energyPValue");
            assertUnit(r, "maxKs");
            assertTrue(r.path("millisPer1000").asDouble() > 0);
        }
        assertArrayEquals(expectedSteps, got);
        int recommended = p.path("recommended").asInt();
        assertTrue(java.util.Arrays.stream(got).anyMatch(k -> k == recommended), "recommended " + recommended);
        assertFalse(p.path("reason").asText().isBlank());
        // step-plan.csv: a header and one line per step count (StepPlan.toCsv)
        assertEquals(expectedSteps.length + 1, Files.readAllLines(out.resolve(PlanFiles.STEP_PLAN_CSV)).size());

        // the time of each stage, and the stages add up to at most the whole (common practice, no source)
        double stages = 0;
        for (String stage : List.of("fit", "bound", "screen", "imputation", "denoising", "samples", "planner", "files", "report")) {
            assertTrue(s.path("stageSeconds").path(stage).asDouble(-1) >= 0, "stage " + stage);
            stages += s.path("stageSeconds").path(stage).asDouble();
        }
        assertTrue(stages <= s.path("seconds").asDouble(), stages + " s of stages, " + s.path("seconds") + " s in all");

        DiffusionModel model = DiffusionModel.load(out.resolve("model.backstep"));
        assertEquals(STEPS, model.steps());
        assertArrayEquals(HIDDEN, model.options().hidden());
        assertEquals(table.names(), model.transform().names());
    }

    /**
     * Counts printed and counts written agree, and add up: the training part is the rows trained
     * on, the checkpoint rows and the rows not used; "N rows trained on" is the model's own count,
     * and the rows trained on with a missing cell are those of its provenance's note.
     */
    @Test
    void printedCountsAgreeWithSummaryAndModel() throws Exception {
        JsonNode d = returned.path("data");
        JsonNode t = returned.path("training");
        DiffusionModel model = DiffusionModel.load(OUT.resolve("model.backstep"));
        assertEquals(model.provenance().trainingRows(), t.path("trainedRows").asInt());
        assertEquals(d.path("trainingPartRows").asInt(), t.path("trainedRows").asInt() + t.path("checkpointRows").asInt()
                + t.path("rowsNotUsed").asInt());
        assertEquals(table.rows(), d.path("trainingPartRows").asInt() + d.path("heldOutRows").asInt());
        // the fleet has 5% missing cells: rows with gaps are trained on, at most those of the training part
        int withGaps = t.path("trainedRowsWithGaps").asInt();
        assertTrue(withGaps > 0 && withGaps <= t.path("trainingPartRowsWithGaps").asInt(), t.toString());
        assertTrue(model.provenance().notes().stream().anyMatch(n -> n.startsWith(withGaps + " of " + t.path("trainedRows").asInt()
                + " training rows had a missing cell (" + t.path("filledCells").asInt() + " cells)")), model.provenance().notes().toString());
        assertFalse(console.contains("with a missing cell left out"), console);
        assertTrue(console.contains(d.path("trainingPartRows").asInt() + " rows in the training part"), console);
        assertTrue(console.contains(d.path("heldOutRows").asInt() + " held-out rows"), console);
        assertTrue(console.contains("trained on " + t.path("trainedRows").asInt() + " of the " + d.path("trainingPartRows").asInt()
                + " rows of the training part, " + withGaps + " of them with a missing cell (" + t.path("filledCells").asInt()
                + " cells in all)"), console);
        assertTrue(console.contains(t.path("checkpointRows").asInt() + " checkpoint rows"), console);
        assertTrue(console.contains(t.path("rowsNotUsed").asInt() + " rows not used"), console);
        assertTrue(console.contains("5. Denoised " + returned.path("denoising").path("cells").asInt() + " readings"), console);
        assertTrue(console.contains("Imputed " + returned.path("imputation").path("hiddenCells").asInt() + " cells"), console);
        assertTrue(console.contains(returned.path("samples").path("count").asInt() + " synthetic rows"), console);
        JsonNode f = returned.path("files");
        assertEquals(table.rows(), f.path("completedRows").asInt());
        assertEquals(table.missingCount(), f.path("imputedCells").asInt());
        assertEquals(table.rows() + 1, Files.readAllLines(OUT.resolve(ResultFiles.COMPLETED)).size());
        assertEquals(f.path("syntheticRows").asInt() + 1, Files.readAllLines(OUT.resolve(ResultFiles.SYNTHETIC)).size());
        assertEquals(f.path("scoredRows").asInt() + 1, Files.readAllLines(OUT.resolve(ResultFiles.SCORES)).size());
        assertEquals(returned.path("anomalies").path("scoredRows").asInt(), f.path("scoredRows").asInt());
        assertTrue(console.contains(ResultFiles.COMPLETED + ": the " + table.rows() + " rows, the " + table.missingCount()
                + " missing cells"), console);
    }

    /** summary.json has exactly the keys of the golden list, so that a change to them is deliberate. */
    @Test
    void summaryKeysMatchTheGoldenList() throws Exception {
        List<String> keys = new ArrayList<>();
        keyPaths("", returned, keys);
        List<String> golden;
        try (var in = DemoPipelineTest.class.getResourceAsStream(GOLDEN_KEYS)) {
            assertNotNull(in, GOLDEN_KEYS + " is missing");
            golden = new String(in.readAllBytes(), StandardCharsets.UTF_8).lines()
                    .filter(l -> !l.isBlank() && !l.startsWith("#")).toList();
        }
        // anomalies.blame.byKind is written only when the screen caught a fault row (see the list's header)
        if (returned.path("anomalies").path("blame").path("attributed").asInt() == 0) {
            golden = golden.stream().filter(l -> !l.startsWith("anomalies.blame.byKind")).toList();
        }
        assertEquals(String.join("\n", golden), String.join("\n", keys),
                "summary.json's keys changed; if that is meant, update src/test/resources" + GOLDEN_KEYS
                        + " and the report (Report.java) that reads them");
    }

    /**
     * The anomaly section of report.html carries the comparison of the screens, the ROC chart (an
     * inline PNG under its caption), the columns to blame and the sentence on what a screen of
     * single rows can see; the console prints the comparison with one line per detector.
     */
    @Test
    void reportHasTheRocSectionAndTheComparison() throws Exception {
        String html = Files.readString(OUT.resolve("report.html"), StandardCharsets.UTF_8);
        int section = html.indexOf("<h2>Screening for unusual rows</h2>");
        int next = html.indexOf("<h2>", section + 1);
        assertTrue(section >= 0 && next > section, "no screening section in report.html");
        String screen = html.substring(section, next);
        assertTrue(screen.contains("<img alt=\"The ROC curve of each screen") && screen.contains("src=\"data:image/png;base64,"),
                "no ROC chart in the screening section");
        JsonNode detectors = returned.path("anomalies").path("detectors");
        assertEquals(5, detectors.size(), "Backstep and four classical detectors");
        for (JsonNode d : detectors) {
            assertTrue(screen.contains(Report.escape(d.path("detector").asText())), d.path("detector").asText());
            assertTrue(console.contains(d.path("detector").asText()), d.path("detector").asText());
            assertUnit(d, "auroc");
            assertUnit(d, "precision");
            assertUnit(d, "recall");
        }
        assertTrue(screen.contains("What a screen of single rows can see"), "no sentence on what the screen can see");
        assertTrue(screen.contains("Columns to blame") == returned.path("anomalies").has("blame"));
        assertTrue(console.contains("slow drift or a stuck sensor"), console);
    }

    /** plan-steps on the demo's model writes the files the demo writes, by the same names. */
    @Test
    void planStepsOnTheDemosModelWritesTheSameFiles(@TempDir Path dir) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = PlanSteps.run(new String[] {OUT.resolve("model.backstep").toString(), OUT.resolve("table.csv").toString(),
                "--sample-steps", "10,50", "--out", dir.toString()}, print(out), print(err));
        assertEquals(0, code, err.toString(StandardCharsets.UTF_8));
        for (String f : List.of(PlanFiles.STEP_PLAN_CSV, PlanFiles.STEP_PLAN_PNG)) {
            assertTrue(Files.isRegularFile(dir.resolve(f)), f + " not written by plan-steps");
            assertTrue(Files.isRegularFile(OUT.resolve(f)), f + " not written by the demo");
        }
    }

    /**
     * report.html as a person sees it: headless Chromium renders the page 1,000 pixels wide, and the
     * screenshot is kept as target/demo-report/report-screenshot.png. Skipped, with a message, on a
     * machine without Chromium (CI installs Debian's package chromium in .ci/run).
     */
    @Test
    void reportRendersInHeadlessChromium() throws Exception {
        Path browser = Chromium.find().orElse(null);
        assumeTrue(browser != null, "no chromium on this machine (looked for " + Chromium.NAMES + " on the PATH and the system "
                + "property backstep.chromium): the screenshot of report.html is skipped. Install Debian's package chromium.");
        java.awt.image.BufferedImage shot = Chromium.screenshot(browser, OUT.resolve("report.html"),
                OUT.resolve("report-screenshot.png"), SCREENSHOT_WIDTH, SCREENSHOT_WINDOW_HEIGHT);
        assertEquals(SCREENSHOT_WIDTH, shot.getWidth());
        // common practice, no source: six charts of Charts.HEIGHT pixels, shown at their size (the page is
        // wider than a chart), cannot fit in less; a page whose images failed to load is far shorter
        int charts = 7;
        assertTrue(shot.getHeight() > charts * org.backstep.plot.Charts.HEIGHT, "the rendered page is only " + shot.getHeight()
                + " pixels high; are its charts missing? See " + OUT.resolve("report-screenshot.png"));
        assertTrue(shot.getHeight() < SCREENSHOT_WINDOW_HEIGHT, "the page is longer than the screenshot window of "
                + SCREENSHOT_WINDOW_HEIGHT + " pixels; raise SCREENSHOT_WINDOW_HEIGHT");
    }

    /** Paths of every key: "a", "a.b", "a[].b" for an array of objects (its first element's keys). */
    static void keyPaths(String prefix, JsonNode node, List<String> keys) {
        node.fields().forEachRemaining(e -> {
            String path = prefix + e.getKey();
            keys.add(path);
            JsonNode v = e.getValue();
            if (v.isObject()) {
                keyPaths(path + ".", v, keys);
            } else if (v.isArray() && v.size() > 0 && v.get(0).isObject()) {
                keyPaths(path + "[].", v.get(0), keys);
            }
        });
    }

    static void deleteRecursively(Path dir) throws java.io.IOException {
        if (Files.exists(dir)) {
            try (var walk = Files.walk(dir)) {
                for (Path p : walk.sorted(java.util.Comparator.reverseOrder()).toList()) {
                    Files.delete(p);
                }
            }
        }
    }

    @Test
    void badArgumentsExitWithTwoAndAClearMessage(@TempDir Path dir) {
        assertBadArguments(new String[] {"--frobnicate"}, "unknown option --frobnicate");
        assertBadArguments(new String[] {dir.resolve("no-such.csv").toString()}, "no such file");
        assertBadArguments(new String[] {"--train-steps", "0"}, "--train-steps is 0");
        assertBadArguments(new String[] {"--train-steps"}, "--train-steps needs a value");
        assertBadArguments(new String[] {"--steps", "100"}, "unknown option --steps");
        assertBadArguments(new String[] {"--sample-steps", "10,10"}, "--sample-steps lists 10 twice");
        assertBadArguments(new String[] {"--hidden", "64,x"}, "--hidden");
    }

    @Test
    void helpExitsWithZero() {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = Demo.run(new String[] {"--help"}, print(out), print(err));
        assertEquals(0, code);
        String usage = out.toString(StandardCharsets.UTF_8);
        assertTrue(usage.startsWith("Usage: examples/demo"), usage);
        assertTrue(usage.contains("--train-steps T") && usage.contains("--sample-steps") && usage.contains("--out"), usage);
        assertEquals(0, err.size(), "--help wrote to standard error");
    }

    private static void assertBadArguments(String[] args, String expected) {
        CommandAssertions.assertBadArguments(Demo::run, "demo: ", args, expected);
    }

    private static PrintStream print(ByteArrayOutputStream bytes) {
        return CommandAssertions.print(bytes);
    }

    private static void assertFinite(JsonNode node, String field) {
        assertTrue(node.has(field), "missing field " + field + " in " + node);
        double v = node.path(field).asDouble(Double.NaN);
        assertTrue(node.path(field).isNumber() && Double.isFinite(v), field + " is " + node.path(field));
    }

    private static void assertUnit(JsonNode node, String field) {
        assertFinite(node, field);
        double v = node.path(field).asDouble();
        assertTrue(v >= UNIT_LOW && v <= UNIT_HIGH, field + " is " + v + "; expected a share in [0, 1]");
    }
}
