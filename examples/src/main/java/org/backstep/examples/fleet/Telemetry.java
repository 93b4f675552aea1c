package org.backstep.examples.fleet;

import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import org.backstep.schedule.Require;

/**
 * The telemetry of an invented reefer fleet, made by {@link ReeferFleet#generate}: one row per
 * container and reading, container by container. Invented for demonstration; not measurements.
 * Immutable: arrays are copied on the way in and on the way out, so call each array accessor once
 * and keep the copy when reading many cells.
 *
 * @param columnNames the column names, in order
 * @param binaryColumns whether each column is binary (0 or 1)
 * @param cells the readings, {@code rows x columns}, NaN where a cell is missing
 * @param truth the same readings before cells were blanked (faults included), no NaN
 * @param container the container index of each row, 0-based
 * @param readingIndex the reading index of each row within its container, 0-based; the reading
 *        was taken {@code readingIndex * ReeferFleet.INTERVAL_MINUTES} minutes after the start
 * @param fault the fault label of each row; {@link FaultKind#NONE} outside every fault window
 * @param setpointC the temperature setpoint of each container in degrees C (per container, not per row)
 * @param options the options the telemetry was made with
 */
public record Telemetry(List<String> columnNames, List<Boolean> binaryColumns, double[][] cells, double[][] truth,
                        int[] container, int[] readingIndex, FaultKind[] fault, double[] setpointC,
                        ReeferFleet.Options options) {

    /**
     * Copies and checks the parts; the arguments are not modified.
     *
     * @param columnNames the column names, in order
     * @param binaryColumns whether each column is binary, one entry per column
     * @param cells the readings with NaN where missing, {@code rows x columns}
     * @param truth the readings before blanking, {@code rows x columns}
     * @param container the container index of each row, within {@code setpointC}
     * @param readingIndex the reading index of each row
     * @param fault the fault label of each row
     * @param setpointC the setpoint of each container
     * @param options the options the telemetry was made with
     * @throws IllegalArgumentException if a part is null or the shapes disagree (both shapes are named)
     */
    public Telemetry {
        columnNames = List.copyOf(Require.notNull("columnNames", columnNames));
        binaryColumns = List.copyOf(Require.notNull("binaryColumns", binaryColumns));
        Require.notNull("options", options);
        cells = copy(Require.notNull("cells", cells));
        truth = copy(Require.notNull("truth", truth));
        container = Require.notNull("container", container).clone();
        readingIndex = Require.notNull("readingIndex", readingIndex).clone();
        fault = Require.notNull("fault", fault).clone();
        setpointC = Require.notNull("setpointC", setpointC).clone();
        int columns = columnNames.size();
        if (binaryColumns.size() != columns) {
            throw new IllegalArgumentException("binaryColumns has " + binaryColumns.size()
                    + " entries but columnNames has " + columns + "; expected the same number");
        }
        int rows = cells.length;
        sameLength("truth", truth.length, rows);
        sameLength("container", container.length, rows);
        sameLength("readingIndex", readingIndex.length, rows);
        sameLength("fault", fault.length, rows);
        for (int r = 0; r < rows; r++) {
            if (cells[r] == null || truth[r] == null || cells[r].length != columns || truth[r].length != columns) {
                throw new IllegalArgumentException("row " + r + " of cells has " + width(cells[r]) + " and of truth "
                        + width(truth[r]) + " cells; expected " + columns + " (columnNames " + columnNames + ")");
            }
            if (container[r] < 0 || container[r] >= setpointC.length) {
                throw new IllegalArgumentException("container at row " + r + " is " + container[r]
                        + "; expected 0 to " + (setpointC.length - 1) + " (setpointC has " + setpointC.length + ")");
            }
            Require.notNull("fault[" + r + "]", fault[r]);
        }
    }

    /** @return the readings, {@code rows x columns}, with NaN where a cell is missing (a copy) */
    @Override
    public double[][] cells() {
        return copy(cells);
    }

    /** @return the readings before cells were blanked (a copy) */
    @Override
    public double[][] truth() {
        return copy(truth);
    }

    /** @return the container index of each row (a copy) */
    @Override
    public int[] container() {
        return container.clone();
    }

    /** @return the reading index of each row within its container (a copy) */
    @Override
    public int[] readingIndex() {
        return readingIndex.clone();
    }

    /** @return the fault label of each row (a copy) */
    @Override
    public FaultKind[] fault() {
        return fault.clone();
    }

    /** @return the setpoint of each container in degrees C (a copy) */
    @Override
    public double[] setpointC() {
        return setpointC.clone();
    }

    /** @return the number of rows */
    public int rows() {
        return cells.length;
    }

    /**
     * @param name a column name
     * @return its index in {@link #columnNames()}
     * @throws IllegalArgumentException if there is no such column
     */
    public int columnIndex(String name) {
        int index = columnNames.indexOf(name);
        if (index < 0) {
            throw new IllegalArgumentException("column is " + name + "; expected one of " + columnNames);
        }
        return index;
    }

    /** @return for each row, whether it lies inside a fault window ({@code fault != NONE}) */
    public boolean[] faultRows() {
        boolean[] out = new boolean[fault.length];
        for (int r = 0; r < fault.length; r++) {
            out[r] = fault[r] != FaultKind.NONE;
        }
        return out;
    }

    /** @return the indices of the containers with at least one fault row, ascending */
    public int[] faultyContainers() {
        boolean[] faulty = new boolean[setpointC.length];
        for (int r = 0; r < fault.length; r++) {
            if (fault[r] != FaultKind.NONE) {
                faulty[container[r]] = true;
            }
        }
        int count = 0;
        for (boolean f : faulty) {
            count += f ? 1 : 0;
        }
        int[] out = new int[count];
        int i = 0;
        for (int c = 0; c < faulty.length; c++) {
            if (faulty[c]) {
                out[i++] = c;
            }
        }
        return out;
    }

    /** @return the share of cells that are missing (NaN in {@link #cells()}) */
    public double missingShare() {
        long missing = 0;
        long total = 0;
        for (double[] row : cells) {
            for (double v : row) {
                missing += Double.isNaN(v) ? 1 : 0;
                total++;
            }
        }
        return total == 0 ? 0.0 : (double) missing / total;
    }

    /** Equal when every part is equal, arrays compared element by element. */
    @Override
    public boolean equals(Object other) {
        return other instanceof Telemetry t
                && columnNames.equals(t.columnNames) && binaryColumns.equals(t.binaryColumns)
                && Arrays.deepEquals(cells, t.cells) && Arrays.deepEquals(truth, t.truth)
                && Arrays.equals(container, t.container) && Arrays.equals(readingIndex, t.readingIndex)
                && Arrays.equals(fault, t.fault) && Arrays.equals(setpointC, t.setpointC)
                && options.equals(t.options);
    }

    @Override
    public int hashCode() {
        int h = columnNames.hashCode();
        h = 31 * h + Arrays.deepHashCode(cells);
        h = 31 * h + Arrays.deepHashCode(truth);
        h = 31 * h + Arrays.hashCode(container);
        h = 31 * h + Arrays.hashCode(readingIndex);
        h = 31 * h + Arrays.hashCode(fault);
        h = 31 * h + Arrays.hashCode(setpointC);
        return 31 * h + options.hashCode();
    }

    /** @return a one-line summary: rows, columns, faulty containers, missing share and the options */
    @Override
    public String toString() {
        return String.format(Locale.ROOT, "Telemetry[%d rows x %d columns %s, %d faulty containers, %.4f missing, %s]",
                rows(), columnNames.size(), columnNames, faultyContainers().length, missingShare(), options);
    }

    private static void sameLength(String name, int length, int rows) {
        if (length != rows) {
            throw new IllegalArgumentException(name + " has " + length + " rows but cells has " + rows
                    + "; expected the same number");
        }
    }

    private static String width(double[] row) {
        return row == null ? "no" : Integer.toString(row.length);
    }

    private static double[][] copy(double[][] a) {
        double[][] out = new double[a.length][];
        for (int r = 0; r < a.length; r++) {
            out[r] = a[r] == null ? null : a[r].clone();
        }
        return out;
    }
}
