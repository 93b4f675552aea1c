package org.backstep.internal.chain;

import org.backstep.report.CellNote;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Set;

/**
 * Which cells a model cannot score: finite cells that its float32 model space cannot hold, and
 * cells its columns give probability zero.
 *
 * <p><b>The range.</b> A continuous cell is diffused in float32 as x_t = sqrt(alpha-bar_t) z +
 * sqrt(1 - alpha-bar_t) eps. Near z, float32 numbers lie |z| 2^-23 apart at most (24 significant
 * bits; IEEE 754 binary32), so once |z| 2^-23 reaches sqrt(beta_1), the standard deviation of the
 * first step's noise, the first steps no longer add their noise to the cell and the bound computed
 * is no longer the model's bound; long before the float range (3.4e38) is reached. The limit is
 * therefore |z| &lt;= sqrt(beta_1) 2^23 (about 2.7e5 standard deviations of the training values at
 * T = 100 on the linear schedule, beta_1 = 1e-3; 8.4e4 at T = 1000). A cell beyond it makes the
 * record's score +infinity: past every score the model can compute.
 *
 * <p><b>The support.</b> A log-scale column holds values above 0 only; a column that was constant
 * in the training rows holds its one value only (the model carries it as a point mass). Any other
 * value has probability zero under the model: score +infinity.
 *
 * <p><b>Training rows</b> have no fitted transform yet (it is fitted on them), so their range is
 * judged on robust statistics of each continuous column's observed cells (of their logs for a log
 * column): the median and 1.4826 times the median absolute deviation, the standard deviation's
 * robust stand-in for normal data (Rousseeuw &amp; Croux 1993, "Alternatives to the median absolute
 * deviation", section 1); a cell further than the limit from the median in those units is beyond
 * range. Where more than half the cells share one value the median absolute deviation is 0, and
 * the smallest nonzero distance from the median stands in for it (our choice: then no spread is
 * known, and this keeps every value that differs no more than the rest).
 */
public final class ScoringRange {

    /** 2^-23: the largest spacing of float32 numbers relative to their size. */
    static final double FLOAT_SPACING = 0x1p-23;
    /** 1 / Phi^-1(3/4): the median absolute deviation times this estimates sigma for normal data. */
    static final double MAD_TO_SD = 1.4826;

    private ScoringRange() {
    }

    /**
     * @param continuous the schedule of the continuous columns (the training schedule)
     * @return sqrt(beta_1) 2^23, the largest |z| a continuous cell may have in model space
     */
    public static double limit(NoiseSchedule continuous) {
        return Math.sqrt(continuous.beta(1)) / FLOAT_SPACING;
    }

    /** @return the limit of this chain's training schedule (its first step's beta) */
    public static double limit(Chain chain) {
        return Math.sqrt(chain.continuous.beta(1)) / FLOAT_SPACING;
    }

    /**
     * The cells of {@code records} that the model cannot score, under its fitted transform: a
     * continuous cell with |z| beyond {@code limit} (or z not finite), a cell at or below 0 in a log
     * column, a cell other than the value of a constant column, a categorical cell whose label the
     * training table did not have (the score of an unknown category: +infinity, with a note naming
     * it). Missing cells are not judged.
     *
     * @param records records with the transform's columns (not modified)
     * @param transform the model's column transforms
     * @param limit the largest |z|
     * @return one note per such cell, in row order then column order
     */
    public static List<CellNote> unscorable(Table records, TableTransform transform, double limit) {
        List<CellNote> out = new ArrayList<>();
        // per categorical column, which of the records' category indices the training table lacked
        // (worked out once per column, not per cell: K can be in the thousands)
        java.util.Map<String, List<String>> trained = transform.categories();
        boolean[][] unknown = new boolean[records.columns()][];
        for (int c = 0; c < records.columns(); c++) {
            List<String> known = trained.get(records.name(c));
            if (records.kind(c) == ColumnKind.CATEGORICAL && known != null) {
                java.util.Set<String> knownSet = new java.util.HashSet<>(known);
                List<String> labels = records.categories(c);
                unknown[c] = new boolean[labels.size()];
                for (int k = 0; k < labels.size(); k++) {
                    unknown[c][k] = !knownSet.contains(labels.get(k));
                }
            }
        }
        for (int r = 0; r < records.rows(); r++) {
            for (int c = 0; c < records.columns(); c++) {
                double x = records.get(r, c);
                if (!Double.isNaN(x) && records.kind(c) == ColumnKind.CATEGORICAL) {
                    if (unknown[c] != null && unknown[c][(int) x]) {
                        String label = records.label(r, c);
                        List<String> known = trained.get(records.name(c));
                        out.add(CellNote.of(r, records.name(c), x, CellNote.Kind.OUTSIDE_SUPPORT,
                                "the category '" + label + "' is not among the " + known.size() + " categories of the"
                                        + " training table, so the model gives it probability zero; the record scores"
                                        + " +infinity"));
                    }
                    continue;
                }
                if (Double.isNaN(x) || records.kind(c) != ColumnKind.CONTINUOUS && records.kind(c) != ColumnKind.INTEGER) {
                    continue;
                }
                ColumnTransform t = transform.transform(c);
                String name = records.name(c);
                switch (t.kind()) {
                    case CONSTANT -> {
                        if (x != t.shift()) {
                            out.add(CellNote.of(r, name, x, CellNote.Kind.OUTSIDE_SUPPORT,
                                    "the column held only " + t.shift() + " in the training rows, so the model gives"
                                            + " any other value probability zero; the record scores +infinity"));
                        }
                    }
                    case LOG_STANDARDIZE -> {
                        if (!(x > 0)) {
                            out.add(CellNote.of(r, name, x, CellNote.Kind.OUTSIDE_SUPPORT,
                                    "the column is modelled on the log scale and holds only values above 0;"
                                            + " the record scores +infinity"));
                        } else {
                            checkRange(out, r, name, x, t.forward(x), limit);
                        }
                    }
                    default -> checkRange(out, r, name, x, t.forward(x), limit);
                }
            }
        }
        return out;
    }

