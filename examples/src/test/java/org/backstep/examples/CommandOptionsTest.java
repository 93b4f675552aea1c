package org.backstep.examples;

import org.junit.jupiter.api.Test;

import java.util.HashMap;
import java.util.List;
import java.util.Map;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * One meaning per word across the example commands (common practice, no source): an option name
 * means the same in every command that accepts it, and reads the same in each --help.
 */
class CommandOptionsTest {

    static final List<Command> COMMANDS = List.of(Demo.COMMAND, PlanSteps.COMMAND, PlanTraining.COMMAND);

    /** Options of one name share their meaning: the help text up to its first ':' or " (default". */
    @Test
    void optionsOfOneNameShareTheirMeaning() {
        Map<String, String> meaning = new HashMap<>();
        for (Option o : Option.values()) {
            String m = meaning(o.help);
            String before = meaning.putIfAbsent(o.name, m);
            assertTrue(before == null || before.equals(m), o.name + " means '" + before + "' and '" + m + "'");
        }
    }

    /** The same option prints the same lines in every command's --help. */
    @Test
    void sharedOptionsReadTheSameInEveryUsage() {
        Map<Option, String> lines = new HashMap<>();
        for (Command c : COMMANDS) {
            for (Option o : c.options()) {
                String text = helpOf(c.usage(), o);
                String before = lines.putIfAbsent(o, text);
                assertTrue(before == null || before.equals(text), o.name + " reads differently:\n" + before + "\n" + text);
            }
        }
    }

    /** "--steps" alone, which meant T in one command and K in another, is gone; each command has --out, --seed and --help. */
    @Test
    void noAmbiguousStepsAndTheCommonOptionsEverywhere() {
        for (Command c : COMMANDS) {
            String usage = c.usage();
            assertFalse(usage.contains("--steps "), usage);
            for (Option o : List.of(Option.OUT, Option.SEED, Option.HELP)) {
                assertTrue(c.options().contains(o), o.name + " missing from:\n" + usage);
            }
        }
        assertEquals(Option.TRAIN_STEPS.name, Option.TRAIN_STEPS_LIST.name);
    }

    private static String meaning(String help) {
        int cut = help.length();
        for (String end : List.of(":", " (default")) {
            int i = help.indexOf(end);
            if (i >= 0) {
                cut = Math.min(cut, i);
            }
        }
        return help.substring(0, cut);
    }

    /** The lines of one option in a usage text: its own line and the indented ones below it. */
    private static String helpOf(String usage, Option o) {
        StringBuilder b = new StringBuilder();
        boolean in = false;
        for (String line : usage.split("\n")) {
            if (line.startsWith("  --")) {
                in = line.startsWith("  " + o.name + (o.value == null ? "" : " " + o.value) + " ")
                        || line.equals("  " + o.name + (o.value == null ? "" : " " + o.value));
            }
            if (in) {
                b.append(line).append('\n');
            }
        }
        assertTrue(b.length() > 0, o.name + " is not in:\n" + usage);
        return b.toString();
    }
}
