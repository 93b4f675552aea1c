package org.backstep.examples;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;

/** What every example command must do with bad arguments. */
final class CommandAssertions {

    /** An example command's {@code run(args, out, err)}. */
    @FunctionalInterface
    interface Command {
        int run(String[] args, PrintStream out, PrintStream err);
    }

    private CommandAssertions() {
    }

    /**
     * The command exits with 2 (the commands' Javadoc: 2 for bad arguments), writes one message
     * that starts with its prefix, contains {@code expected} and points to --help, prints no
     * stack trace and nothing on standard output.
     */
    static void assertBadArguments(Command command, String prefix, String[] args, String expected) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = command.run(args, print(out), print(err));
        String message = err.toString(StandardCharsets.UTF_8);
        assertEquals(2, code, String.join(" ", args) + ": " + message);
        assertTrue(message.startsWith(prefix), message);
        assertTrue(message.contains(expected), "message of " + String.join(" ", args) + " is: " + message);
        assertTrue(message.contains("--help"), "the message should point to --help: " + message);
        // common practice, no source: a usage error is plain text, not a stack trace
        assertFalse(message.contains("\tat ") || message.contains("Exception"), message);
        assertEquals(0, out.size(), "nothing goes to standard output on a usage error");
    }

    /**
     * Runs the command, asserts that it exits with 0 (standard error and output in the message
     * otherwise) and returns what it printed.
     */
    static String assertRuns(Command command, java.util.List<String> args) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int code = command.run(args.toArray(String[]::new), print(out), print(err));
        String console = out.toString(StandardCharsets.UTF_8);
        assertEquals(0, code, err.toString(StandardCharsets.UTF_8) + console);
        return console;
    }

    static PrintStream print(ByteArrayOutputStream bytes) {
        return new PrintStream(bytes, true, StandardCharsets.UTF_8);
    }
}
