package org.backstep.examples;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/** The plan-steps command refuses bad options before reading any file, naming the option. */
class PlanStepsCommandTest {

    @ParameterizedTest
    @CsvSource(delimiter = '|', value = {
        "--tolerance|x|--tolerance is 'x'; expected a number",
        "--seed|1.5|--seed is '1.5'; expected a whole number",
        "--sample-steps|10,x|--sample-steps is 'x'; expected a whole number of at least 1",
        "--sample-steps|0|--sample-steps is 0; expected a whole number of at least 1",
        "--steps|10|unknown option --steps",
        "--frobnicate|1|unknown option --frobnicate"})
    void badOptionValuesAreNamed(String option, String value, String message) {
        CommandAssertions.assertBadArguments(PlanSteps::run, "plan-steps: ",
                new String[] {"model.backstep", "held.csv", option, value}, message);
    }
}
