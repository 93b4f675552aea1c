package org.backstep.campaign;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.io.IOException;
import java.io.InputStream;
import java.util.ArrayList;
import java.util.List;

/**
 * The inputs of the campaigns: the golden model file of the current format (test resources
 * golden/, see the README.md there) and the records its expected figures were computed on.
 */
public final class GoldenInputs {

    /** The golden model file the campaigns mutate and save. */
    public static final String MODEL = "/golden/model-v3.backstep";
    /** Its expected figures, whose records the campaigns score. */
    public static final String EXPECTED = "/golden/model-v3-expected.json";

    private GoldenInputs() {
    }

    /** @return the bytes of the golden model file */
    public static byte[] model() throws IOException {
        return resource(MODEL);
    }

    /** @return the golden records: invented container readings, supply_c, return_c, door_open */
    public static Table records() throws IOException {
        JsonNode r = new ObjectMapper().readTree(resource(EXPECTED)).path("records");
        List<String> names = new ArrayList<>();
        r.path("names").forEach(n -> names.add(n.asText()));
        double[][] rows = new double[r.path("rows").size()][];
        for (int i = 0; i < rows.length; i++) {
            JsonNode row = r.path("rows").get(i);
            rows[i] = new double[row.size()];
            for (int j = 0; j < rows[i].length; j++) {
                rows[i][j] = row.get(j).asDouble();
            }
        }
        return Table.of(names, List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
    }

    /**
     * @param name a class-path resource, e.g. {@code "/golden/model-v2.backstep"}
     * @return its bytes
     */
    public static byte[] resourceBytes(String name) throws IOException {
        return resource(name);
    }

    private static byte[] resource(String name) throws IOException {
        try (InputStream in = GoldenInputs.class.getResourceAsStream(name)) {
            if (in == null) {
                throw new IOException("resource " + name + " is missing from the class path");
            }
            return in.readAllBytes();
        }
    }
}
