package org.backstep.table;

/**
 * The text forms of a {@link Table}: a one-line summary ({@link Table#toString()}) and an aligned
 * printout of the first rows ({@link Table#toText(int, int)}).
 *
 * <p>The printout's layout: the summary line; one header line where each column's name carries its
 * kind in brackets ({@code [cont]} or {@code [bin]}), so a narrow column does not get a second header
 * line; one line per row, labelled by the 0-based index that {@link Table#get(int, int)} and
 * {@link Table#selectRows(int[])} take; cells right-aligned, continuous cells by
 * {@link Double#toString(double)} (the text the CSV writer writes), binary cells as 0 or 1; and last,
 * what was left out, by index ranges. A missing cell is shown as {@value #MISSING}: it reads as
 * "unknown", which is what a cell to be imputed is; it cannot be taken for a number, a minus sign or
 * an alignment gap (as an empty cell can at the end of a line); and it is ASCII, so logs in any
 * encoding show it.
 */
final class TableText {

    /** How a missing cell is shown. */
    static final String MISSING = "?";

    private static final String GAP = "  ";

    private TableText() {
    }

    /** @return e.g. "Table: 150 rows x 4 columns (4 continuous, 0 binary), no missing cells" */
    static String summary(Table t) {
        int missing = t.missingCount();
        return "Table: " + CsvScan.count(t.rows(), "row") + " x " + CsvScan.count(t.columns(), "column") + " ("
                + t.continuousColumns().length + " continuous, " + t.binaryColumns().length + " binary"
                + (t.integerColumns().length > 0 ? ", " + t.integerColumns().length + " integer" : "")
                + (t.categoricalColumns().length > 0 ? ", " + t.categoricalColumns().length + " categorical" : "") + "), "
                + (missing == 0 ? "no missing cells" : CsvScan.count(missing, "missing cell") + " (shown as "
                + MISSING + ")");
    }

    /** The summary, then at most {@code maxRows} rows of at most {@code maxColumns} columns. */
    static String text(Table t, int maxRows, int maxColumns) {
        int shownRows = Math.min(t.rows(), maxRows);
        int shownCols = Math.min(t.columns(), maxColumns);
        String[][] grid = new String[shownRows + 1][shownCols + 1];
        grid[0][0] = "row";
        for (int r = 0; r < shownRows; r++) {
            grid[r + 1][0] = String.valueOf(r);
        }
        for (int c = 0; c < shownCols; c++) {
            ColumnKind kind = t.kind(c);
            grid[0][c + 1] = t.name(c) + (kind == ColumnKind.BINARY ? " [bin]"
                    : kind == ColumnKind.CATEGORICAL ? " [cat]" : kind == ColumnKind.INTEGER ? " [int]" : " [cont]");
            for (int r = 0; r < shownRows; r++) {
                double v = t.get(r, c);
                grid[r + 1][c + 1] = kind == ColumnKind.CATEGORICAL && !Double.isNaN(v) ? t.label(r, c) : cell(v, kind);
            }
        }
        int[] width = new int[shownCols + 1];
        for (String[] line : grid) {
            for (int c = 0; c < line.length; c++) {
                width[c] = Math.max(width[c], line[c].length());
            }
        }
        StringBuilder sb = new StringBuilder(summary(t)).append('\n');
        for (String[] line : grid) {
            for (int c = 0; c < line.length; c++) {
                if (c > 0) {
                    sb.append(GAP);
                }
                sb.append(" ".repeat(width[c] - line[c].length())).append(line[c]);
            }
            sb.append('\n');
        }
        String rowsLeft = shownRows < t.rows() ? range("rows", shownRows, t.rows()) : "";
        String colsLeft = shownCols < t.columns() ? range("columns", shownCols, t.columns()) : "";
        if (!rowsLeft.isEmpty() || !colsLeft.isEmpty()) {
            sb.append("(").append(rowsLeft).append(rowsLeft.isEmpty() || colsLeft.isEmpty() ? "" : " and ")
                    .append(colsLeft).append(" not shown)\n");
        }
        return sb.toString();
    }

    private static String range(String what, int from, int count) {
        return count - from == 1 ? what.substring(0, what.length() - 1) + " " + from
                : what + " " + from + " to " + (count - 1);
    }

    private static String cell(double v, ColumnKind kind) {
        if (Double.isNaN(v)) {
            return MISSING;
        }
        if (kind == ColumnKind.BINARY) {
            return v == 1.0 ? "1" : "0";
        }
        if (kind == ColumnKind.INTEGER) {
            return Long.toString((long) v);
        }
        return Double.toString(v);
    }
}
