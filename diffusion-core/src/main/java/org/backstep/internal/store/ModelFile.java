package org.backstep.internal.store;

import org.backstep.internal.chain.ModelParts;
import org.backstep.io.ModelFileException;
import org.backstep.training.ProvenanceJson;
import org.backstep.option.FitOptions;
import org.backstep.option.LearningRateSchedule;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepSampling;
import org.backstep.option.TrainingLoss;
import org.backstep.training.Provenance;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.StepInput;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.TableTransform;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.zip.ZipEntry;
import java.util.zip.ZipException;
import java.util.zip.ZipFile;
import java.util.zip.ZipOutputStream;

/**
 * The Backstep model file, format version 2 (version 1 still loads): a zip container of three entries.
 * <pre>
 *   model.json        the manifest: format name and version, every fit option, both schedules'
 *                     betas, the columns and their transforms, the network shape, the shape of
 *                     each array entry, and the provenance with the training history
 *   weights.f32       the network's flat parameter vector, raw little-endian float32
 *   SHA256SUMS        "hex  name" for every other entry, checked on load
 * </pre>
 * Version 2 renamed the trainer's own split ("validation" became "checkpoint": checkpointFraction,
 * checkpointDraws, provenance checkpointRows and history checkpointBound), renamed where the step's
 * embedding enters the network ("conditioning" became "stepInput"), and added trainingSteps and
 * evaluations; a version 1 file is read with its old keys, and 4,000 and 20 for the two new
 * options, the values every version 1 release used.
 * No Java serialization. Saving writes a temporary file in the target's folder, syncs it, then
 * moves it over the target, so a failure leaves an existing file untouched.
 *
 * <p>One file: saving and loading must agree on every key, and they are checked against each
 * other line by line.
 */
public final class ModelFile {

