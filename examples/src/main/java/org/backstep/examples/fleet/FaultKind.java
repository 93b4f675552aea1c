package org.backstep.examples.fleet;

/**
 * The label of one row of {@link Telemetry}: {@link #NONE}, or the fault injected into the
 * container during a window of the run that contains the row. The effects are set out in
 * {@link ReeferFleet}; they are invented for demonstration.
 */
public enum FaultKind {
    /** The row lies outside every fault window. */
    NONE,
    /** The return air reading drifts away from the air it measures, steadily, reading by reading. */
    DRIFTING_SENSOR,
    /** The supply air reading is frozen at the value it had on the first row of the window. */
    STUCK_SENSOR,
    /** The compressor draws ever more current while the supply air creeps up. */
    FAILING_COMPRESSOR
}
