package org.backstep.examples;

import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The demo command on a table of one's own, with missing cells, a header and empty lines, given
 * --noise and --compare: every result is a file of the report folder, with the documented columns,
 * its rows named by their lines in the input file. The table is four columns of the open diabetes
 * data (Efron, Hastie, Johnstone &amp; Tibshirani 2004, "Least Angle Regression"; BSD-3-Clause, see
 * diffusion-core/src/test/resources/data/SOURCES.md), SEX recoded from 1/2 to 0/1. The job runs
 * once, with a small, fast model; the figures are not judged here, only the files.
 */
class OwnTableFilesTest {

    /** T = 50 and a 32 x 32 network, as DemoPipelineTest (which measured them stable); 1,000 epochs of 2 minibatches. */
    static final String[] FAST = {"--train-steps", "50", "--epochs", "1000", "--hidden", "32,32", "--no-progress", "--seed", "3"};
    /** Every ROW_GAP-th data row loses one cell, the columns in turn. */
    static final int ROW_GAP = 6;
    /** An empty line is put before every EMPTY_EVERY-th data row (the reader skips it; the lines count it). */
    static final int EMPTY_EVERY = 50;
    static final List<String> COLUMNS = DiabetesInput.COLUMNS;

    @TempDir
    static Path dir;
    private static Path input;
    private static Path out;
    private static String console;
    /** Per line of the input file, its cells (null for the header and empty lines). */
    private static final Map<Integer, String[]> LINES = new HashMap<>();
    private static int dataRows;

    @BeforeAll
    static void runOnce() throws Exception {
        DiabetesInput written = DiabetesInput.write(dir.resolve("mine.csv"), v -> ResultFiles.number(v - 1), ROW_GAP, 0,
                EMPTY_EVERY);
        input = written.file();
        dataRows = written.dataRows();
        LINES.putAll(written.lines());
        // the batch to compare: the first 80 rows of the same data, complete
        Path batch = dir.resolve("batch.csv");
        Files.writeString(batch, String.join("\n", Files.readAllLines(input).stream().filter(l -> !l.isEmpty()
                && !l.contains(",,") && !l.startsWith(",") && !l.endsWith(",")).limit(81).toList()) + "\n");
        out = dir.resolve("report");
        List<String> args = new ArrayList<>(List.of(input.toString(), "--binary", "SEX", "--out", out.toString(),
                "--noise", "BMI=0.5,BP=2", "--compare", batch.toString()));
        args.addAll(List.of(FAST));
        console = CommandAssertions.assertRuns(Demo::run, args);
    }

    @Test
    void completedKeepsObservedCellsFillsTheOthersAndNamesRowsByLine() throws Exception {
        List<String[]> rows = read(ResultFiles.COMPLETED);
        // common practice, no source: the documented header (README, "The report folder")
        assertEquals(List.of("line", "AGE", "SEX", "BMI", "BP", "imputed", "AGE_low90", "AGE_high90", "SEX_p1", "BMI_low90",
                "BMI_high90", "BP_low90", "BP_high90"), List.of(rows.get(0)));
        assertEquals(dataRows + 1, rows.size());
        Set<Integer> seen = new HashSet<>();
        for (String[] r : rows.subList(1, rows.size())) {
            int line = Integer.parseInt(r[0]);
            String[] in = LINES.get(line);
            assertTrue(in != null && seen.add(line), "line " + line + " is not a data line of the input, or is named twice");
            List<String> imputed = r[5].isEmpty() ? List.of() : List.of(r[5].split(";"));
            for (int j = 0; j < COLUMNS.size(); j++) {
                assertFalse(r[1 + j].isEmpty(), "completed.csv has a missing cell at line " + line);
                if (in[j].isEmpty()) {
                    assertTrue(imputed.contains(COLUMNS.get(j)), "line " + line + ": " + String.join(",", r));
                } else {
                    assertEquals(Double.parseDouble(in[j]), Double.parseDouble(r[1 + j]), 0.0, "observed cell changed at line " + line);
                    assertFalse(imputed.contains(COLUMNS.get(j)));
                }
            }
            assertTrue(r[2].equals("0") || r[2].equals("1"), "SEX is " + r[2] + " at line " + line);
            // an imputed continuous cell has its interval, ends in order; an observed one has none
            for (int j : new int[] {0, 2, 3}) {
                int low = j == 0 ? 6 : j == 2 ? 9 : 11;
                if (in[j].isEmpty()) {
                    assertTrue(Double.parseDouble(r[low]) <= Double.parseDouble(r[low + 1]), String.join(",", r));
                } else {
                    assertTrue(r[low].isEmpty() && r[low + 1].isEmpty(), String.join(",", r));
                }
            }
        }
    }