    private static void checkRange(List<CellNote> out, int r, String name, double x, double z, double limit) {
        if (!(Math.abs(z) <= limit)) {
            out.add(CellNote.of(r, name, x, CellNote.Kind.BEYOND_RANGE, String.format(Locale.ROOT,
                    "%.3g training standard deviations from the training mean, beyond the %.3g the float32 model "
                            + "space can diffuse; the record scores +infinity", Math.abs(z), limit)));
        }
    }

    /**
     * The cells of training rows beyond range or outside the support, judged on the rows' own robust
     * statistics (see {@link ModelRange}): per continuous column, a cell at or below 0 in a log
     * column, or further than {@code limit} robust standard deviations from the median.
     *
     * @param table the rows (not modified)
     * @param logColumns the log-scale columns
     * @param limit the largest distance, in robust standard deviations
     * @return one note per such cell, in row order then column order
     */
    public static List<CellNote> unscorableTraining(Table table, Set<String> logColumns, double limit) {
        List<CellNote> out = new ArrayList<>();
        for (int c : table.continuousColumns()) {
            String name = table.name(c);
            boolean log = logColumns.contains(name);
            double[] col = table.column(c);
            double[] v = new double[col.length];
            int[] at = new int[col.length];
            int n = 0;
            for (int r = 0; r < col.length; r++) {
                double x = col[r];
                if (Double.isNaN(x)) {
                    continue;
                }
                if (log && !(x > 0)) {
                    out.add(CellNote.of(r, name, x, CellNote.Kind.OUTSIDE_SUPPORT,
                            "the column is modelled on the log scale and holds only values above 0"));
                    continue;
                }
                v[n] = log ? Math.log(x) : x;
                at[n++] = r;
            }
            if (n == 0) {
                continue;
            }
            double[] sorted = Arrays.copyOf(v, n);
            Arrays.sort(sorted);
            double median = median(sorted);
            double[] dev = new double[n];
            for (int i = 0; i < n; i++) {
                dev[i] = Math.abs(sorted[i] - median);
            }
            Arrays.sort(dev);
            double scale = MAD_TO_SD * median(dev);
            if (scale == 0.0) {
                for (double d : dev) {
                    if (d > 0) {
                        scale = d;
                        break;
                    }
                }
            }
            if (scale == 0.0) {
                continue;           // every value the same: nothing is beyond range
            }
            for (int i = 0; i < n; i++) {
                double robustZ = Math.abs(v[i] - median) / scale;
                if (!(robustZ <= limit)) {
                    out.add(CellNote.of(at[i], name, col[at[i]], CellNote.Kind.BEYOND_RANGE, String.format(Locale.ROOT,
                            "%.3g robust standard deviations (1.4826 x the median absolute deviation) from the "
                                    + "column's median%s, beyond the %.3g the float32 model space can diffuse",
                            robustZ, log ? " on the log scale" : "", limit)));
                }
            }
        }
        out.sort(java.util.Comparator.comparingInt(CellNote::row));
        return out;
    }

    private static double median(double[] sorted) {
        int n = sorted.length;
        return n % 2 == 1 ? sorted[n / 2] : 0.5 * sorted[n / 2 - 1] + 0.5 * sorted[n / 2];   // halves first: no overflow
    }

    /**
     * @param notes notes on cells
     * @return the distinct rows named, ascending
     */
    public static int[] rows(List<CellNote> notes) {
        return notes.stream().mapToInt(CellNote::row).distinct().sorted().toArray();
    }
}
