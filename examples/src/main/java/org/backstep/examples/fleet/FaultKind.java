package org.backstep.examples.fleet;

import java.util.Optional;

/**
 * The label of one row of {@link Telemetry}: {@link #NONE}, or the fault injected into the
 * container during a window of the run that contains the row. The effects are set out in
 * {@link ReeferFleet}; they are invented for demonstration.
 */
public enum FaultKind {
    /** The row lies outside every fault window. */
    NONE(null),
    /** The return air reading drifts away from the air it measures, steadily, reading by reading. */
    DRIFTING_SENSOR("return_air_c"),
    /** The supply air reading is frozen at the value it had on the first row of the window. */
    STUCK_SENSOR("supply_air_c"),
    /** The compressor draws ever more current while the supply air creeps up. */
    FAILING_COMPRESSOR("compressor_a"),
    /**
     * The supply air sensor reads 5 C warm, as it does while the defrost heaters run, while the
     * unit is cooling (defrost off, compressor at its running draw, return air as it was): every
     * reading lies in the range its column takes in this container, but the return air now reads
     * below the supply air. A sensor moved next to the heaters, say; the relation between columns
     * within one reading is broken, not any one column.
     */
    MISPLACED_SENSOR("supply_air_c");

    private final String column;

    FaultKind(String column) {
        this.column = column;
    }

    /**
     * The column the fault is injected into (for {@link #FAILING_COMPRESSOR}, whose air also warms,
     * the current, which changes most); the column a per-column surprisal should blame first.
     *
     * @return the column's name as in {@link ReeferFleet#COLUMN_NAMES}, empty for {@link #NONE}
     */
    public Optional<String> injectedColumn() {
        return Optional.ofNullable(column);
    }
}
