package org.backstep.examples.fleet;

import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/** Turns invented fleet telemetry into Backstep tables. */
public final class FleetTables {

    private FleetTables() {
    }

    /**
     * @param telemetry generated telemetry
     * @return the readings as a table, NaN where a cell is missing
     */
    public static Table cells(Telemetry telemetry) {
        return Table.of(telemetry.columnNames(), kinds(telemetry), categories(telemetry), telemetry.cells());
    }

    /**
     * @param telemetry generated telemetry
     * @return the readings before cells were blanked
     */
    public static Table truth(Telemetry telemetry) {
        return Table.of(telemetry.columnNames(), kinds(telemetry), categories(telemetry), telemetry.truth());
    }

    /**
     * @param telemetry generated telemetry
     * @return per row, the name of its fault kind ({@code "NONE"} outside every fault window)
     */
    public static String[] faultKinds(Telemetry telemetry) {
        FaultKind[] f = telemetry.fault();
        String[] out = new String[f.length];
        for (int r = 0; r < f.length; r++) {
            out[r] = f[r].name();
        }
        return out;
    }

    /**
     * @param telemetry generated telemetry
     * @return per row, the column its fault was injected into ({@link FaultKind#injectedColumn()}), null outside faults
     */
    public static String[] faultColumns(Telemetry telemetry) {
        FaultKind[] f = telemetry.fault();
        String[] out = new String[f.length];
        for (int r = 0; r < f.length; r++) {
            out[r] = f[r].injectedColumn().orElse(null);
        }
        return out;
    }

    private static Map<String, List<String>> categories(Telemetry telemetry) {
        return telemetry.columnNames().equals(ReeferFleet.COLUMN_NAMES)
                ? Map.of(ReeferFleet.COLUMN_NAMES.get(ReeferFleet.ALARM_CODE), ReeferFleet.ALARM_CODES) : Map.of();
    }

    /** The generator's kinds (door_openings INTEGER, alarm_code CATEGORICAL) for its own columns; else binary or continuous. */
    private static List<ColumnKind> kinds(Telemetry telemetry) {
        if (telemetry.columnNames().equals(ReeferFleet.COLUMN_NAMES)) {
            return ReeferFleet.COLUMN_KINDS;
        }
        List<ColumnKind> kinds = new ArrayList<>();
        for (boolean b : telemetry.binaryColumns()) {
            kinds.add(b ? ColumnKind.BINARY : ColumnKind.CONTINUOUS);
        }
        return kinds;
    }
}
