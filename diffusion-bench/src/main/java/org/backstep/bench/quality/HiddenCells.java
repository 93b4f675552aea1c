package org.backstep.bench.quality;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.List;

import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * The imputation protocol's hidden cells (issue 11, item 3): the cells of the test rows that the
 * baselines file lists (20% of them, drawn once by quality-baselines.py with a fixed seed), the test
 * table with those cells missing, and the two figures every quality program reports of an imputation:
 * the RMSE of the imputed means in SOURCES.md's standardized units and the share of hidden continuous
 * cells inside their interval. {@link QualityBenchmark} and {@link ImputationDraws} both score by it.
 *
 * @param test the test rows, every cell present
 * @param cells the hidden cells, each {row, column} of {@code test}
 */
record HiddenCells(Table test, List<int[]> cells) {

    /**
     * The baselines file's hidden cells of one table.
     *
     * @param baselines the parsed baselines file
     * @param table the table's key in it
     * @param test the test rows they index
     * @return the cells
     * @throws IllegalStateException when the file lists none for the table
     */
    static HiddenCells of(JsonNode baselines, String table, Table test) {
        List<int[]> cells = new ArrayList<>();
        for (JsonNode cell : baselines.path("tables").path(table).path("imputation").path("hidden")) {
            cells.add(new int[] {cell.get(0).asInt(), cell.get(1).asInt()});
        }
        if (cells.isEmpty()) {
            throw new IllegalStateException("the baselines file lists no hidden cells for " + table);
        }
        return new HiddenCells(test, List.copyOf(cells));
    }

    /** @return the test rows with the hidden cells missing (NaN) */
    Table masked() {
        double[][] rows = test.toArray();
        for (int[] rc : cells) {
            rows[rc[0]][rc[1]] = Double.NaN;
        }
        return Table.of(test.names(), test.kinds(), rows);
    }

    /**
     * Scores an imputation of {@link #masked()}.
     *
     * @param mean the imputed means, in the test rows' units (only the hidden cells are read)
     * @param lower the intervals' lower ends, likewise
     * @param upper the intervals' upper ends, likewise
     * @param scale each column's standardizing scale (SOURCES.md: the training rows' population sd)
     * @return the RMSE in standardized units and the coverage (NaN when no hidden cell is continuous)
     */
    Score score(double[][] mean, double[][] lower, double[][] upper, double[] scale) {
        double sq = 0;
        int inside = 0;
        int continuous = 0;
        for (int[] rc : cells) {
            double truth = test.get(rc[0], rc[1]);
            double e = (mean[rc[0]][rc[1]] - truth) / scale[rc[1]];
            sq += e * e;
            if (test.kind(rc[1]) == ColumnKind.CONTINUOUS) {
                continuous++;
                if (lower[rc[0]][rc[1]] <= truth && truth <= upper[rc[0]][rc[1]]) {
                    inside++;
                }
            }
        }
        return new Score(Math.sqrt(sq / cells.size()), continuous == 0 ? Double.NaN : inside / (double) continuous);
    }

    /**
     * @param rmse root mean square error of the imputed means, standardized units
     * @param coverage share of hidden continuous cells inside their interval; NaN when none is continuous
     */
    record Score(double rmse, double coverage) {
    }
}
