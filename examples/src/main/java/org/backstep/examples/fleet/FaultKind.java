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
     * The humidity reading belongs to the other kind of cargo: 18 points up in a frozen box (a
     * chilled box's humidity), 18 points down in a chilled or tropical box (near a frozen box's). A
     * channel wired to the wrong sensor, say. Every reading lies in its column's normal range over
     * the fleet; the relation between the humidity and the temperatures of one reading is broken,
     * not any one column.
     */
    CROSSED_HUMIDITY("humidity_pct");

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
