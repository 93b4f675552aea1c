package org.backstep.examples;

import jdk.jshell.EvalException;
import jdk.jshell.JShell;
import jdk.jshell.JShellException;
import jdk.jshell.Snippet;
import jdk.jshell.SnippetEvent;
import jdk.jshell.SourceCodeAnalysis;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.table.CsvTables;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

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
 * The README's JShell block, the README's tour and {@code examples/session.jsh} run as written,
 * through the JDK's own JShell engine (module jdk.jshell) in this JVM: first the DEFAULT imports and
 * {@code src/main/jshell/imports.jsh}, as the {@code examples/jshell} launcher loads them, then the
 * script fed line by line, as pasted text reaches the JShell tool, each snippet evaluated once the
 * lines so far complete it ({@link SourceCodeAnalysis#analyzeCompletion(String)}). JShell commands
 * (lines starting with "/") are skipped; the README's JShell block must end with /exit. Any
 * rejected snippet, unresolved reference or exception fails the test with the snippet and JShell's
 * diagnostics.
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
    /** The headings of the README's screening and drift sections, whose first ```jshell blocks are run. */
    static final String SCREENING_HEADING = "## Screening records";
    static final String DRIFT_HEADING = "## Drift between batches";

    /** The heading of the README's tour, whose first ```java block is run. */
    static final String TOUR_HEADING = "## A tour of the API";
    /** The tour's fleet.csv: 2 containers for 1 day, 192 rows (ReeferFleet.READINGS_PER_DAY = 96). */
    static final int TOUR_CONTAINERS = 2;
    static final long TOUR_FLEET_SEED = 11;

    /** @return the module's folder (Maven runs tests there and sets "basedir") */
    static Path basedir() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir"))).toAbsolutePath();
    }

    /**
     * @return the first fenced block marked {@code ```jshell} in the repository's README.md
     * @throws AssertionError naming what is missing
     */
    static String readmeJshellBlock() throws IOException {
        return readmeBlock("```jshell", null);
    }

    /**
     * @return the first fenced block marked {@code ```java} after the heading "## A tour of the API"
     * @throws AssertionError naming what is missing
     */
    static String readmeTourBlock() throws IOException {
        return readmeBlock("```java", TOUR_HEADING);
    }

    /** The first fenced block whose opening line is {@code fence}, after the line {@code after} when that is not null. */
    private static String readmeBlock(String fence, String after) throws IOException {
        Path readme = basedir().resolve("../README.md").normalize();
        assertTrue(Files.isRegularFile(readme), "no README.md at " + readme);
        List<String> lines = Files.readAllLines(readme, StandardCharsets.UTF_8);
        int from = after == null ? 0 : lines.indexOf(after);
        assertTrue(from >= 0, readme + " has no line " + after);
        int start = -1;
        for (int i = from; i < lines.size(); i++) {
            if (lines.get(i).strip().equals(fence)) {
                start = i + 1;
                break;
            }
        }
        if (start < 0) {
            fail(readme + " has no fenced block marked " + fence + (after == null ? "" : " after " + after)
                    + ". This test runs it with src/main/jshell/imports.jsh, as examples/jshell would.");
        }
        List<String> block = new ArrayList<>();
        for (int i = start; i < lines.size(); i++) {
            if (lines.get(i).strip().startsWith("```")) {
                assertTrue(!block.isEmpty(), "the " + fence + " block of " + readme + " is empty");
                return String.join("\n", block);
            }
            block.add(lines.get(i));
        }
        return fail("the " + fence + " block of " + readme + " is not closed by a ``` line");
    }

    @Test
    void readmeJshellBlockRunsAndEndsTheSession() throws IOException {
        String block = readmeJshellBlock();
        List<String> lines = block.lines().filter(l -> !l.isBlank()).toList();
        // the JShell tool's command that ends a session (JDK 17, jshell's /help): a block pasted into
        // examples/jshell returns to the shell instead of leaving the user at jshell's prompt
        assertTrue(lines.get(lines.size() - 1).strip().equals("/exit"), "the ```jshell block should end with /exit: " + block);
        run("README.md ```jshell block", block);
    }

    /**
     * The README's tour, pasted into JShell as written. Two things are given to it that a reader
     * brings along: the file fleet.csv (here a small invented fleet, written by CsvTables, its path
     * put in place of "fleet.csv") and nothing else; the network's size and training are the tour's.
     */
    @Test
    void readmeTourRunsAsPasted(@TempDir Path dir) throws Exception {
        Path csv = dir.resolve("fleet.csv");
        CsvTables.writer().write(FleetTables.cells(ReeferFleet.generate(ReeferFleet.options().withContainers(TOUR_CONTAINERS)
                .withDays(1).withSeed(TOUR_FLEET_SEED))), csv);
        String tour = readmeTourBlock();
        assertTrue(tour.contains("\"fleet.csv\""), "the tour no longer reads \"fleet.csv\"; adapt this test:\n" + tour);
        run("README.md tour", tour.replace("\"fleet.csv\"", "\"" + csv.toString().replace("\\", "\\\\") + "\""));
    }

    /**
     * The README's JShell examples of screening and of drift, pasted into one session as written:
     * the drift block goes on with the screening block's table and model, as a reader following
     * the README would.
     */
    @Test
    void readmeScreeningAndDriftBlocksRunAsPasted() throws IOException {
        String screening = readmeBlock("```jshell", SCREENING_HEADING);
        String drift = readmeBlock("```jshell", DRIFT_HEADING);
        assertTrue(screening.contains("model.screen(") && drift.contains("model.drift("),
                "the README's screening or drift block no longer screens or tests drift:\n" + screening + "\n" + drift);
        run("README.md screening and drift blocks", screening + "\n" + drift);
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

    /**
     * Evaluates the script as the JShell tool does with pasted text: line by line, each snippet as
     * soon as the lines so far make a complete one ({@link SourceCodeAnalysis#analyzeCompletion}).
     * So a chain whose next line starts with '.' fails here as it does in the tool: the line before
     * is already a complete statement.
     *
     * @return the number of snippets evaluated
     */
    private static int evaluate(JShell shell, String name, String script, ByteArrayOutputStream captured) {
        SourceCodeAnalysis analysis = shell.sourceCodeAnalysis();
        int count = 0;
        StringBuilder pending = new StringBuilder();
        for (String line : script.split("\n", -1)) {
            if (pending.length() == 0 && (line.isBlank() || line.strip().startsWith("/"))) {
                continue;       // blank lines between snippets, and JShell commands such as /exit
            }
            pending.append(line).append('\n');
            // every complete snippet the lines so far hold: a trailing comment comes back as the
            // remainder and completes, on its own, as the next line's text is added
            SourceCodeAnalysis.CompletionInfo info;
            while (!pending.toString().isBlank()
                    && (info = analysis.analyzeCompletion(pending.toString())).completeness().isComplete()) {
                pending.setLength(0);
                pending.append(info.remaining().isBlank() ? "" : info.remaining());
                evaluateSnippet(shell, name, info.source(), captured);
                count++;
            }
        }
        if (!pending.toString().isBlank()) {
            fail(name + ": the script ends in an incomplete snippet:\n" + pending);
        }
        return count;
    }

    /** Evaluates one complete snippet; fails on a rejected snippet or an exception. */
    private static void evaluateSnippet(JShell shell, String name, String snippet, ByteArrayOutputStream captured) {
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
