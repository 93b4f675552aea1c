package org.backstep.examples;

import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The demo's own-table mode on a table with a column of labels and a column of whole numbers: the
 * diabetes data of Efron et al. 2004 (diabetes_raw.csv, as SOURCES.md names it), its SEX code 1/2
 * written as the text labels "sex1"/"sex2" (read as categorical without being declared) and AGE in
 * whole years declared {@code --integer}; every fifth row loses one cell, the columns in turn.
 */
class DiscreteColumnsTest {

    static final Set<String> LABELS = Set.of("sex1", "sex2");

    @TempDir
    static Path dir;
    private static Path input;
    private static Path out;
    private static String console;
    private static int dataRows;

    @BeforeAll
    static void runOnce() throws Exception {
        DiabetesInput written = DiabetesInput.write(dir.resolve("discrete.csv"), v -> "sex" + ResultFiles.number(v), 5, 1, 0);
        input = written.file();
        dataRows = written.dataRows();
        out = dir.resolve("report");
        List<String> args = new ArrayList<>(List.of(input.toString(), "--integer", "AGE", "--noise", "BMI=1",
                "--out", out.toString()));
        args.addAll(List.of(OwnTableFilesTest.FAST));
        console = CommandAssertions.assertRuns(Demo::run, args);
    }

    @Test
    void theTextColumnIsInferredCategoricalWithANote() {
        // common practice, no source: the note documented in the README ("Own tables")
        assertTrue(console.contains("column 'SEX': categorical, 2 labels (sex2, sex1) (it holds text"), console);
        assertTrue(console.contains("column 'AGE': integer"), console);
        // AGE declared integer, SEX text, BMI and BP continuous: no binary column
        assertTrue(console.contains("(0 binary, 1 categorical, 1 integer)"), console);
    }

    @Test
    void completedAndSyntheticHoldOnlyKnownLabelsAndWholeNumbers() throws Exception {
        // common practice, no source: a category must be one of the file's labels, a count a whole number
        List<String[]> completed = read(ResultFiles.COMPLETED);
        List<String> header = List.of(completed.get(0));
        assertEquals(dataRows + 1, completed.size());
        int imputedSex = 0;
        for (String[] r : completed.subList(1, completed.size())) {
            String sex = r[header.indexOf("SEX")];
            String age = r[header.indexOf("AGE")];
            assertTrue(LABELS.contains(sex), "SEX is '" + sex + "' in " + String.join(",", r));
            assertTrue(age.matches("-?\\d+"), "AGE is '" + age + "' in " + String.join(",", r));
            imputedSex += r[header.indexOf("imputed")].contains("SEX") ? 1 : 0;
        }
        assertTrue(imputedSex > 0, "no SEX cell was imputed");
        List<String[]> synthetic = read(ResultFiles.SYNTHETIC);
        List<String> sh = List.of(synthetic.get(0));
        assertTrue(synthetic.size() > 10, "synthetic.csv has " + synthetic.size() + " lines");
        for (String[] r : synthetic.subList(1, synthetic.size())) {
            assertTrue(LABELS.contains(r[sh.indexOf("SEX")]), String.join(",", r));
            assertTrue(r[sh.indexOf("AGE")].matches("\\d+"), String.join(",", r));
        }
        // --noise on a table with a categorical column: the category is held as observed, the labels kept
        List<String[]> denoised = read(ResultFiles.DENOISED);
        List<String> dh = List.of(denoised.get(0));
        assertTrue(dh.contains("BMI_sd"), dh.toString());
        for (String[] r : denoised.subList(1, denoised.size())) {
            assertTrue(LABELS.contains(r[dh.indexOf("SEX")]), String.join(",", r));
        }
        String html = Files.readString(out.resolve("report.html"));
        assertTrue(html.contains("sex1") && html.contains("sex2"), "report.html lacks the category shares");
    }

    @Test
    void badDiscreteOptionsAreRefusedNamingTheOption() {
        String f = input.toString();
        CommandAssertions.assertBadArguments(Demo::run, "demo: ", new String[] {f, "--categorical", "SITE"},
                "--categorical names column 'SITE', which the file does not have");
        CommandAssertions.assertBadArguments(Demo::run, "demo: ", new String[] {f, "--integer", "AGE,,BP"},
                "--integer is 'AGE,,BP'; expected column names");
        CommandAssertions.assertBadArguments(Demo::run, "demo: ", new String[] {f, "--noise", "SEX=1"},
                "--noise names column 'SEX', which is categorical; noise is removed from continuous columns only");
    }

    private static List<String[]> read(String name) throws Exception {
        return Files.readAllLines(out.resolve(name)).stream().map(l -> l.split(",", -1)).toList();
    }
}
