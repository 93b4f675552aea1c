package org.backstep.internal.train;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.ModelRange;
import org.backstep.option.FitOptions;
import org.backstep.report.CellNote;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;

/**
 * The rows a fit trains on, prepared: the log columns checked, the checkpoint rows split off
 * (drawn at random, seeded, unless the caller gives them), rows with a missing cell set aside,
 * the column transforms fitted on the training rows (Trainer's standardization), and both sets in
 * model space as float32 rows. What was done is kept as notes for the provenance.
 */
final class TrainingRows {

    final TableTransform transform;
    final int dc;
    final int db;
    final float[] x0;
    final int n;
    /** The checkpoint rows in model space, or null when there are none. */
    final float[] checkpoint;
    final int checkpointCount;
    final List<String> notes = new ArrayList<>();

    /**
     * @param options the fit's options
     * @param table the table given to the fit
     * @param checkpointRows rows to choose the kept weights on, or null to split them off the table
     * @throws IllegalArgumentException naming a bad log column, or if fewer than 2 complete rows
     *     remain, or if every column is constant
     */
    TrainingRows(FitOptions options, Table table, Table checkpointRows) {
        for (String name : options.logColumns()) {
            if (!table.names().contains(name)) {
                throw new IllegalArgumentException("logColumns names '" + name + "', which is not a column of the table "
                        + table.names());
            }
            if (table.kind(table.indexOf(name)) != ColumnKind.CONTINUOUS) {
                throw new IllegalArgumentException("logColumns names '" + name + "', which is binary; only continuous columns take a log scale");
            }
        }
        table = leaveOutUnscorable(options, table, "", notes);
        if (checkpointRows != null) {
            checkpointRows = leaveOutUnscorable(options, checkpointRows, "checkpoint ", notes);
        }
        Table train = table;
        Table held = checkpointRows;
        if (held == null && options.checkpointFraction() > 0.0 && table.rows() >= 2) {
            int[][] split = split(table.rows(), options.checkpointFraction(), options.seed());
            train = table.selectRows(split[0]);
            held = table.selectRows(split[1]);
            notes.add("checkpoint rows: " + split[1].length + " rows drawn at random (fraction "
                    + options.checkpointFraction() + ", seed " + options.seed() + ")");
        } else if (held != null) {
            checkSameLayout(table, held, "checkpointRows");
            notes.add("checkpoint rows: " + held.rows() + " rows given by the caller");
        }
        Table complete = train.completeRows();
        if (complete.rows() < train.rows()) {
            notes.add((train.rows() - complete.rows()) + " training rows with a missing cell were left out");
        }
        if (complete.rows() < 2) {
            throw new IllegalArgumentException("training has " + complete.rows()
                    + " complete rows; expected at least 2 rows without a missing cell");
        }
        transform = TableTransform.fit(complete, options.logColumns());
        notes.addAll(transform.notes());
        dc = transform.modelledContinuous().length;
        db = transform.modelledBinary().length;
        if (dc + db == 0) {
            throw new IllegalArgumentException("the table has no column to diffuse: every column is constant");
        }
        x0 = Engine.toFloat(transform.toModelSpace(complete));
        n = complete.rows();
        float[] heldRows = null;
        int heldCount = 0;
        if (held != null) {
            Table heldComplete = held.completeRows();
            heldCount = heldComplete.rows();
            if (heldCount > 0) {
                heldRows = Engine.toFloat(transform.toModelSpace(heldComplete));
            }
        }
        checkpoint = heldRows;
        checkpointCount = heldCount;
    }

    /**
     * Leaves out the rows holding a cell beyond the model space's range or outside a log column's
     * support, judged on the rows' robust statistics ({@link ModelRange#unscorableTraining}), with a
     * note per cell naming row and column; the fit goes on with the other rows.
     *
     * @param rows the rows given (not modified)
     * @param prefix put before "row r" in the notes ("" or "checkpoint ")
     * @param notes where the notes go (modified)
     * @return the rows kept
     */
    static Table leaveOutUnscorable(FitOptions options, Table rows, String prefix, List<String> notes) {
        List<CellNote> bad = ModelRange.unscorableTraining(rows, options.logColumns(),
                ModelRange.limit(options.continuousSchedule()));
        if (bad.isEmpty()) {
            return rows;
        }
        for (CellNote n : bad) {
            notes.add(prefix + n.text() + "; the row was left out of training");
        }
        int[] drop = ModelRange.rows(bad);
        return rows.filterRows(r -> Arrays.binarySearch(drop, r) < 0);
    }

    /** @return D, the width of a model-space row */
    int width() {
        return dc + db;
    }

    /**
     * @return {train rows, checkpoint rows}, each sorted: round(rows x fraction) rows (at least 1, at
     *     most rows - 1) drawn without replacement with the seed
     */
    static int[][] split(int rows, double fraction, long seed) {
        int held = Math.max(1, Math.min(rows - 1, (int) Math.round(rows * fraction)));
        int[] perm = identity(rows);
        shuffle(perm, new SplittableRandom(seed ^ 0x5DEECE66DL));
        int[] heldRows = Arrays.copyOf(perm, held);
        int[] trainRows = Arrays.copyOfRange(perm, held, rows);
        Arrays.sort(heldRows);
        Arrays.sort(trainRows);
        return new int[][] {trainRows, heldRows};
    }

    /** Refuses {@code b} (called {@code name} in the message) unless its columns are those of {@code a}. */
    static void checkSameLayout(Table a, Table b, String name) {
        if (!a.names().equals(b.names()) || !a.kinds().equals(b.kinds())) {
            throw new IllegalArgumentException(name + " has columns " + b.names() + " " + b.kinds()
                    + "; expected the training columns " + a.names() + " " + a.kinds());
        }
    }

    static int[] identity(int n) {
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            p[i] = i;
        }
        return p;
    }

    /** Fisher-Yates shuffle (Knuth, TAOCP vol. 2, algorithm P). */
    static void shuffle(int[] a, SplittableRandom rng) {
        for (int i = a.length - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int tmp = a[i];
            a[i] = a[j];
            a[j] = tmp;
        }
    }
}
