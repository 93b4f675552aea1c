package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;

import java.nio.file.Files;
import java.util.Arrays;
import java.util.List;
import java.util.stream.IntStream;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.junit.jupiter.api.Test;

/** The open tables of test resources data/ read through {@link CsvTables}. */
class OpenDataTest {

    /** Relative tolerance of a mean recomputed by commons-math3 from the same doubles. */
    private static final double IDENTITY_TOL = 1e-12;

    /** The UCI summary statistics are printed to 2 decimals. */
    private static final double TWO_DECIMALS_TOL = 0.01;

    @Test
    void irisShapeAndMeans() throws Exception {
        Table iris = OpenData.read("iris.csv");
        // data/SOURCES.md: iris.csv is 150 x 4, numeric columns only
        assertEquals(150, iris.rows());
        assertEquals(4, iris.columns());
        assertEquals(List.of("sepal_length_cm", "sepal_width_cm", "petal_length_cm", "petal_width_cm"), iris.names());
        assertArrayEquals(new int[] {0, 1, 2, 3}, iris.continuousColumns());
        assertFalse(iris.hasMissing());

        // independent reading: split the lines by hand, parse with Double.parseDouble, average with
        // commons-math3 Mean
        List<String> lines = Files.readAllLines(OpenData.path("iris.csv"));
        double[][] byHand = lines.stream().skip(1).map(l -> Arrays.stream(l.split(","))
                .mapToDouble(Double::parseDouble).toArray()).toArray(double[][]::new);
        for (int c = 0; c < 4; c++) {
            final int col = c;
            double expected = new Mean().evaluate(Arrays.stream(byHand).mapToDouble(r -> r[col]).toArray());
            double actual = Arrays.stream(iris.column(c)).sum() / iris.rows();
            assertEquals(expected, actual, IDENTITY_TOL * expected, iris.name(c));
        }
        // UCI Machine Learning Repository, iris.names, "Summary Statistics" means 5.84, 3.05, 3.76,
        // 1.20 (value from memory; that file's 3.05 predates a corrected cell, this copy gives 3.057)
        double[] uci = {5.84, 3.05, 3.76, 1.20};
        for (int c = 0; c < 4; c++) {
            assertEquals(uci[c], Arrays.stream(iris.column(c)).sum() / 150, TWO_DECIMALS_TOL, iris.name(c));
        }
    }

    @Test
    void otherTablesHaveTheirPublishedShapes() {
        // data/SOURCES.md, the table of files: rows x columns
        Table cancer = OpenData.read("breast_cancer.csv");
        assertEquals(569, cancer.rows());
        assertEquals(30, cancer.columns());
        assertEquals(30, cancer.continuousColumns().length);

        Table diabetes = OpenData.read("diabetes_raw.csv");
        assertEquals(442, diabetes.rows());
        assertEquals(11, diabetes.columns());
        // data/SOURCES.md: SEX takes the values 1 and 2, so it is not inferred binary
        assertEquals(ColumnKind.CONTINUOUS, diabetes.kind(diabetes.indexOf("SEX")));
        assertArrayEquals(new double[] {1, 2}, Arrays.stream(diabetes.column(1)).distinct().sorted().toArray());

        Table digits = OpenData.read("digits_binary.csv");
        assertEquals(1797, digits.rows());
        assertEquals(64, digits.columns());
        // data/SOURCES.md: 0/1 pixels, so every column is inferred binary; 10 columns are always 0
        assertEquals(64, digits.binaryColumns().length);
        long alwaysZero = IntStream.range(0, 64).filter(c -> Arrays.stream(digits.column(c)).allMatch(v -> v == 0))
                .count();
        assertEquals(10, alwaysZero);
        assertFalse(cancer.hasMissing() || diabetes.hasMissing() || digits.hasMissing());
    }
}
