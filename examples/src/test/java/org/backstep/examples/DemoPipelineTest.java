package org.backstep.examples;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The main job end to end on a small invented fleet, and the demo command's handling of its
 * arguments. Figures are checked for presence and sanity, not for quality (a model trained for
 * seconds). The generator's determinism is tested in the fleet tests and not repeated here.
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

    @Test
    void mainJobWritesASaneReportFolder(@TempDir Path out) throws Exception {
        Telemetry t = ReeferFleet.generate(ReeferFleet.options().withContainers(CONTAINERS).withDays(DAYS).withSeed(FLEET_SEED));
        assertEquals(CONTAINERS * DAYS * ReeferFleet.READINGS_PER_DAY, t.rows());
        boolean[] faults = t.faultRows();
        int faultRows = 0;
        for (boolean f : faults) {
            faultRows += f ? 1 : 0;
        }
        assertTrue(faultRows > 0, "the small fleet has no fault rows; the screen's precision and recall need some");
        Table table = FleetTables.cells(t);
        MainJob.Config config = new MainJob.Config(table, FleetTables.truth(t), faults, out, STEPS, EPOCHS, HIDDEN, 3, 5, null);
        ByteArrayOutputStream console = new ByteArrayOutputStream();
        ObjectNode returned = MainJob.run(config, new PrintStream(console, true, StandardCharsets.UTF_8), false);

        // every step printed its line (MainJob numbers them 1 to 8)
        String text = console.toString(StandardCharsets.UTF_8);
        for (int step = 1; step <= 8; step++) {
            assertTrue(text.contains("\n" + step + ". ") || text.startsWith(step + ". "), "no line for step " + step + ":\n" + text);
        }

        // the files of the report folder
        for (String f : List.of("summary.json", "report.html", "model.backstep", "planner.csv", "table.csv")) {
            assertTrue(Files.size(out.resolve(f)) > 0, f + " is missing or empty");
        }
        JsonNode s = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
        assertEquals(returned, s, "summary.json differs from the summary returned");

        JsonNode b = s.path("heldOutBound");
        for (String f : List.of("natsPerRecordModelSpace", "standardError", "natsPerRecordOriginalUnits", "bitsPerDimension",
                "oneGaussianNats", "mixtureNats")) {
            assertFinite(b, f);
        }
        assertTrue(b.path("standardError").asDouble() > 0, "standard error of the bound");
        // bits per dimension = nats / (D ln 2) (BoundReport's Javadoc); D = 7 modelled columns here
        assertEquals(b.path("natsPerRecordModelSpace").asDouble() / (7 * Math.log(2)), b.path("bitsPerDimension").asDouble(), 1e-9);
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
        JsonNode den = s.path("denoising");
        assertTrue(den.path("cells").asInt() > 0);
        assertFinite(den, "rmseBeforeInNoiseSd");
        assertFinite(den, "rmseAfterInNoiseSd");
        assertTrue(den.path("startStep").asInt() >= 1 && den.path("startStep").asInt() <= STEPS);

        JsonNode smp = s.path("samples");
        assertTrue(smp.path("count").asInt() > 0);
        assertFinite(smp, "energyDistance");
        assertUnit(smp, "energyPValue");
        assertUnit(smp, "maxKs");
        assertUnit(smp, "shareCloserThanHeldOutFirstPercentile");
        assertEquals(7, smp.path("columns").size());

        // the planner: Defaults.PLANNER_STEP_COUNTS below T, and T itself
        JsonNode p = s.path("planner");
        JsonNode rows = p.path("rows");
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

        String html = Files.readString(out.resolve("report.html"), StandardCharsets.UTF_8);
        assertTrue(html.startsWith("<!DOCTYPE html>") && html.contains("</html>"), "report.html is not a whole page");
        assertTrue(html.contains("data:image/png;base64,"), "report.html has no chart");

        DiffusionModel model = DiffusionModel.load(out.resolve("model.backstep"));
        assertEquals(STEPS, model.steps());
        assertArrayEquals(HIDDEN, model.options().hidden());
        assertEquals(table.names(), model.transform().names());
    }

    @Test
    void badArgumentsExitWithTwoAndAClearMessage(@TempDir Path dir) {
        assertBadArguments(new String[] {"--frobnicate"}, "unknown option --frobnicate");
        assertBadArguments(new String[] {dir.resolve("no-such.csv").toString()}, "no such file");
        assertBadArguments(new String[] {"--steps", "0"}, "--steps");
        assertBadArguments(new String[] {"--steps"}, "--steps needs a value");
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
        assertTrue(usage.contains("--steps") && usage.contains("--out"), usage);
        assertEquals(0, err.size(), "--help wrote to standard error");
    }

    private static void assertBadArguments(String[] args, String expected) {
        CommandAssertions.assertBadArguments(Demo::run, "backstep demo: ", args, expected);
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
