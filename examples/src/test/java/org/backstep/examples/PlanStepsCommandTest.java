package org.backstep.examples;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/** The plan-steps command refuses bad options before reading any file, naming the option. */
class PlanStepsCommandTest {

    @ParameterizedTest
    @CsvSource(delimiter = '|', value = {
        "--tolerance|x|--tolerance is 'x'; expected a number",
        "--seed|1.5|--seed is '1.5'; expected a whole number",
        "--steps|10,x|--steps is 'x'; expected a whole number of at least 1",
        "--steps|0|--steps is 0; expected a whole number of at least 1"})
    void badOptionValuesAreNamed(String option, String value, String message) {
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = PlanSteps.run(new String[] {"model.backstep", "held.csv", option, value},
                new PrintStream(new ByteArrayOutputStream(), true, StandardCharsets.UTF_8),
                new PrintStream(err, true, StandardCharsets.UTF_8));
        // common practice, no source: a usage error names the option and exits non-zero
        assertTrue(code != 0);
        assertEquals("plan-steps: " + message, err.toString(StandardCharsets.UTF_8).lines().findFirst().orElse(""));
    }
}
