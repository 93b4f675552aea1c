package org.backstep.training;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.io.ModelFileException;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;

/**
 * The one JSON form of a {@link Provenance}, written into model files and report summaries alike:
 * <pre>
 *   { "libraryVersion", "javaVersion", "os", "arch", "fittedAt", "trainingSeconds",
 *     "tableRows", "trainingRows", "checkpointRows", "tableSha256", "notes": [..],
 *     "history": [ { "epoch", "loss", "checkpointBound" (when evaluated), "seconds" } ] }
 * </pre>
 * Reading also accepts the keys of model files of format version 1 ("validationRows",
 * "heldOutBound"), which named the trainer's own split differently.
 */
public final class ProvenanceJson {

    private ProvenanceJson() {
    }

    /**
     * @param p the provenance
     * @return a new JSON object holding it
     */
    public static ObjectNode write(Provenance p) {
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
     * @param p a JSON object written by {@link #write} (or by format version 1)
     * @return the provenance
     * @throws ModelFileException naming the missing field
     */
    public static Provenance read(JsonNode p) throws ModelFileException {
        List<EpochRecord> history = new ArrayList<>();
        for (JsonNode h : field(p, "history")) {
            JsonNode b = h.has("checkpointBound") ? h.get("checkpointBound") : h.get("heldOutBound");
            OptionalDouble bound = b != null ? OptionalDouble.of(b.asDouble()) : OptionalDouble.empty();
            history.add(new EpochRecord(h.path("epoch").asInt(), h.path("loss").asDouble(), bound,
                    h.path("seconds").asDouble()));
        }
        List<String> notes = new ArrayList<>();
        field(p, "notes").forEach(n -> notes.add(n.asText()));
        JsonNode checkpoint = p.has("checkpointRows") ? p.get("checkpointRows") : field(p, "validationRows");
        return new Provenance(field(p, "libraryVersion").asText(), field(p, "javaVersion").asText(),
                field(p, "os").asText(), field(p, "arch").asText(), field(p, "fittedAt").asText(),
                field(p, "trainingSeconds").asDouble(), field(p, "tableRows").asInt(), field(p, "trainingRows").asInt(),
                checkpoint.asInt(), field(p, "tableSha256").asText(), history, notes);
    }

    private static JsonNode field(JsonNode node, String name) throws ModelFileException {
        JsonNode v = node.get(name);
        if (v == null || v.isNull()) {
            throw new ModelFileException("model.json provenance." + name, "missing");
        }
        return v;
    }
}
