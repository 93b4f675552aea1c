package org.backstep.bench.quality;

import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.function.DoublePredicate;
import java.util.stream.IntStream;

import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;
import org.backstep.table.TableTransform;

/**
 * One open table of the benchmark, read and split as the project's shared data notes (SOURCES.md)
 * prescribe: row i (0-based, file order) is a test row when i % 5 == 0, a training row otherwise;
 * the standardized space is that of the training rows' mean and population standard deviation.
 *
 * @param key the table's key in the baselines file
 * @param label the table's name in the printed table
 * @param file the CSV file in the data folder
 * @param leftOut columns left out
 * @param labelsFile the file of anomaly labels in the labels folder, or null
 * @param normal which label values are the normal class (when labelsFile is set)
 */
record OpenTable(String key, String label, String file, List<String> leftOut, String labelsFile, DoublePredicate normal) {

    /** SOURCES.md: row i is a test row when i % TEST_EVERY == 0. */
    static final int TEST_EVERY = 5;

    /** The four tables, in the order of the printed table. */
    static final List<OpenTable> ALL = List.of(
            new OpenTable("iris", "iris", "iris.csv", List.of(), null, null),
            new OpenTable("breast_cancer", "breast_cancer", "breast_cancer.csv", List.of(),
                    "breast_cancer_labels.csv", v -> v == 0),
            new OpenTable("diabetes_raw_without_SEX", "diabetes_raw w/o SEX", "diabetes_raw.csv", List.of("SEX"), null, null),
            new OpenTable("digits_binary", "digits_binary", "digits_binary.csv", List.of(), "digits_labels.csv", v -> v <= 8));

    /**
     * A table read and split.
     *
     * @param all every row, the left-out columns dropped
     * @param train the training rows
     * @param test the test rows
     * @param standardized the transform to SOURCES.md's space (STANDARDIZE of every continuous
     *     column by the training rows; binary columns unchanged)
     * @param labels one label per row of {@code all}, or null
     */
    record Split(OpenTable table, Table all, Table train, Table test, TableTransform standardized, double[] labels) {

        /** @return the training rows of the normal class */
        Table normalTrain() {
            return all.selectRows(rows(i -> i % TEST_EVERY != 0 && table.normal().test(labels[i])));
        }

        /** @return the test rows of the normal class */
        Table normalTest() {
            return all.selectRows(rows(i -> i % TEST_EVERY == 0 && table.normal().test(labels[i])));
        }

        /** @return the test rows of the normal class, then every row of the anomalous class */
        Table screened() {
            int[] normal = rows(i -> i % TEST_EVERY == 0 && table.normal().test(labels[i]));
            int[] anomalous = rows(i -> !table.normal().test(labels[i]));
            return all.selectRows(IntStream.concat(IntStream.of(normal), IntStream.of(anomalous)).toArray());
        }

        /** @return each column's scale in {@link #standardized()} (binary columns: 1), for RMSE in its units */
        double[] scales() {
            return IntStream.range(0, all.columns()).mapToDouble(j -> standardized.transform(j).scale()).toArray();
        }

        /** @return how many rows of {@link #screened()} are normal (they come first) */
        int screenedNormal() {
            return rows(i -> i % TEST_EVERY == 0 && table.normal().test(labels[i])).length;
        }

        private int[] rows(java.util.function.IntPredicate keep) {
            return IntStream.range(0, all.rows()).filter(keep).toArray();
        }
    }

    /**
     * Reads and splits the table.
     *
     * @param data the folder of the table CSVs
     * @param labelsFolder the folder of the label CSVs
     * @return the split
     * @throws IOException if a file cannot be read
     */
    Split read(Path data, Path labelsFolder) throws IOException {
        try {
            Table all = CsvTables.reader().read(data.resolve(file));
            if (!leftOut.isEmpty()) {
                List<String> keep = new ArrayList<>(all.names());
                keep.removeAll(leftOut);
                all = all.selectColumns(keep.toArray(String[]::new));
            }
            Table train = all.filterRows(i -> i % TEST_EVERY != 0);
            Table test = all.filterRows(i -> i % TEST_EVERY == 0);
            double[] labels = null;
            if (labelsFile != null) {
                labels = CsvTables.reader().inferKinds(false).read(labelsFolder.resolve(labelsFile)).column(0);
                if (labels.length != all.rows()) {
                    throw new IllegalStateException(labelsFile + " has " + labels.length + " rows; " + file + " has "
                            + all.rows());
                }
            }
            return new Split(this, all, train, test, TableTransform.fit(train, Set.of()), labels);
        } catch (TableFormatException e) {
            throw new IOException(e.getMessage(), e);
        }
    }
}