    public static final String FORMAT = "backstep-model";
    public static final int VERSION = 2;
    /** The oldest version this release reads. */
    public static final int OLDEST_VERSION = 1;
    public static final String MANIFEST = "model.json";
    public static final String WEIGHTS = "weights.f32";
    public static final String SUMS = "SHA256SUMS";
    /** Largest entry accepted on load, checked before anything is allocated. */
    static final long MAX_ENTRY_BYTES = 1L << 30;
    /** Largest step count accepted on load. */
    static final int MAX_STEPS = 1_000_000;

    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);

    private ModelFile() {
    }

    // ------------------------------------------------------------------ save

    public static void save(ModelParts model, Path target) throws IOException {
        if (model.network() == null) {
            throw new IllegalArgumentException("this model wraps a supplied estimator, not a trained network; only fitted models are saved");
        }
        float[] weights = model.network().parameters();
        byte[] weightBytes = floatsToBytes(weights);
        byte[] manifest = JSON.writeValueAsBytes(manifest(model, weights.length));
        Map<String, byte[]> entries = new LinkedHashMap<>();
        entries.put(MANIFEST, manifest);
        entries.put(WEIGHTS, weightBytes);
        StringBuilder sums = new StringBuilder();
        for (Map.Entry<String, byte[]> e : entries.entrySet()) {
            sums.append(sha256(e.getValue())).append("  ").append(e.getKey()).append('\n');
        }
        entries.put(SUMS, sums.toString().getBytes(StandardCharsets.UTF_8));
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        try (ZipOutputStream zip = new ZipOutputStream(bytes)) {
            for (Map.Entry<String, byte[]> e : entries.entrySet()) {
                ZipEntry z = new ZipEntry(e.getKey());
                z.setTime(0L);
                zip.putNextEntry(z);
                zip.write(e.getValue());
                zip.closeEntry();
            }
        }
        org.backstep.io.AtomicFiles.write(target, bytes.toByteArray());
    }

    private static ObjectNode manifest(ModelParts model, int weightCount) {
        FitOptions o = model.options();
        ObjectNode root = JSON.createObjectNode();
        root.put("format", FORMAT);
        root.put("formatVersion", VERSION);
        ObjectNode opts = root.putObject("options");
        opts.set("continuousSchedule", schedule(o.continuousSchedule()));
        opts.set("binarySchedule", schedule(o.binarySchedule()));
        ArrayNode hidden = opts.putArray("hidden");
        for (int h : o.hidden()) {
            hidden.add(h);
        }
        opts.put("embeddingSize", o.embeddingSize());
        opts.put("stepInput", o.stepInput().name());
        opts.put("variance", o.variance().name());
        opts.put("loss", o.loss().name());
        opts.put("hybridWeight", o.hybridWeight());
        opts.put("stepSampling", o.stepSampling().name());
        opts.put("learningRate", o.learningRate());
        opts.put("learningRateSchedule", o.learningRateSchedule().name());
        opts.put("adamBeta1", o.adamBeta1());
        opts.put("adamBeta2", o.adamBeta2());
        opts.put("adamEpsilon", o.adamEpsilon());
        opts.put("weightDecay", o.weightDecay());
        opts.put("emaDecay", o.emaDecay());
        opts.put("batchSize", o.batchSize());
        opts.put("epochs", o.epochs());
        opts.put("trainingSteps", o.trainingSteps());
        opts.put("checkpointFraction", o.checkpointFraction());
        opts.put("evaluateEvery", o.evaluateEvery());
        opts.put("evaluations", o.evaluations());
        opts.put("checkpointDraws", o.checkpointDraws());
        opts.put("patience", o.patience());
        ArrayNode logs = opts.putArray("logColumns");
        new TreeSet<>(o.logColumns()).forEach(logs::add);
        opts.put("seed", o.seed());
        opts.put("threads", o.threads());

        ArrayNode cols = root.putArray("columns");
        TableTransform tr = model.transform();
        for (int c = 0; c < tr.names().size(); c++) {
            ObjectNode col = cols.addObject();
            ColumnTransform ct = tr.transform(c);
            col.put("name", tr.names().get(c));
            col.put("kind", tr.kinds().get(c).name());
            col.put("transform", ct.kind().name());
            col.put("shift", ct.shift());
            col.put("scale", ct.scale());
        }
        NetworkShape s = model.network().shape();
        ObjectNode net = root.putObject("network");
        net.put("inputs", s.inputs());
        net.put("outputs", s.outputs());
        net.put("steps", model.network().steps());
        net.put("parameters", weightCount);
        ArrayNode entries = root.putArray("arrays");
        ObjectNode w = entries.addObject();
        w.put("entry", WEIGHTS);
        w.put("dtype", "float32-le");
        w.putArray("shape").add(weightCount);

        root.set("provenance", ProvenanceJson.write(model.provenance()));
        return root;
    }

    private static ObjectNode schedule(NoiseSchedule s) {
        ObjectNode n = JSON.createObjectNode();
        n.put("kind", s.kind().name());
        n.put("steps", s.steps());
        ArrayNode b = n.putArray("betas");
        for (double v : s.betas()) {
            b.add(v);
        }
        return n;
    }

    // ------------------------------------------------------------------ load

    public static ModelParts load(Path file) throws IOException {
        Map<String, byte[]> entries = readEntries(file);
        for (String name : List.of(MANIFEST, WEIGHTS, SUMS)) {
            if (!entries.containsKey(name)) {
                throw new ModelFileException(name, "entry missing from " + file + " (entries present: " + entries.keySet() + ")");
            }
        }
        checkSums(entries);
        JsonNode root;
        try {
            root = JSON.readTree(entries.get(MANIFEST));
        } catch (JsonProcessingException e) {
            throw new ModelFileException(MANIFEST, "not valid JSON: " + e.getOriginalMessage(), e);
        }
        if (root == null || !FORMAT.equals(root.path("format").asText())) {
            throw new ModelFileException(MANIFEST + " format", "expected \"" + FORMAT + "\", found " + root.path("format"));
        }
        int version = root.path("formatVersion").asInt(-1);
        if (version < OLDEST_VERSION || version > VERSION) {
            throw new ModelFileException(MANIFEST + " formatVersion", "version " + root.path("formatVersion")
                    + " is not known to this release, which reads versions " + OLDEST_VERSION + " to " + VERSION);
        }
        try {
            return fromManifest(root, entries.get(WEIGHTS), version);
        } catch (IllegalArgumentException | NullPointerException e) {
            throw new ModelFileException(MANIFEST, "inconsistent content: " + e.getMessage(), e);
        }
    }

    private static ModelParts fromManifest(JsonNode root, byte[] weightBytes, int version) throws ModelFileException {
        boolean v1 = version == 1;
        JsonNode o = field(root, "options");
        NoiseSchedule cont = readSchedule(field(o, "continuousSchedule"), "options.continuousSchedule");
        NoiseSchedule bin = readSchedule(field(o, "binarySchedule"), "options.binarySchedule");
        JsonNode hiddenNode = field(o, "hidden");
        int[] hidden = new int[hiddenNode.size()];
        for (int i = 0; i < hidden.length; i++) {
            hidden[i] = hiddenNode.get(i).asInt();
        }
        Set<String> logs = new TreeSet<>();
        field(o, "logColumns").forEach(n -> logs.add(n.asText()));
        FitOptions options = new FitOptions(cont, bin, hidden, field(o, "embeddingSize").asInt(),
                StepInput.valueOf(field(o, v1 ? "conditioning" : "stepInput").asText()),
                ReverseVariance.valueOf(field(o, "variance").asText()),
                TrainingLoss.valueOf(field(o, "loss").asText()), field(o, "hybridWeight").asDouble(),
                StepSampling.valueOf(field(o, "stepSampling").asText()), field(o, "learningRate").asDouble(),
                LearningRateSchedule.valueOf(field(o, "learningRateSchedule").asText()),
                field(o, "adamBeta1").asDouble(), field(o, "adamBeta2").asDouble(), field(o, "adamEpsilon").asDouble(),
                field(o, "weightDecay").asDouble(), field(o, "emaDecay").asDouble(), field(o, "batchSize").asInt(),
                field(o, "epochs").asInt(), v1 ? 4000 : field(o, "trainingSteps").asInt(),
                field(o, v1 ? "validationFraction" : "checkpointFraction").asDouble(),
                field(o, "evaluateEvery").asInt(), v1 ? 20 : field(o, "evaluations").asInt(),
                field(o, v1 ? "validationDraws" : "checkpointDraws").asInt(), field(o, "patience").asInt(),
                logs, field(o, "seed").asLong(), field(o, "threads").asInt());

        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        List<ColumnTransform> transforms = new ArrayList<>();
        for (JsonNode c : field(root, "columns")) {
            names.add(field(c, "name").asText());
            kinds.add(ColumnKind.valueOf(field(c, "kind").asText()));
            transforms.add(new ColumnTransform(ColumnTransform.Kind.valueOf(field(c, "transform").asText()),
                    field(c, "shift").asDouble(), field(c, "scale").asDouble()));
        }
        TableTransform transform = TableTransform.of(names, kinds, transforms);
        int dc = transform.modelledContinuous().length;
        int db = transform.modelledBinary().length;
        int outputs = dc * (options.variance() == ReverseVariance.LEARNED ? 2 : 1) + db;
        NetworkShape shape = new NetworkShape(dc + db, options.hidden(), outputs, options.embeddingSize(),
                options.stepInput());
        JsonNode net = field(root, "network");
        if (net.path("inputs").asInt() != shape.inputs() || net.path("outputs").asInt() != shape.outputs()) {
            throw new ModelFileException("network", "inputs/outputs " + net.path("inputs") + "/" + net.path("outputs")
                    + " disagree with the columns and options, which give " + shape.inputs() + "/" + shape.outputs());
        }
        int steps = field(net, "steps").asInt();
        if (steps != cont.steps()) {
            throw new ModelFileException("network.steps", steps + " disagrees with the schedule's " + cont.steps());
        }
        long declared = field(net, "parameters").asLong();
        long expected = ReverseNetwork.create(shape, steps, 0L).parameterCount();
        JsonNode arr = field(root, "arrays").path(0);
        long shapeCount = arr.path("shape").path(0).asLong(-1);
        if (declared != expected || shapeCount != expected || !WEIGHTS.equals(arr.path("entry").asText())
                || !"float32-le".equals(arr.path("dtype").asText())) {
            throw new ModelFileException(WEIGHTS, "manifest declares " + declared + " parameters with shape ["
                    + shapeCount + "]; the network shape needs " + expected);
        }
        if (weightBytes.length != expected * 4) {
            throw new ModelFileException(WEIGHTS, "holds " + weightBytes.length + " bytes; the manifest's shape ["
                    + expected + "] of float32 needs " + expected * 4);
        }
        float[] weights = bytesToFloats(weightBytes);
        for (int i = 0; i < weights.length; i++) {
            if (!Float.isFinite(weights[i])) {
                throw new ModelFileException(WEIGHTS, "parameter " + i + " is " + weights[i] + "; expected a finite number");
            }
        }
        ReverseNetwork network = ReverseNetwork.fromParameters(shape, steps, weights);

        Provenance provenance = ProvenanceJson.read(field(root, "provenance"));
        return ModelParts.ofNetwork(options, transform, network, provenance);
    }

    private static NoiseSchedule readSchedule(JsonNode node, String where) throws ModelFileException {
        int steps = field(node, "steps").asInt();
        if (steps < 1 || steps > MAX_STEPS) {
            throw new ModelFileException(where + ".steps", steps + " is outside 1.." + MAX_STEPS);
        }
        JsonNode b = field(node, "betas");
        if (b.size() != steps) {
            throw new ModelFileException(where + ".betas", "has " + b.size() + " values; steps says " + steps);
        }
        double[] betas = new double[steps];
        for (int i = 0; i < steps; i++) {
            betas[i] = b.get(i).asDouble(Double.NaN);
        }
        return NoiseSchedule.of(NoiseSchedule.Kind.valueOf(field(node, "kind").asText()), betas, null);
    }

    private static JsonNode field(JsonNode node, String name) throws ModelFileException {
        JsonNode v = node.get(name);
        if (v == null || v.isNull()) {
            throw new ModelFileException(MANIFEST + " " + name, "field missing");
        }
        return v;
    }

    private static Map<String, byte[]> readEntries(Path file) throws IOException {
        Map<String, byte[]> entries = new LinkedHashMap<>();
        try (InputStream in = Files.newInputStream(file)) {
            byte[] magic = in.readNBytes(4);
            if (magic.length < 4 || magic[0] != 'P' || magic[1] != 'K' || magic[2] != 3 || magic[3] != 4) {
                throw new ModelFileException("container", file + " is not a Backstep model file (no zip header)");
            }
        }
        try (ZipFile zip = new ZipFile(file.toFile())) {
            java.util.Enumeration<? extends ZipEntry> all = zip.entries();
            while (all.hasMoreElements()) {
                ZipEntry e = all.nextElement();
                String name = e.getName();
                if (entries.containsKey(name)) {
                    throw new ModelFileException(name, "entry appears twice");
                }
                if (e.getSize() < 0 || e.getSize() > MAX_ENTRY_BYTES) {
                    throw new ModelFileException(name, "declares " + e.getSize() + " bytes; expected 0 to " + MAX_ENTRY_BYTES);
                }
                try (InputStream in = zip.getInputStream(e)) {
                    byte[] data = in.readNBytes((int) e.getSize());
                    if (data.length != e.getSize() || in.read() != -1) {
                        throw new ModelFileException(name, "holds a different number of bytes than its declared " + e.getSize());
                    }
                    entries.put(name, data);
                } catch (ZipException ex) {
                    throw new ModelFileException(name, "entry is corrupt: " + ex.getMessage(), ex);
                }
            }
        } catch (ZipException | java.io.EOFException e) {
            throw new ModelFileException("container", file + " is truncated or corrupt: " + e.getMessage(), e);
        }
        if (entries.isEmpty()) {
            throw new ModelFileException("container", file + " holds no entries (truncated or foreign)");
        }
        return entries;
    }

    private static void checkSums(Map<String, byte[]> entries) throws ModelFileException {
        String sums = new String(entries.get(SUMS), StandardCharsets.UTF_8);
        Map<String, String> declared = new LinkedHashMap<>();
        for (String line : sums.split("\n")) {
            if (line.isBlank()) {
                continue;
            }
            int sep = line.indexOf("  ");
            if (sep != 64) {
                throw new ModelFileException(SUMS, "line is not \"<64 hex digits>  <entry>\": " + line);
            }
            declared.put(line.substring(sep + 2), line.substring(0, sep));
        }
        for (String name : List.of(MANIFEST, WEIGHTS)) {
            String want = declared.get(name);
            if (want == null) {
                throw new ModelFileException(SUMS, "no checksum for " + name);
            }
            String got = sha256(entries.get(name));
            if (!got.equals(want)) {
                throw new ModelFileException(name, "SHA-256 is " + got + "; " + SUMS + " says " + want);
            }
        }
    }

    public static String sha256(byte[] data) {
        try {
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(data));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is missing from this Java runtime", e);
        }
    }

    static byte[] floatsToBytes(float[] v) {
        ByteBuffer b = ByteBuffer.allocate(v.length * 4).order(ByteOrder.LITTLE_ENDIAN);
        b.asFloatBuffer().put(v);
        return b.array();
    }

    static float[] bytesToFloats(byte[] bytes) {
        float[] v = new float[bytes.length / 4];
        ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN).asFloatBuffer().get(v);
        return v;
    }
}