    @Test
    void syntheticRowsHaveTheColumnsAndBinaryCellsAreZeroOrOne() throws Exception {
        List<String[]> rows = read(ResultFiles.SYNTHETIC);
        assertEquals(COLUMNS, List.of(rows.get(0)));
        assertTrue(rows.size() > 1);
        for (String[] r : rows.subList(1, rows.size())) {
            assertTrue(r[1].equals("0") || r[1].equals("1"), "SEX is " + r[1]);
            for (String c : r) {
                assertTrue(Double.isFinite(Double.parseDouble(c)), String.join(",", r));
            }
        }
    }

    @Test
    void scoresNameCompleteRowsByLineAndBlameColumnsOfFlaggedRows() throws Exception {
        List<String[]> rows = read(ResultFiles.SCORES);
        assertEquals(List.of("line", "score_nats", "flagged", "column_1", "surprisal_1_nats", "column_2", "surprisal_2_nats",
                "column_3", "surprisal_3_nats", "note"), List.of(rows.get(0)));
        long complete = LINES.values().stream().filter(c -> List.of(c).stream().noneMatch(String::isEmpty)).count();
        assertEquals(complete + 1, rows.size());
        for (String[] r : rows.subList(1, rows.size())) {
            String[] in = LINES.get(Integer.parseInt(r[0]));
            assertTrue(in != null && List.of(in).stream().noneMatch(String::isEmpty), "line " + r[0] + " is not a complete row");
            assertFalse(Double.isNaN(Double.parseDouble(r[1])));
            assertTrue(r[2].equals("1") == !r[3].isEmpty(), "flagged rows, and only they, get columns: " + String.join(",", r));
            if (!r[3].isEmpty()) {
                assertTrue(COLUMNS.contains(r[3]) && Double.parseDouble(r[4]) >= Double.parseDouble(r[6]), String.join(",", r));
            }
        }
    }

    @Test
    void denoisedChangesOnlyTheColumnsGivenWithNoise() throws Exception {
        List<String[]> rows = read(ResultFiles.DENOISED);
        assertEquals(List.of("line", "AGE", "SEX", "BMI", "BP", "BMI_sd", "BP_sd"), List.of(rows.get(0)));
        for (String[] r : rows.subList(1, rows.size())) {
            String[] in = LINES.get(Integer.parseInt(r[0]));
            assertEquals(in[0], r[1]);
            assertEquals(in[1], r[2]);
            assertTrue(Double.parseDouble(r[5]) > 0 && Double.parseDouble(r[6]) > 0, String.join(",", r));
        }
    }

    @Test
    void driftHasTheScoreTestAndOneTestPerColumn() throws Exception {
        List<String[]> rows = read(ResultFiles.DRIFT);
        assertEquals(List.of("subject", "test", "statistic", "p_value", "p_value_holm", "reference_values", "batch_values",
                "drift_at_5pct"), List.of(rows.get(0)));
        assertEquals(1 + 1 + COLUMNS.size(), rows.size());
        assertEquals("score", rows.get(1)[0]);
        for (String[] r : rows.subList(1, rows.size())) {
            double p = Double.parseDouble(r[3]);
            double adjusted = Double.parseDouble(r[4]);
            // Holm 1979: an adjusted p-value is at least the p-value and at most 1
            assertTrue(p >= 0 && p <= adjusted && adjusted <= 1, String.join(",", r));
        }
        assertTrue(console.contains(ResultFiles.DRIFT + ": batch.csv (80 rows)"), console);
        String html = Files.readString(out.resolve("report.html"));
        assertTrue(html.contains("Drift: a new batch") && html.contains(ResultFiles.DENOISED), "report.html lacks the drift section");
    }

    @Test
    void badNoiseAndCompareAreRefusedNamingTheOption() throws Exception {
        String f = input.toString();
        Path wrong = dir.resolve("wrong.csv");
        Files.writeString(wrong, "AGE,HEIGHT\n1,2\n3,4\n");
        assertBad(new String[] {f, "--noise", "WEIGHT=1"}, "--noise names column 'WEIGHT', which the table does not have");
        assertBad(new String[] {f, "--noise", "BMI=0"}, "--noise of column 'BMI' is 0; expected a number above 0");
        assertBad(new String[] {f, "--noise", "BMI=-2"}, "--noise of column 'BMI' is -2");
        assertBad(new String[] {f, "--binary", "SEX", "--noise", "SEX=0.1"}, "--noise names column 'SEX', which is binary");
        assertBad(new String[] {f, "--noise", "BMI"}, "--noise has 'BMI'; expected COL=SD");
        assertBad(new String[] {f, "--compare", dir.resolve("none.csv").toString()}, "--compare names no such file");
        assertBad(new String[] {f, "--compare", wrong.toString()}, "--compare " + wrong);
    }

    private static void assertBad(String[] args, String expected) {
        CommandAssertions.assertBadArguments(Demo::run, "demo: ", args, expected);
    }

    /** The cells of a written file, header first (no cell of these files is quoted). */
    private static List<String[]> read(String name) throws Exception {
        return Files.readAllLines(out.resolve(name)).stream().map(l -> l.split(",", -1)).toList();
    }
}
