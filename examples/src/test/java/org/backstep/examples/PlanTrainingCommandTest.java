package org.backstep.examples;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import javax.imageio.ImageIO;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The plan-training command on a small invented fleet with an update budget (deterministic, and
 * seconds instead of minutes), and its handling of bad arguments. Figures are checked for
 * presence, not quality.
 */
class PlanTrainingCommandTest {

    @Test
    void writesTableCsvAndChart(@TempDir Path out) throws Exception {
        ByteArrayOutputStream console = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = PlanTraining.run(new String[] {"--containers", "4", "--days", "1", "--train-steps", "20,10", "--updates", "40",
                "--hidden", "16,16", "--no-progress", "--out", out.toString()}, print(console), print(err));
        String text = console.toString(StandardCharsets.UTF_8);
        assertEquals(0, code, err.toString(StandardCharsets.UTF_8));
        // TrainingPlan.toString: a header line, one line per T, the recommendation marked once
        assertTrue(text.contains("Budget per model: 40 updates"), text);
        assertEquals(1, text.split("<- recommended", -1).length - 1, text);
        List<String> csv = Files.readAllLines(out.resolve(PlanFiles.TRAINING_PLAN_CSV));
        assertEquals(3, csv.size(), "header and two rows: " + csv);
        assertTrue(csv.get(1).startsWith("10,40,") && csv.get(2).startsWith("20,40,"), csv.toString());
        // javax.imageio reads the chart
        assertNotNull(ImageIO.read(out.resolve(PlanFiles.TRAINING_PLAN_PNG).toFile()), "training-plan.png is not readable");
    }

    @Test
    void badArgumentsExitWithTwoAndAClearMessage() {
        assertBadArguments(new String[] {"--frobnicate"}, "unknown option --frobnicate");
        assertBadArguments(new String[] {"--train-steps", "10,1"}, "--train-steps is 1");
        assertBadArguments(new String[] {"--train-steps", "10,10"}, "--train-steps lists 10 twice");
        assertBadArguments(new String[] {"--steps", "10"}, "unknown option --steps");
        assertBadArguments(new String[] {"--seconds", "0"}, "--seconds");
        assertBadArguments(new String[] {"--updates", "0"}, "--updates");
        assertBadArguments(new String[] {"--seconds", "5", "--updates", "100"}, "choose one budget");
        assertBadArguments(new String[] {"--tolerance", "-1"}, "--tolerance");
        assertBadArguments(new String[] {"--hidden"}, "--hidden needs a value");
    }

    @Test
    void helpExitsWithZero() {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        assertEquals(0, PlanTraining.run(new String[] {"--help"}, print(out), print(err)));
        String usage = out.toString(StandardCharsets.UTF_8);
        assertTrue(usage.startsWith("Usage: examples/plan-training"), usage);
        assertTrue(usage.contains("--updates") && usage.contains("--seconds"), usage);
        assertEquals(0, err.size(), "--help wrote to standard error");
    }

    private static void assertBadArguments(String[] args, String expected) {
        CommandAssertions.assertBadArguments(PlanTraining::run, "plan-training: ", args, expected);
    }

    private static PrintStream print(ByteArrayOutputStream bytes) {
        return CommandAssertions.print(bytes);
    }
}
