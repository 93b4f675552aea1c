package org.backstep.examples;

import org.backstep.table.CsvTables;
import org.backstep.table.Table;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.function.DoubleFunction;

/**
 * The input of the demo's own-table tests: four columns of the open diabetes data (Efron, Hastie,
 * Johnstone &amp; Tibshirani 2004, "Least Angle Regression"; BSD-3-Clause, see
 * diffusion-core/src/test/resources/data/SOURCES.md), written as a CSV file with some cells blanked
 * and, when asked, empty lines between the rows.
 *
 * @param file the file written
 * @param dataRows its data rows (the data set's rows)
 * @param lines per 1-based line of the file holding a data row, the row's cells as written ("" for a blanked one)
 */
record DiabetesInput(Path file, int dataRows, Map<Integer, String[]> lines) {

    /** The columns written, in order. */
    static final List<String> COLUMNS = List.of("AGE", "SEX", "BMI", "BP");

    /**
     * Writes the file.
     *
     * @param file where
     * @param sex how the SEX code (1 or 2 in the data) is written
     * @param gapEvery row i loses one cell when i % gapEvery == gapAt, the columns in turn ((i / gapEvery) % 4)
     * @param gapAt see gapEvery
     * @param emptyEvery an empty line is put before every emptyEvery-th data row (after the first), 0 for none
     * @return the file and its rows' lines
     */
    static DiabetesInput write(Path file, DoubleFunction<String> sex, int gapEvery, int gapAt, int emptyEvery)
            throws Exception {
        Path source = JShellScriptsTest.basedir().resolve("../diffusion-core/src/test/resources/data/diabetes_raw.csv").normalize();
        Table raw = CsvTables.reader().read(source);
        StringBuilder text = new StringBuilder(String.join(",", COLUMNS)).append('\n');
        Map<Integer, String[]> lines = new HashMap<>();
        int line = 1;
        for (int i = 0; i < raw.rows(); i++) {
            if (emptyEvery > 0 && i > 0 && i % emptyEvery == 0) {
                text.append('\n');
                line++;
            }
            String[] cells = {
                ResultFiles.number(raw.get(i, raw.indexOf("AGE"))),
                sex.apply(raw.get(i, raw.indexOf("SEX"))),
                ResultFiles.number(raw.get(i, raw.indexOf("BMI"))),
                ResultFiles.number(raw.get(i, raw.indexOf("BP")))};
            if (i % gapEvery == gapAt) {
                cells[(i / gapEvery) % cells.length] = "";
            }
            text.append(String.join(",", cells)).append('\n');
            line++;
            lines.put(line, cells);
        }
        Files.writeString(file, text.toString());
        return new DiabetesInput(file, raw.rows(), Map.copyOf(lines));
    }
}
