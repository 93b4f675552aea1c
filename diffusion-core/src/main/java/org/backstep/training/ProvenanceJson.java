package org.backstep.training;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.io.JsonFields;
import org.backstep.io.ModelFileException;
import org.backstep.schedule.Require;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;

/**
 * The one JSON form of a {@link Provenance}, written into model files and report summaries alike:
 * <pre>
 *   { "libraryVersion", "javaVersion", "os", "arch", "fittedAt", "trainingSeconds",
 *     "tableRows", "trainingRows", "checkpointRows", "rowsWithGaps", "filledCells", "refills" (since format 4),
 *     "tableSha256", "notes": [..],
 *     "history": [ { "epoch", "loss", "checkpointBound" (when evaluated), "seconds" } ] }
 * </pre>
 * Reading also accepts the keys of model files of format version 1 ("validationRows",
 * "heldOutBound"), which named the trainer's own split differently.
 */
public final class ProvenanceJson {

    /** The most epochs of history, and notes, a provenance read from a file may hold. */
    public static final int MAX_ENTRIES = 10_000_000;

    private ProvenanceJson() {
    }

    /**
     * @param p the provenance
     * @return a new JSON object holding it
     */
    public static ObjectNode write(Provenance p) {
        Require.notNull("p", p);
        ObjectNode prov = JsonNodeFactory.instance.objectNode();
        prov.put("libraryVersion", p.libraryVersion());
        prov.put("javaVersion", p.javaVersion());
        prov.put("os", p.os());
        prov.put("arch", p.arch());
        prov.put("fittedAt", p.fittedAt());
        prov.put("trainingSeconds", p.trainingSeconds());
        prov.put("tableRows", p.tableRows());
        prov.put("trainingRows", p.trainingRows());
        prov.put("checkpointRows", p.checkpointRows());
        if (p.rowsWithGaps() >= 0) {
            prov.put("rowsWithGaps", p.rowsWithGaps());
            prov.put("filledCells", p.filledCells());
            prov.put("refills", p.refills());
        }
        prov.put("tableSha256", p.tableSha256());
        ArrayNode notes = prov.putArray("notes");
        p.notes().forEach(notes::add);
        ArrayNode hist = prov.putArray("history");
        for (EpochRecord e : p.history()) {
            ObjectNode h = hist.addObject();
            h.put("epoch", e.epoch());
            h.put("loss", e.loss());
            if (e.checkpointBound().isPresent()) {
                h.put("checkpointBound", e.checkpointBound().getAsDouble());
            }
            h.put("seconds", e.seconds());
        }
        return prov;
    }

    /**
     * Reads strictly: every field must have its JSON type (a string where a string belongs, a
     * whole number of 32 bits where a count belongs), counts must be at least 0, and lists may
     * hold at most {@link #MAX_ENTRIES} entries.
     *
     * @param json a JSON object written by {@link #write} (or by format version 1)
     * @return the provenance
     * @throws ModelFileException naming the missing or mistyped field
     * @throws IllegalArgumentException if {@code json} is null
     */
    public static Provenance read(JsonNode json) throws ModelFileException {
        Require.notNull("json", json);
        String where = "model.json provenance";
        JsonNode p = JsonFields.object(json, where);
        List<EpochRecord> history = new ArrayList<>();
        JsonNode hist = JsonFields.array(JsonFields.field(p, "history", where), where + ".history", 0, MAX_ENTRIES);
        for (int i = 0; i < hist.size(); i++) {
            String at = where + ".history[" + i + "]";
            JsonNode h = JsonFields.object(hist.get(i), at);
            JsonNode b = h.has("checkpointBound") ? h.get("checkpointBound") : h.get("heldOutBound");
            OptionalDouble bound = b != null && !b.isNull() ? OptionalDouble.of(anyDouble(b, at + ".checkpointBound"))
                    : OptionalDouble.empty();
            history.add(new EpochRecord(JsonFields.int32(JsonFields.field(h, "epoch", at), at + ".epoch", 0, Integer.MAX_VALUE),
                    anyDouble(JsonFields.field(h, "loss", at), at + ".loss"), bound,
                    anyDouble(JsonFields.field(h, "seconds", at), at + ".seconds")));
        }
        List<String> notes = new ArrayList<>();
        JsonNode n = JsonFields.array(JsonFields.field(p, "notes", where), where + ".notes", 0, MAX_ENTRIES);
        for (int i = 0; i < n.size(); i++) {
            notes.add(JsonFields.text(n.get(i), where + ".notes[" + i + "]"));
        }
        String checkpointKey = p.has("checkpointRows") ? "checkpointRows" : "validationRows";
        return new Provenance(text(p, "libraryVersion"), text(p, "javaVersion"), text(p, "os"), text(p, "arch"),
                text(p, "fittedAt"), JsonFields.number(JsonFields.field(p, "trainingSeconds", where), where + ".trainingSeconds",
                        0.0, Double.MAX_VALUE),
                count(p, "tableRows"), count(p, "trainingRows"), count(p, checkpointKey), optionalCount(p, "rowsWithGaps"),
                optionalCount(p, "filledCells"), optionalCount(p, "refills"), text(p, "tableSha256"), history,
                notes);
    }

    private static String text(JsonNode p, String key) throws ModelFileException {
        return JsonFields.text(JsonFields.field(p, key, "model.json provenance"), "model.json provenance." + key);
    }

    /** A count written since the gap counts were added, or -1 for a file without it. */
    private static int optionalCount(JsonNode p, String key) throws ModelFileException {
        return p.has(key) ? count(p, key) : -1;
    }

    private static int count(JsonNode p, String key) throws ModelFileException {
        return JsonFields.int32(JsonFields.field(p, key, "model.json provenance"), "model.json provenance." + key,
                0, Integer.MAX_VALUE);
    }

    /**
     * A number, or one of the strings Jackson writes for a double that is not finite ("NaN",
     * "Infinity", "-Infinity"): a loss or a bound of a diverged run is recorded as it was.
     */
    private static double anyDouble(JsonNode v, String where) throws ModelFileException {
        if (v != null && v.isTextual()) {
            switch (v.textValue()) {
                case "NaN": return Double.NaN;
                case "Infinity": return Double.POSITIVE_INFINITY;
                case "-Infinity": return Double.NEGATIVE_INFINITY;
                default: break;
            }
        }
        if (v == null || !v.isNumber()) {
            throw new ModelFileException(where, "expected a JSON number (or \"NaN\", \"Infinity\"), found "
                    + (v == null ? "nothing" : v.getNodeType().toString().toLowerCase(java.util.Locale.ROOT)));
        }
        return v.doubleValue();
    }
}
