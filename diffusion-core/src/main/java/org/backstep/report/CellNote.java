package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.Locale;

/**
 * Something a scoring job did with one cell that the caller should know: the cell was beyond the
 * model space's range or outside the support of its column (the record scores +infinity), or it
 * was missing and imputed.
 *
 * @param row the row in the table the job was given, 0-based
 * @param column the column's name
 * @param value the cell as given (NaN for a missing cell)
 * @param kind what happened
 * @param text one sentence naming row, column, value and what was done
 */
public record CellNote(int row, String column, double value, Kind kind, String text) {

    /** What happened to the cell. */
    public enum Kind {
        /**
         * A continuous cell so far from the training rows that the float32 model space cannot hold
         * it: the record scores +infinity and is flagged.
         */
        BEYOND_RANGE,
        /**
         * A cell the model gives probability zero: at or below 0 in a log-scale column, or other than
         * the one value of a column that was constant in the training rows. The record scores
         * +infinity and is flagged.
         */
        OUTSIDE_SUPPORT,
        /** A missing cell, imputed before scoring. */
        IMPUTED
    }

    /** Validates. */
    public CellNote {
        Require.atLeast("row", row, 0);
        Require.notNull("column", column);
        Require.notNull("kind", kind);
        Require.notNull("text", text);
    }

    /**
     * @param row the row
     * @param column the column's name
     * @param value the cell
     * @param kind what happened
     * @param why what was done, after "row r, column 'c' is v: "
     * @return the note with its sentence
     */
    public static CellNote of(int row, String column, double value, Kind kind, String why) {
        java.util.Objects.requireNonNull(column, "column is null; expected a value");
        java.util.Objects.requireNonNull(kind, "kind is null; expected a value");
        java.util.Objects.requireNonNull(why, "why is null; expected a value");
        return new CellNote(row, column, value, kind, String.format(Locale.ROOT, "row %d, column '%s' is %s: %s",
                row, column, Double.isNaN(value) ? "missing" : Double.toString(value), why));
    }

    /** @return true if the record scores +infinity because of this cell */
    public boolean unscorable() {
        return kind != Kind.IMPUTED;
    }
}
