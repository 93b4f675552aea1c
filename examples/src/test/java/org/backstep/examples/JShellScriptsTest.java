package org.backstep.examples;

import jdk.jshell.EvalException;
import jdk.jshell.JShell;
import jdk.jshell.JShellException;
import jdk.jshell.Snippet;
import jdk.jshell.SnippetEvent;
import jdk.jshell.SourceCodeAnalysis;
import org.junit.jupiter.api.Test;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Collectors;

import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

/**
 * The README's JShell block and {@code examples/session.jsh} run as written, through the JDK's own
 * JShell engine (module jdk.jshell) in this JVM: first the DEFAULT imports and
 * {@code src/main/jshell/imports.jsh}, as the {@code examples/jshell} launcher loads them, then the
 * script split into snippets by {@link SourceCodeAnalysis#analyzeCompletion(String)}. JShell
 * commands (lines starting with "/") are skipped. Any rejected snippet, unresolved reference or
 * exception fails the test with the snippet and JShell's diagnostics.
 */
class JShellScriptsTest {

    /**
     * The imports of JShell's DEFAULT startup script, which {@code examples/jshell} loads before
     * imports.jsh (JDK 17's jshell tool, as "/list -start" shows them).
     */
    static final String DEFAULT_IMPORTS = String.join("\n",
            "import java.io.*;", "import java.math.*;", "import java.net.*;", "import java.nio.file.*;",
            "import java.util.*;", "import java.util.concurrent.*;", "import java.util.function.*;",
            "import java.util.prefs.*;", "import java.util.regex.*;", "import java.util.stream.*;");
    /** A script run here must have at least this many snippets, so that a parse slip cannot pass as an empty run. */
    static final int MIN_SNIPPETS = 3;

    /** @return the module's folder (Maven runs tests there and sets "basedir") */
    static Path basedir() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir"))).toAbsolutePath();
    }

    /**
     * @return the first fenced block marked {@code ```jshell} in the repository's README.md
     * @throws AssertionError naming what is missing
     */
    static String readmeJshellBlock() throws IOException {
        Path readme = basedir().resolve("../README.md").normalize();
        assertTrue(Files.isRegularFile(readme), "no README.md at " + readme);
        List<String> lines = Files.readAllLines(readme, StandardCharsets.UTF_8);
        int start = -1;
        for (int i = 0; i < lines.size(); i++) {
            if (lines.get(i).strip().equals("```jshell")) {
                start = i + 1;
                break;
            }
        }
        if (start < 0) {
            fail(readme + " has no fenced block marked ```jshell. Add one (a short session that runs in "
                    + "seconds under examples/jshell); this test runs it with src/main/jshell/imports.jsh.");
        }
        List<String> block = new ArrayList<>();
        for (int i = start; i < lines.size(); i++) {
            if (lines.get(i).strip().startsWith("```")) {
                assertTrue(!block.isEmpty(), "the ```jshell block of " + readme + " is empty");
                return String.join("\n", block);
            }
            block.add(lines.get(i));
        }
        return fail("the ```jshell block of " + readme + " is not closed by a ``` line");
    }

    @Test
    void readmeJshellBlockRuns() throws IOException {
        run("README.md ```jshell block", readmeJshellBlock());
    }

    @Test
    void sampleSessionRuns() throws IOException {
        run("examples/session.jsh", Files.readString(basedir().resolve("session.jsh"), StandardCharsets.UTF_8));
    }

    /** Runs the startup imports and the script; fails on the first bad snippet. */
    private static void run(String name, String script) throws IOException {
        String imports = Files.readString(basedir().resolve("src/main/jshell/imports.jsh"), StandardCharsets.UTF_8);
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        PrintStream capture = new PrintStream(captured, true, StandardCharsets.UTF_8);
        PrintStream out = System.out;
        PrintStream err = System.err;
        // local execution runs snippets in this JVM, where they print to System.out: keep it for the messages
        System.setOut(capture);
        System.setErr(capture);
        int snippets;
        try (JShell shell = JShell.builder().executionEngine("local").out(capture).err(capture).build()) {
            shell.addToClasspath(System.getProperty("java.class.path"));
            evaluate(shell, "DEFAULT startup", DEFAULT_IMPORTS, captured);
            evaluate(shell, "src/main/jshell/imports.jsh", imports, captured);
            snippets = evaluate(shell, name, script, captured);
        } finally {
            System.setOut(out);
            System.setErr(err);
        }
        assertTrue(snippets >= MIN_SNIPPETS, name + " ran only " + snippets + " snippets");
        assertTrue(captured.size() > 0, name + " printed nothing");
    }

    /** @return the number of snippets evaluated */
    private static int evaluate(JShell shell, String name, String script, ByteArrayOutputStream captured) {
        String source = script.lines().filter(l -> !l.strip().startsWith("/")).collect(Collectors.joining("\n"));
        SourceCodeAnalysis analysis = shell.sourceCodeAnalysis();
        int count = 0;
        while (!source.isBlank()) {
            SourceCodeAnalysis.CompletionInfo info = analysis.analyzeCompletion(source);
            if (info.completeness() == SourceCodeAnalysis.Completeness.EMPTY) {
                break;
            }
            if (!info.completeness().isComplete()) {
                fail(name + ": the script ends in an incomplete snippet (" + info.completeness() + "):\n" + source);
            }
            String snippet = info.source();
            for (SnippetEvent e : shell.eval(snippet)) {
                if (e.status() == Snippet.Status.REJECTED || e.status() == Snippet.Status.RECOVERABLE_NOT_DEFINED) {
                    String diagnostics = shell.diagnostics(e.snippet())
                            .map(d -> d.getMessage(java.util.Locale.ROOT)).collect(Collectors.joining("\n  "));
                    String unresolved = e.snippet() instanceof jdk.jshell.DeclarationSnippet ds
                            ? shell.unresolvedDependencies(ds).collect(Collectors.joining(", ")) : "";
                    fail(name + ": snippet " + e.status() + ":\n" + snippet + "\n  " + diagnostics
                            + (unresolved.isEmpty() ? "" : "\n  unresolved: " + unresolved) + output(captured));
                }
                if (e.exception() != null) {
                    fail(name + ": snippet threw " + describe(e.exception()) + ":\n" + snippet + output(captured));
                }
            }
            count++;
            source = info.remaining();
        }
        return count;
    }

    private static String describe(JShellException e) {
        String kind = e instanceof EvalException ev ? ev.getExceptionClassName() : e.getClass().getSimpleName();
        StringBuilder trace = new StringBuilder(kind + ": " + e.getMessage());
        for (StackTraceElement el : e.getStackTrace()) {
            trace.append("\n    at ").append(el);
        }
        return trace.toString();
    }

    private static String output(ByteArrayOutputStream captured) {
        String s = captured.toString(StandardCharsets.UTF_8);
        return s.isEmpty() ? "" : "\n--- output so far ---\n" + (s.length() > 4000 ? s.substring(s.length() - 4000) : s);
    }
}
