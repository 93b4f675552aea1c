package org.backstep.examples;

import org.backstep.report.AnomalyScreen;
import org.backstep.report.CellNote;
import org.backstep.report.ColumnSurprisal;
import org.backstep.report.Denoising;
import org.backstep.report.DriftReport;
import org.backstep.report.DriftTest;
import org.backstep.report.Imputation;
import org.backstep.report.Surprisal;
import org.backstep.io.AtomicFiles;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import org.apache.commons.csv.CSVFormat;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * The main job's results row by row, one CSV file each in the report folder, every file written
 * atomically ({@link AtomicFiles}): the completed table ({@value #COMPLETED}), the synthetic rows
 * ({@value #SYNTHETIC}), the denoised readings ({@value #DENOISED}, when the noise of some columns is
 * given), the scores of the screen ({@value #SCORES}) and the drift tests ({@value #DRIFT}, when a
 * batch to compare is given). The README lists each file's columns.
 *
 * <p>Rows of the input are named by {@value #LINE}: the 1-based line of the input CSV file on which
 * the row starts, the header being line 1, so that the line a text editor shows is the row; empty
 * lines, which the reader skips, are counted (the demo's input file is the table.csv it writes). The
 * lines are the CSV reader's own ({@code CsvReader.readWithLines}).
 *
 * <p>Numbers are written in the shortest form that reads back to the same double (whole numbers
 * without ".0"); a missing cell is an empty cell; an infinite score or surprisal is "Infinity".
 */
final class ResultFiles {

    /** The files' CSV dialect: commas, minimal quoting, "\n" after each record. */
    private static final CSVFormat FORMAT = CSVFormat.DEFAULT.builder().setRecordSeparator('\n').build();

    static final String COMPLETED = "completed.csv";
    static final String SYNTHETIC = "synthetic.csv";
    static final String DENOISED = "denoised.csv";
    static final String SCORES = "scores.csv";
    static final String DRIFT = "drift.csv";
    /** The column that names a row of the input by its line in the input file. */
    static final String LINE = "line";
    /** How many of the most surprising columns scores.csv gives per row. */
    static final int BLAMED_COLUMNS = 3;
    /** The family-wise level at which drift.csv says whether a test rejects (the usual 5%). */
    static final double DRIFT_LEVEL = 0.05;
    /**
     * The noise given to the columns that --noise does not name, as a share of the column's standard
     * deviation: the denoiser needs a noise above 0 for every continuous column; such a column is
     * taken as observed and written as read.
     */
    static final double EXACT_SHARE = 1e-6;

    private ResultFiles() {
    }

    // ------------------------------------------------------------------ completed.csv

    /**
     * What completed.csv holds.
     *
     * @param rows rows written
     * @param imputedCells cells filled in
     */
    record Completed(int rows, int imputedCells) {
    }

    /**
     * Writes completed.csv: per input row its line, every column with each missing cell filled by the
     * imputation's mean (a binary cell by its most likely value: 1 when at least half the draws are
     * 1; a categorical cell by the label most frequent among the draws; an integer cell by the median
     * draw, a whole number), a column naming the row's imputed columns, and for each column with a
     * missing cell the interval of its imputed cells (continuous and integer: {@code <col>_low90},
     * {@code <col>_high90} at the imputation's level; binary: {@code <col>_p1}, the share of draws
     * that are 1; categorical: {@code <col>_share}, the share of draws in the label written), empty
     * where the cell was observed. Categorical cells hold their labels.
     *
     * @param dir the report folder
     * @param table the input table
     * @param lines per row, its line in the input file
     * @param incomplete the rows of {@code table} with a missing cell, ascending
     * @param imputation the imputation of {@code table.selectRows(incomplete)}, or null when there is no such row
     * @param level the imputation's interval level (for the names of the interval columns)
     * @return what was written
     */
    static Completed completed(Path dir, Table table, long[] lines, int[] incomplete, Imputation imputation, double level)
            throws IOException {
        int cols = table.columns();
        boolean[] gappy = new boolean[cols];
        for (int r : incomplete) {
            for (int j = 0; j < cols; j++) {
                gappy[j] |= Double.isNaN(table.get(r, j));
            }
        }
        String percent = String.valueOf(Math.round(100 * level));
        Set<String> taken = new HashSet<>(table.names());
        List<String> header = new ArrayList<>();
        header.add(unique(LINE, taken));
        header.addAll(table.names());
        header.add(unique("imputed", taken));
        for (int j = 0; j < cols; j++) {
            if (gappy[j]) {
                if (table.kind(j) == ColumnKind.BINARY) {
                    header.add(unique(table.name(j) + "_p1", taken));
                } else if (table.kind(j) == ColumnKind.CATEGORICAL) {
                    header.add(unique(table.name(j) + "_share", taken));
                } else {
                    header.add(unique(table.name(j) + "_low" + percent, taken));
                    header.add(unique(table.name(j) + "_high" + percent, taken));
                }
            }
        }
        StringBuilder out = new StringBuilder();
        row(out, header);
        int k = 0;
        int imputed = 0;
        for (int i = 0; i < table.rows(); i++) {
            boolean filled = k < incomplete.length && incomplete[k] == i;
            List<String> cells = new ArrayList<>();
            List<String> names = new ArrayList<>();
            List<String> intervals = new ArrayList<>();
            cells.add(Long.toString(lines[i]));
            for (int j = 0; j < cols; j++) {
                double v = table.get(i, j);
                boolean missing = Double.isNaN(v);
                boolean binary = table.kind(j) == ColumnKind.BINARY;
                boolean categorical = table.kind(j) == ColumnKind.CATEGORICAL;
                String label = null;
                double share = Double.NaN;
                if (missing) {
                    double mean = imputation.mean().get(k, j);
                    if (categorical) {
                        label = imputation.mostLikely(k, j);
                        share = imputation.categoryShares(k, j)[table.categories(j).indexOf(label)];
                    } else if (table.kind(j) == ColumnKind.INTEGER) {
                        v = medianDraw(imputation, k, j);
                    } else {
                        v = binary ? (mean >= 0.5 ? 1 : 0) : mean;
                    }
                    names.add(table.name(j));
                    imputed++;
                } else if (categorical) {
                    label = table.label(i, j);
                }
                cells.add(categorical ? label : number(v));
                if (gappy[j]) {
                    if (binary) {
                        intervals.add(missing ? number(imputation.mean().get(k, j)) : "");
                    } else if (categorical) {
                        intervals.add(missing ? number(share) : "");
                    } else {
                        intervals.add(missing ? number(imputation.lower().get(k, j)) : "");
                        intervals.add(missing ? number(imputation.upper().get(k, j)) : "");
                    }
                }
            }
            cells.add(String.join(";", names));
            cells.addAll(intervals);
            row(out, cells);
            if (filled) {
                k++;
            }
        }
        write(dir.resolve(COMPLETED), out);
        return new Completed(table.rows(), imputed);
    }

    /** The median of a cell's draws, the lower of the two middle ones for an even count: always one of the draws. */
    static double medianDraw(Imputation imputation, int row, int column) {
        double[] d = new double[imputation.draws().size()];
        for (int q = 0; q < d.length; q++) {
            d[q] = imputation.draws().get(q).get(row, column);
        }
        java.util.Arrays.sort(d);
        return d[(d.length - 1) / 2];
    }

    // ------------------------------------------------------------------ synthetic.csv

    /** Writes synthetic.csv: the synthetic rows, the table's columns in original units (binary 0/1, categorical as labels). */
    static void synthetic(Path dir, Table samples) throws IOException {
        StringBuilder out = new StringBuilder();
        row(out, samples.names());
        for (int i = 0; i < samples.rows(); i++) {
            List<String> cells = new ArrayList<>();
            for (int j = 0; j < samples.columns(); j++) {
                cells.add(samples.kind(j) == ColumnKind.CATEGORICAL ? samples.label(i, j) : number(samples.get(i, j)));
            }
            row(out, cells);
        }
        write(dir.resolve(SYNTHETIC), out);
    }

    // ------------------------------------------------------------------ denoised.csv

    /**
     * The noise of every column for the denoiser: the given one, or {@link #EXACT_SHARE} of the
     * column's standard deviation for the others (taken as observed).
     */
    static double[] noiseOfEveryColumn(Table table, Map<String, Double> noise) {
        double[] sd = new double[table.columns()];
        for (int j = 0; j < table.columns(); j++) {
            Double given = noise.get(table.name(j));
            if (table.kind(j) == ColumnKind.CATEGORICAL) {
                sd[j] = 0.0;        // held as observed by the library: a category has no reading noise
            } else if (given != null) {
                sd[j] = given;
            } else {
                double[] observed = Arrays.stream(table.column(j)).filter(v -> !Double.isNaN(v)).toArray();
                double s = observed.length > 1 ? Stats.sd(observed) : 0;
                sd[j] = EXACT_SHARE * (s > 0 ? s : 1);
            }
        }
        return sd;
    }

    /**
     * Writes denoised.csv: per complete input row its line, every column (the columns with a given
     * noise denoised, by the posterior mean; the others as read), then for each denoised column
     * {@code <col>_sd}, the posterior standard deviation.
     *
     * @param rows the rows of {@code table} that were denoised (its complete rows), ascending
     * @param denoising the denoising of {@code table.selectRows(rows)}
     * @param noise the columns with a given noise
     */
    static void denoised(Path dir, Table table, long[] lines, int[] rows, Denoising denoising, Map<String, Double> noise)
            throws IOException {
        Set<String> taken = new HashSet<>(table.names());
        List<String> header = new ArrayList<>();
        header.add(unique(LINE, taken));
        header.addAll(table.names());
        List<Integer> noisy = new ArrayList<>();
        for (int j = 0; j < table.columns(); j++) {
            if (noise.containsKey(table.name(j))) {
                noisy.add(j);
                header.add(unique(table.name(j) + "_sd", taken));
            }
        }
        StringBuilder out = new StringBuilder();
        row(out, header);
        for (int k = 0; k < rows.length; k++) {
            int i = rows[k];
            List<String> cells = new ArrayList<>();
            cells.add(Long.toString(lines[i]));
            for (int j = 0; j < table.columns(); j++) {
                cells.add(noisy.contains(j) ? number(denoising.mean().get(k, j))
                        : table.kind(j) == ColumnKind.CATEGORICAL ? table.label(i, j) : number(table.get(i, j)));
            }
            for (int j : noisy) {
                cells.add(number(denoising.standardDeviation().get(k, j)));
            }
            row(out, cells);
        }
        write(dir.resolve(DENOISED), out);
    }

    // ------------------------------------------------------------------ scores.csv

    /**
     * Writes scores.csv: per screened row its line, its score (nats per record, model space), 1 if
     * flagged else 0, the {@value #BLAMED_COLUMNS} most surprising columns with their surprisal (nats,
     * model space; only for the rows the screen computed it for, its flagged rows; empty for the
     * others), and the screen's notes on the row's cells.
     *
     * @param screened per screened row, its row in the input table
     * @return the rows that have surprisal figures
     */
    static int scores(Path dir, AnomalyScreen screen, int[] screened, long[] lines) throws IOException {
        List<String> header = new ArrayList<>(List.of(LINE, "score_nats", "flagged"));
        for (int k = 1; k <= BLAMED_COLUMNS; k++) {
            header.add("column_" + k);
            header.add("surprisal_" + k + "_nats");
        }
        header.add("note");
        double[] scores = screen.scores();
        boolean[] flagged = new boolean[scores.length];
        for (int f : screen.flagged()) {
            flagged[f] = true;
        }
        Surprisal surprisal = screen.surprisal();
        StringBuilder out = new StringBuilder();
        row(out, header);
        int withFigures = 0;
        for (int i = 0; i < scores.length; i++) {
            List<String> cells = new ArrayList<>(List.of(Long.toString(lines[screened[i]]), number(scores[i]),
                    flagged[i] ? "1" : "0"));
            int at = surprisal.indexOf(i);
            List<ColumnSurprisal> ranked = at >= 0 ? surprisal.ranked(at) : List.of();
            withFigures += at >= 0 ? 1 : 0;
            for (int k = 0; k < BLAMED_COLUMNS; k++) {
                cells.add(k < ranked.size() ? ranked.get(k).column() : "");
                cells.add(k < ranked.size() ? number(ranked.get(k).nats()) : "");
            }
            cells.add(String.join(" ", screen.notesFor(i).stream().map(CellNote::text).toList()));
            row(out, cells);
        }
        write(dir.resolve(SCORES), out);
        return withFigures;
    }

    // ------------------------------------------------------------------ drift.csv

    /**
     * Writes drift.csv: the test on the scores first, then one test per column, most significant
     * first; each with its test, statistic, p-value, Holm-adjusted p-value, the values tested in each
     * batch, and whether it rejects at {@value #DRIFT_LEVEL} after the adjustment.
     */
    static void drift(Path dir, DriftReport report) throws IOException {
        StringBuilder out = new StringBuilder();
        row(out, List.of("subject", "test", "statistic", "p_value", "p_value_holm", "reference_values", "batch_values",
                "drift_at_5pct"));
        List<DriftTest> tests = new ArrayList<>();
        tests.add(report.score());
        tests.addAll(report.rankedColumns());
        for (DriftTest t : tests) {
            row(out, List.of(t.subject(), t.test(), number(t.statistic()), number(t.pValue()), number(t.adjustedPValue()),
                    Integer.toString(t.referenceCount()), Integer.toString(t.batchCount()), t.rejects(DRIFT_LEVEL) ? "1" : "0"));
        }
        write(dir.resolve(DRIFT), out);
    }

    // ------------------------------------------------------------------ text

    /** A name not among {@code taken} (underscores put before it until it is not), then taken. */
    private static String unique(String name, Set<String> taken) {
        String n = name;
        while (taken.contains(n)) {
            n = "_" + n;
        }
        taken.add(n);
        return n;
    }

    /** The shortest text that reads back to the same double; whole numbers without ".0"; NaN as empty. */
    static String number(double v) {
        if (Double.isNaN(v)) {
            return "";
        }
        if (Double.isInfinite(v)) {
            return v > 0 ? "Infinity" : "-Infinity";
        }
        if (v == Math.rint(v) && Math.abs(v) < 1e15) {
            return Long.toString((long) v);
        }
        return Double.toString(v);
    }

    /** One record, quoted where RFC 4180 needs it (commons-csv, as {@code CsvTables.writer()} writes). */
    private static void row(StringBuilder out, List<String> cells) {
        try {
            FORMAT.printRecord(out, cells.toArray());
        } catch (IOException e) {
            throw new UncheckedIOException(e);      // a StringBuilder does not throw
        }
    }

    private static void write(Path file, StringBuilder text) throws IOException {
        AtomicFiles.write(file, text.toString().getBytes(StandardCharsets.UTF_8));
    }
}
