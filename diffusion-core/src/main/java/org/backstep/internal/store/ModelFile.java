package org.backstep.internal.store;

import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.ModelRange;
import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.MixtureBaseline;
import org.backstep.internal.mixture.GaussianMixture;
import org.backstep.internal.mixture.MixtureFit;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.io.AtomicFiles;
import org.backstep.io.JsonFields;
import org.backstep.option.Limits;
import org.backstep.schedule.Require;
import org.backstep.io.ModelFileException;
import org.backstep.training.ProvenanceJson;
import org.backstep.option.FitOptions;
import org.backstep.option.LearningRateSchedule;
import org.backstep.option.Baseline;
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
import java.io.EOFException;
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
 * The Backstep model file, format version 4, or 5 for a whitened model (versions 1 to 3 still load): a zip container of
 * exactly three entries.
 * <pre>
 *   model.json        the manifest: format name and version, every fit option, both schedules'
 *                     betas, the columns and their transforms, the network shape, the shape of
 *                     each array entry, the training rows' range in model space, and the
 *                     provenance with the training history
 *   weights.f32       the network's flat parameter vector, raw little-endian float32
 *   SHA256SUMS        "hex  name" for every other entry, checked on load
 * </pre>
 * A column whose transform is {@code NORMAL_SCORES} carries {@code knots}, the sorted training
 * values its map is smoothed from (any version: no file without them could be read, since such a
 * transform cannot be built without its knots); a column of another transform has none. The
 * option {@code marginals} (how the maps were asked for; the maps are the columns' transforms) is
 * written when it is not {@code STANDARDIZED} and is optional in every version (absent reads as
 * {@code STANDARDIZED}, what older releases did; an older release ignores it and reads the same maps).
 * Version 4 added two sets of entries, each optional within the version (a version 4 file of a
 * table without the new kinds and without a baseline has neither):
 * integer and categorical columns: a column of kind {@code INTEGER} carries
 * {@code lowest} = 0 when it is a count (its decoder's bin of 0 reaching to -infinity) and nothing
 * else new; a column of kind {@code CATEGORICAL} carries
 * {@code categories}, its labels in index order (the order the network's logits and the model-space
 * indices use), and the network's inputs and outputs count one per category; files of versions 1
 * to 3 have no such column. And the option {@code baseline} (the closed-form part of the reverse
 * model; absent, or a file of an older version, reads as {@code NONE}, what every older release
 * did) and, when that option is {@code FITTED_GAUSSIAN}, the object {@code gaussianBaseline} with
 * the fitted {@code mean}, {@code covariance} (rows) and {@code shrinkage} of the continuous model
 * columns (continuous and integer); the per-step factors are recomputed from them and the schedule
 * on load. Version 5 is version 4 plus, for a model fitted with coordinates {@code WHITENED}, the
 * option {@code coordinates} and (when the model has real continuous columns) the object
 * {@code whitening} with the {@code mean}, the shrunk {@code covariance} (rows) and the Ledoit-Wolf
 * {@code shrinkage} of those columns in standardized model space; W = covariance^(-1/2) is recomputed
 * from them on load (the same eigendecomposition, so the same W). Only such a model is written as
 * version 5 ({@link #WHITENED_VERSION}), so that an older release refuses it by its version rather
 * than ignore the keys and run it in standardized coordinates; every other model is version 4.
 * Version 6 is version 5 plus, for a model whose option {@code baseline} is {@code FITTED_MIXTURE}
 * (and only for such a model), the object {@code mixtureBaseline}: {@code weights} (K positive
 * numbers summing to 1, K at most {@code MixtureFit.MAX_COMPONENTS}), {@code components} (K objects,
 * each a {@code mean}, {@code covariance} and {@code shrinkage} as in {@code gaussianBaseline}) and
 * {@code bic} (the criterion of each K tried, for the record); the per-step factors are recomputed
 * from them and the schedule on load.
 * Version 3 added {@code trainingRange} ({@code min} and {@code max} of each diffused column of
 * the training rows in model space, continuous columns first), against which sampled rows are
 * checked; a version 1 or 2 file, or a model without a measured range, gets Samuelson's bound of
 * its training rows instead (see {@code ModelRange}). Version 2 renamed the trainer's own split
 * ("validation" became "checkpoint": checkpointFraction, checkpointDraws, provenance
 * checkpointRows and history checkpointBound), renamed where the step's embedding enters the
 * network ("conditioning" became "stepInput"), and added trainingSteps and evaluations; a version
 * 1 file is read with its old keys, and 4,000 and 20 for the two new options, the values every
 * version 1 release used.
 *
 * <p>A model file is untrusted input. Loading refuses, with a {@link ModelFileException} naming
 * the part, before anything large is allocated: a zip entry the format does not name (refused
 * unread), an entry that appears twice, an entry longer than its limit (read through a bounded
 * stream, never on the word of its header), a manifest field of the wrong JSON type (never
 * coerced; see {@link JsonFields}) or out of range, options the builder would refuse (they pass
 * through the same validation, {@link FitOptions}'s constructor, within {@link Limits}), betas,
 * shifts and scales that are not finite or lie outside {@link Limits}, and a network shape whose
 * parameter count (long arithmetic) disagrees with the declared array shape or the weights' byte
 * size. The network is built only after all of these agree. SHA256SUMS protects against damage,
 * not against a crafted file: these checks are what protect against the latter.
 *
 * <p>No Java serialization. Saving writes a temporary file in the target's folder, syncs it, then
 * moves it over the target, so a failure leaves an existing file untouched ({@link AtomicFiles},
 * which also removes stale temporary files of the same target).
 *
 * <p>One file: saving and loading must agree on every key, and they are checked against each
 * other line by line.
 */
public final class ModelFile {

    public static final String FORMAT = "backstep-model";
    public static final int VERSION = 4;
    /**
     * The version written for a model fitted with coordinates WHITENED (version 4 plus the option
     * {@code coordinates} and the object {@code whitening}), and the newest this release reads: a
     * release that reads only up to version 4 refuses such a file by its version instead of running it
     * in standardized coordinates. Every other model is written as {@link #VERSION}.
     */
    public static final int NEWEST_VERSION = 6;
    /** The version written for a whitened model without a mixture part. */
    public static final int WHITENED_VERSION = 5;
    /** The version written for a model with a Gaussian mixture part (baseline FITTED_MIXTURE). */
    public static final int MIXTURE_VERSION = 6;
    /** The oldest version this release reads. */
    public static final int OLDEST_VERSION = 1;
    public static final String MANIFEST = "model.json";
    public static final String WEIGHTS = "weights.f32";
    public static final String SUMS = "SHA256SUMS";
    /** The entries of the format, the only ones a file may hold. */
    public static final List<String> ENTRIES = List.of(MANIFEST, WEIGHTS, SUMS);
    /**
     * Largest manifest accepted on load: two schedules of {@link Limits#MAX_STEPS} betas at about
     * 30 bytes each, indented, and a long training history fit well within it.
     */
    static final long MAX_MANIFEST_BYTES = 1L << 27;
    /** Largest SHA256SUMS entry accepted on load (two lines are about 150 bytes). */
    static final long MAX_SUMS_BYTES = 1L << 12;
    /** Most entries the central directory may list before the file is refused unread. */
    static final int MAX_ZIP_ENTRIES = 16;
    /** The most columns a manifest may list (each is a network input or a carried constant). */
    static final int MAX_COLUMNS = 1_000_000;

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
        AtomicFiles.write(target, bytes.toByteArray());
    }

    private static ObjectNode manifest(ModelParts model, int weightCount) {
        FitOptions o = model.options();
        ObjectNode root = JSON.createObjectNode();
        root.put("format", FORMAT);
        root.put("formatVersion", o.baseline() == Baseline.FITTED_MIXTURE ? MIXTURE_VERSION
                : o.coordinates() == org.backstep.option.Coordinates.WHITENED ? WHITENED_VERSION : VERSION);
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
        opts.put("baseline", o.baseline().name());
        if (o.coordinates() != org.backstep.option.Coordinates.STANDARDIZED) {
            opts.put("coordinates", o.coordinates().name());
        }
        if (o.marginals() != org.backstep.option.Marginals.STANDARDIZED) {
            // the option asked for; the maps themselves are the columns' transforms
            opts.put("marginals", o.marginals().name());
        }

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
            if (ct.kind() == ColumnTransform.Kind.NORMAL_SCORES) {
                ArrayNode knots = col.putArray("knots");     // the sorted training values the map is smoothed from
                for (double k : ct.knots()) {
                    knots.add(k);
                }
            }
            if (tr.lowest().containsKey(tr.names().get(c))) {
                col.put("lowest", tr.lowest().get(tr.names().get(c)));
            }
            if (tr.kinds().get(c) == ColumnKind.CATEGORICAL) {
                ArrayNode labels = col.putArray("categories");
                tr.categories().get(tr.names().get(c)).forEach(labels::add);
            }
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

        if (model.range().basis().equals(ModelRange.TRAINING_ROWS)) {
            ObjectNode range = root.putObject("trainingRange");
            ArrayNode lo = range.putArray("min");
            ArrayNode hi = range.putArray("max");
            for (double v : model.range().min()) {
                lo.add(v);
            }
            for (double v : model.range().max()) {
                hi.add(v);
            }
        }
        if (model.whitening() != null) {
            org.backstep.table.Whitening wh = model.whitening();
            writeGaussian(root.putObject("whitening"), wh.mean(), wh.covariance(), wh.shrinkage());
        }
        GaussianBaseline gb = model.baseline();
        if (gb != null && gb.kind() == Baseline.FITTED_GAUSSIAN && o.baseline() == Baseline.FITTED_GAUSSIAN) {
            writeGaussian(root.putObject("gaussianBaseline"), gb.mean(), gb.covariance(), gb.shrinkage());
        }
        if (model.closedForm() instanceof MixtureBaseline mb) {
            ObjectNode mix = root.putObject("mixtureBaseline");
            GaussianMixture g = mb.mixture();
            ArrayNode weights = mix.putArray("weights");
            for (double v : g.weights()) {
                weights.add(v);
            }
            ArrayNode comps = mix.putArray("components");
            double[] shrink = g.shrinkage();
            for (int c = 0; c < g.components(); c++) {
                writeGaussian(comps.addObject(), g.mean(c), g.covariance(c), shrink[c]);
            }
            ArrayNode b = mix.putArray("bic");
            for (double v : mb.bic()) {
                b.add(v);
            }
        }
        root.set("provenance", ProvenanceJson.write(model.provenance()));
        return root;
    }

    /** A mean, a d x d covariance and a shrinkage intensity, as stored under one manifest key. */
    private record Gaussian(double[] mean, double[][] covariance, double shrinkage) {
    }

    /** Writes {@code mean}, {@code covariance} (row by row) and {@code shrinkage} into {@code g}. */
    private static void writeGaussian(ObjectNode g, double[] mean, double[][] covariance, double shrinkage) {
        ArrayNode m = g.putArray("mean");
        for (double v : mean) {
            m.add(v);
        }
        ArrayNode cov = g.putArray("covariance");
        for (double[] row : covariance) {
            ArrayNode r = cov.addArray();
            for (double v : row) {
                r.add(v);
            }
        }
        g.put("shrinkage", shrinkage);
    }

    /**
     * Reads the object {@code key} of the manifest written by {@link #writeGaussian}: a mean of d
     * float-range numbers, a d x d covariance and a shrinkage in [0, 1].
     */
    private static Gaussian readGaussian(JsonNode root, String key, int d) throws ModelFileException {
        String where = MANIFEST + " " + key;
        return gaussianAt(JsonFields.object(JsonFields.field(root, key, MANIFEST), where), where, d);
    }

    /** Reads a Gaussian object {@code g} found at {@code where}. */
    private static Gaussian gaussianAt(JsonNode g, String where, int d) throws ModelFileException {
        JsonNode mean = JsonFields.array(JsonFields.field(g, "mean", where), where + ".mean", d, d);
        JsonNode cov = JsonFields.array(JsonFields.field(g, "covariance", where), where + ".covariance", d, d);
        double[] m = new double[d];
        double[][] c = new double[d][d];
        for (int i = 0; i < d; i++) {
            m[i] = JsonFields.number(mean.get(i), where + ".mean[" + i + "]", -Float.MAX_VALUE, Float.MAX_VALUE);
            JsonNode row = JsonFields.array(cov.get(i), where + ".covariance[" + i + "]", d, d);
            for (int j = 0; j < d; j++) {
                c[i][j] = JsonFields.number(row.get(j), where + ".covariance[" + i + "][" + j + "]",
                        -Float.MAX_VALUE, Float.MAX_VALUE);
            }
        }
        double shrinkage = JsonFields.number(JsonFields.field(g, "shrinkage", where), where + ".shrinkage", 0.0, 1.0);
        return new Gaussian(m, c, shrinkage);
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

    /**
     * Loads a model file, refusing it (see the class comment) before anything large is allocated.
     *
     * @param file the file
     * @return the model's parts
     * @throws ModelFileException naming the part that is wrong
     * @throws IOException if the file cannot be read
     */
    public static ModelParts load(Path file) throws IOException {
        Require.notNull("file", file);
        try (InputStream in = Files.newInputStream(file)) {
            byte[] magic = in.readNBytes(4);
            if (magic.length < 4 || magic[0] != 'P' || magic[1] != 'K' || magic[2] != 3 || magic[3] != 4) {
                throw new ModelFileException("container", file + " is not a Backstep model file (no zip header)");
            }
        }
        try (ZipFile zip = new ZipFile(file.toFile())) {
            Map<String, ZipEntry> named = entries(zip, file);
            Map<String, String> declared = readSums(read(zip, named.get(SUMS), MAX_SUMS_BYTES));
            byte[] manifest = read(zip, named.get(MANIFEST), MAX_MANIFEST_BYTES);
            checkSum(MANIFEST, manifest, declared);
            JsonNode root;
            try {
                root = JSON.readTree(manifest);
            } catch (JsonProcessingException e) {
                throw new ModelFileException(MANIFEST, "not valid JSON: " + JsonFields.shorten(e.getOriginalMessage()), e);
            }
            JsonFields.object(root, MANIFEST);
            if (!FORMAT.equals(JsonFields.text(JsonFields.field(root, "format", MANIFEST), MANIFEST + " format"))) {
                throw new ModelFileException(MANIFEST + " format", "expected \"" + FORMAT + "\", found " + root.get("format"));
            }
            int version = JsonFields.int32(JsonFields.field(root, "formatVersion", MANIFEST), MANIFEST + " formatVersion",
                    Integer.MIN_VALUE, Integer.MAX_VALUE);
            if (version < OLDEST_VERSION || version > NEWEST_VERSION) {
                throw new ModelFileException(MANIFEST + " formatVersion", "version " + version
                        + " is not known to this release, which reads versions " + OLDEST_VERSION + " to " + NEWEST_VERSION);
            }
            Manifest m = readManifest(root, version);
            long bytes = 4 * m.shape.parameterCount();
            byte[] weightBytes = read(zip, named.get(WEIGHTS), bytes);
            if (weightBytes.length != bytes) {
                throw new ModelFileException(WEIGHTS, "holds " + weightBytes.length + " bytes; the manifest's shape ["
                        + m.shape.parameterCount() + "] of float32 needs " + bytes);
            }
            checkSum(WEIGHTS, weightBytes, declared);
            float[] weights = bytesToFloats(weightBytes);
            for (int i = 0; i < weights.length; i++) {
                if (!Float.isFinite(weights[i])) {
                    throw new ModelFileException(WEIGHTS, "parameter " + i + " is " + weights[i] + "; expected a finite number");
                }
            }
            try {
                ReverseNetwork network = ReverseNetwork.fromParameters(m.shape, m.options.steps(), weights);
                ClosedFormPart baseline = m.transform.modelledContinuous().length == 0 ? null : switch (m.options.baseline()) {
                    case NONE -> null;
                    case FITTED_MIXTURE -> m.mixture; // built and checked by readManifest
                    case STANDARD_NORMAL -> GaussianBaseline.standardNormal(m.transform.modelledContinuous().length,
                            m.options.continuousSchedule());
                    case FITTED_GAUSSIAN -> GaussianBaseline.of(Baseline.FITTED_GAUSSIAN, m.baselineMean,
                            m.baselineCovariance, m.baselineShrinkage, m.options.continuousSchedule());
                };
                boolean learned = m.options.variance() == ReverseVariance.LEARNED;
                return m.range == null ? new ModelParts(m.options, m.transform, network,
                        new NetworkEstimator(network, baseline, learned), m.provenance, m.whitening)
                        : ModelParts.ofNetwork(m.options, m.transform, network, baseline, m.provenance, m.range,
                                m.whitening);
            } catch (IllegalArgumentException e) {
                throw new ModelFileException(MANIFEST, "inconsistent content: " + e.getMessage(), e);
            }
        } catch (ZipException | EOFException e) {
            throw new ModelFileException("container", file + " is truncated or corrupt: " + e.getMessage(), e);
        } catch (IllegalArgumentException | IllegalStateException | IndexOutOfBoundsException e) {
            // what java.util.zip throws on some malformed headers (names that are not valid in their
            // declared charset, offsets past the end)
            throw new ModelFileException("container", file + " is corrupt: " + e, e);
        }
    }

    /** The manifest's content, every field checked; the network is not built yet. */
    private record Manifest(FitOptions options, TableTransform transform, NetworkShape shape, ModelRange range,
                            Provenance provenance, double[] baselineMean, double[][] baselineCovariance,
                            double baselineShrinkage, org.backstep.table.Whitening whitening, MixtureBaseline mixture) {
    }

    private static Manifest readManifest(JsonNode root, int version) throws ModelFileException {
        boolean v1 = version == 1;
        String opt = MANIFEST + " options";
        JsonNode o = JsonFields.object(JsonFields.field(root, "options", MANIFEST), opt);
        NoiseSchedule cont = readSchedule(JsonFields.field(o, "continuousSchedule", opt), opt + ".continuousSchedule");
        NoiseSchedule bin = readSchedule(JsonFields.field(o, "binarySchedule", opt), opt + ".binarySchedule");
        JsonNode hiddenNode = JsonFields.array(JsonFields.field(o, "hidden", opt), opt + ".hidden", 1, Limits.MAX_HIDDEN_LAYERS);
        int[] hidden = new int[hiddenNode.size()];
        for (int i = 0; i < hidden.length; i++) {
            hidden[i] = JsonFields.int32(hiddenNode.get(i), opt + ".hidden[" + i + "]", 1, Limits.MAX_HIDDEN_WIDTH);
        }
        JsonNode logNode = JsonFields.array(JsonFields.field(o, "logColumns", opt), opt + ".logColumns", 0, MAX_COLUMNS);
        Set<String> logs = new TreeSet<>();
        for (int i = 0; i < logNode.size(); i++) {
            logs.add(JsonFields.text(logNode.get(i), opt + ".logColumns[" + i + "]"));
        }
        FitOptions options;
        try {
            options = new FitOptions(cont, bin, hidden,
                    int32(o, opt, "embeddingSize", 2, Limits.MAX_EMBEDDING_SIZE),
                    JsonFields.constant(JsonFields.field(o, v1 ? "conditioning" : "stepInput", opt),
                            opt + (v1 ? ".conditioning" : ".stepInput"), StepInput.class),
                    constant(o, opt, "variance", ReverseVariance.class), constant(o, opt, "loss", TrainingLoss.class),
                    number(o, opt, "hybridWeight"), constant(o, opt, "stepSampling", StepSampling.class),
                    number(o, opt, "learningRate"), constant(o, opt, "learningRateSchedule", LearningRateSchedule.class),
                    number(o, opt, "adamBeta1"), number(o, opt, "adamBeta2"), number(o, opt, "adamEpsilon"),
                    number(o, opt, "weightDecay"), number(o, opt, "emaDecay"),
                    int32(o, opt, "batchSize", 1, Integer.MAX_VALUE), int32(o, opt, "epochs", 0, Integer.MAX_VALUE),
                    v1 ? 4000 : int32(o, opt, "trainingSteps", 1, Integer.MAX_VALUE),
                    number(o, opt, v1 ? "validationFraction" : "checkpointFraction"),
                    int32(o, opt, "evaluateEvery", 0, Integer.MAX_VALUE),
                    v1 ? 20 : int32(o, opt, "evaluations", 1, Integer.MAX_VALUE),
                    int32(o, opt, v1 ? "validationDraws" : "checkpointDraws", 1, Limits.MAX_DRAWS),
                    int32(o, opt, "patience", 0, Integer.MAX_VALUE), logs,
                    JsonFields.whole(JsonFields.field(o, "seed", opt), opt + ".seed", Long.MIN_VALUE, Long.MAX_VALUE),
                    int32(o, opt, "threads", 1, Limits.MAX_THREADS),
                    // optional within version 4 (a file without it was written before the option existed)
                    version >= 4 && o.has("baseline") ? constant(o, opt, "baseline", Baseline.class) : Baseline.NONE,
                    // version 5 only (a whitened model): absent reads as STANDARDIZED, what older releases did
                    version >= 5 && o.has("coordinates")
                            ? constant(o, opt, "coordinates", org.backstep.option.Coordinates.class)
                            : org.backstep.option.Coordinates.STANDARDIZED,
                    // optional in every version: absent reads as STANDARDIZED, what older releases did
                    o.has("marginals") ? constant(o, opt, "marginals", org.backstep.option.Marginals.class)
                            : org.backstep.option.Marginals.STANDARDIZED);
        } catch (IllegalArgumentException e) {
            // the builder's own validation refused them
            throw new ModelFileException(opt, e.getMessage() + " (the builder refuses these options)", e);
        }

        String cw = MANIFEST + " columns";
        JsonNode columns = JsonFields.array(JsonFields.field(root, "columns", MANIFEST), cw, 1, MAX_COLUMNS);
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        List<ColumnTransform> transforms = new ArrayList<>();
        Map<String, List<String>> categories = new LinkedHashMap<>();
        Map<String, Long> lowest = new LinkedHashMap<>();
        for (int c = 0; c < columns.size(); c++) {
            String at = cw + "[" + c + "]";
            JsonNode col = JsonFields.object(columns.get(c), at);
            String name = JsonFields.text(JsonFields.field(col, "name", at), at + ".name");
            names.add(name);
            ColumnKind columnKind = constant(col, at, "kind", ColumnKind.class);
            kinds.add(columnKind);
            if (columnKind == ColumnKind.CATEGORICAL) {
                if (version < 4) {
                    throw new ModelFileException(at + ".kind", "CATEGORICAL in a file of format version " + version
                            + "; categorical columns came with version 4");
                }
                JsonNode labels = JsonFields.array(JsonFields.field(col, "categories", at), at + ".categories", 1,
                        org.backstep.table.Table.MAX_CATEGORIES);
                List<String> list = new ArrayList<>(labels.size());
                for (int i = 0; i < labels.size(); i++) {
                    list.add(JsonFields.text(labels.get(i), at + ".categories[" + i + "]"));
                }
                categories.put(name, list);
            } else if (columnKind == ColumnKind.INTEGER && version < 4) {
                throw new ModelFileException(at + ".kind", "INTEGER in a file of format version " + version
                        + "; integer columns came with version 4");
            }
            if (col.has("lowest")) {
                if (columnKind != ColumnKind.INTEGER) {
                    throw new ModelFileException(at + ".lowest", "present on a " + columnKind
                            + " column; only INTEGER columns have a lowest value");
                }
                lowest.put(name, JsonFields.whole(col.get("lowest"), at + ".lowest", 0, 0));
            }
            if (columnKind != ColumnKind.CATEGORICAL && col.has("categories")) {
                throw new ModelFileException(at + ".categories", "present on a " + columnKind
                        + " column; only CATEGORICAL columns have categories");
            }
            ColumnTransform.Kind kind = constant(col, at, "transform", ColumnTransform.Kind.class);
            double shift = JsonFields.number(JsonFields.field(col, "shift", at), at + ".shift", -Limits.MAX_SHIFT, Limits.MAX_SHIFT);
            double scale = JsonFields.number(JsonFields.field(col, "scale", at), at + ".scale", Limits.MIN_SCALE, Limits.MAX_SCALE);
            double[] knots = null;
            if (col.has("knots")) {
                JsonNode k = JsonFields.array(col.get("knots"), at + ".knots", 0, (int) Limits.MAX_CELLS);
                knots = new double[k.size()];
                for (int i = 0; i < knots.length; i++) {
                    knots[i] = JsonFields.number(k.get(i), at + ".knots[" + i + "]", -Limits.MAX_SHIFT, Limits.MAX_SHIFT);
                }
            }
            try {
                transforms.add(new ColumnTransform(kind, shift, scale, knots));   // knots only, and required, for NORMAL_SCORES
            } catch (IllegalArgumentException e) {
                throw new ModelFileException(at, e.getMessage(), e);
            }
        }
        TableTransform transform;
        try {
            transform = TableTransform.of(names, kinds, categories, lowest, transforms);
        } catch (IllegalArgumentException e) {
            throw new ModelFileException(cw, e.getMessage(), e);
        }
        for (String log : options.logColumns()) {
            if (!names.contains(log)) {
                throw new ModelFileException(opt + ".logColumns", "names '" + JsonFields.shorten(log)
                        + "', which is not one of the columns");
            }
        }
        int dc = transform.modelledContinuous().length;
        int db = transform.modelledBinary().length;
        if (transform.modelColumns() == 0) {
            throw new ModelFileException(cw, "no column is diffused; a fitted model has at least one");
        }
        int outputs = org.backstep.internal.chain.Chain.outputsOf(options.variance(), transform);
        NetworkShape shape;
        try {
            shape = new NetworkShape(org.backstep.internal.chain.Chain.inputsOf(transform), options.hidden(), outputs,
                    options.embeddingSize(), options.stepInput());
        } catch (IllegalArgumentException e) {
            throw new ModelFileException("network", e.getMessage(), e);
        }

        String nw = MANIFEST + " network";
        JsonNode net = JsonFields.object(JsonFields.field(root, "network", MANIFEST), nw);
        long inputs = JsonFields.whole(JsonFields.field(net, "inputs", nw), nw + ".inputs", 1, Integer.MAX_VALUE);
        long outs = JsonFields.whole(JsonFields.field(net, "outputs", nw), nw + ".outputs", 1, Integer.MAX_VALUE);
        if (inputs != shape.inputs() || outs != shape.outputs()) {
            throw new ModelFileException("network", "inputs/outputs " + inputs + "/" + outs
                    + " disagree with the columns and options, which give " + shape.inputs() + "/" + shape.outputs());
        }
        int steps = JsonFields.int32(JsonFields.field(net, "steps", nw), nw + ".steps", 1, Limits.MAX_STEPS);
        if (steps != cont.steps()) {
            throw new ModelFileException(nw + ".steps", steps + " disagrees with the schedule's " + cont.steps());
        }
        long declared = JsonFields.whole(JsonFields.field(net, "parameters", nw), nw + ".parameters", 1, Limits.MAX_PARAMETERS);
        String aw = MANIFEST + " arrays";
        JsonNode arrays = JsonFields.array(JsonFields.field(root, "arrays", MANIFEST), aw, 1, 1);
        JsonNode arr = JsonFields.object(arrays.get(0), aw + "[0]");
        String entry = JsonFields.text(JsonFields.field(arr, "entry", aw + "[0]"), aw + "[0].entry");
        String dtype = JsonFields.text(JsonFields.field(arr, "dtype", aw + "[0]"), aw + "[0].dtype");
        JsonNode arrShape = JsonFields.array(JsonFields.field(arr, "shape", aw + "[0]"), aw + "[0].shape", 1, 1);
        long shapeCount = JsonFields.whole(arrShape.get(0), aw + "[0].shape[0]", 1, Limits.MAX_PARAMETERS);
        long expected = shape.parameterCount();
        if (declared != expected || shapeCount != expected || !WEIGHTS.equals(entry) || !"float32-le".equals(dtype)) {
            throw new ModelFileException(WEIGHTS, "manifest declares " + declared + " parameters with shape ["
                    + shapeCount + "] of " + JsonFields.shorten(dtype) + " in " + JsonFields.shorten(entry)
                    + "; the network shape needs " + expected + " float32-le in " + WEIGHTS);
        }

        ModelRange range = null;
        if (version >= 3 && root.has("trainingRange")) {
            range = readRange(root.get("trainingRange"), dc, db, transform.modelledCategories());
        }
        double[] baselineMean = null;
        double[][] baselineCovariance = null;
        double baselineShrinkage = 0.0;
        if (root.has("gaussianBaseline") && (options.baseline() != Baseline.FITTED_GAUSSIAN || dc == 0)) {
            throw new ModelFileException(MANIFEST + " gaussianBaseline", "present, but the model has "
                    + (dc == 0 ? "no continuous column" : "the baseline " + options.baseline())
                    + "; only a FITTED_GAUSSIAN baseline over continuous columns has one");
        }
        if (options.baseline() == Baseline.FITTED_GAUSSIAN && dc > 0) {
            String gw = MANIFEST + " gaussianBaseline";
            Gaussian g = readGaussian(root, "gaussianBaseline", dc);
            baselineMean = g.mean();
            baselineCovariance = g.covariance();
            baselineShrinkage = g.shrinkage();
            try {
                GaussianBaseline.of(Baseline.FITTED_GAUSSIAN, baselineMean, baselineCovariance, baselineShrinkage, cont);
            } catch (IllegalArgumentException e) {
                throw new ModelFileException(gw, e.getMessage(), e);
            }
        }
        MixtureBaseline mixture = null;
        boolean mixed = options.baseline() == Baseline.FITTED_MIXTURE && dc > 0;
        if (options.baseline() == Baseline.FITTED_MIXTURE && version < MIXTURE_VERSION) {
            throw new ModelFileException(MANIFEST + " options.baseline", "FITTED_MIXTURE in a file of format version "
                    + version + "; the mixture part came with version " + MIXTURE_VERSION);
        }
        if (root.has("mixtureBaseline") != mixed) {
            throw new ModelFileException(MANIFEST + " mixtureBaseline", (mixed ? "absent" : "present")
                    + ", but the model has " + (dc == 0 ? "no continuous column" : "the baseline " + options.baseline())
                    + "; only a FITTED_MIXTURE baseline over continuous columns has one");
        }
        if (mixed) {
            String mw = MANIFEST + " mixtureBaseline";
            JsonNode mix = JsonFields.object(root.get("mixtureBaseline"), mw);
            JsonNode w = JsonFields.array(JsonFields.field(mix, "weights", mw), mw + ".weights", 1, MixtureFit.MAX_COMPONENTS);
            int k = w.size();
            JsonNode comps = JsonFields.array(JsonFields.field(mix, "components", mw), mw + ".components", k, k);
            JsonNode b = JsonFields.array(JsonFields.field(mix, "bic", mw), mw + ".bic", 0, MixtureFit.MAX_COMPONENTS);
            double[] weights = new double[k];
            double[][] means = new double[k][];
            double[][][] covs = new double[k][][];
            double[] shrink = new double[k];
            for (int c = 0; c < k; c++) {
                weights[c] = JsonFields.number(w.get(c), mw + ".weights[" + c + "]", Double.MIN_VALUE, 1.0);
                String at = mw + ".components[" + c + "]";
                Gaussian g = gaussianAt(JsonFields.object(comps.get(c), at), at, dc);
                means[c] = g.mean();
                covs[c] = g.covariance();
                shrink[c] = g.shrinkage();
            }
            double[] mixtureBic = new double[b.size()];
            for (int i = 0; i < mixtureBic.length; i++) {
                mixtureBic[i] = JsonFields.finite(b.get(i), mw + ".bic[" + i + "]");
            }
            try {
                mixture = MixtureBaseline.of(GaussianMixture.of(weights, means, covs, shrink), mixtureBic, cont);
            } catch (IllegalArgumentException e) {
                throw new ModelFileException(mw, e.getMessage(), e);
            }
        }
        org.backstep.table.Whitening whitening = null;
        int whitened = org.backstep.internal.chain.Chain.whitenedColumns(transform).length;
        boolean wants = options.coordinates() == org.backstep.option.Coordinates.WHITENED && whitened > 0;
        if (root.has("whitening") != wants) {
            throw new ModelFileException(MANIFEST + " whitening", (wants ? "absent" : "present")
                    + ", but the model's coordinates are " + options.coordinates() + " over " + whitened
                    + " real continuous columns; a WHITENED model of such columns has one, no other model does");
        }
        if (wants) {
            String ww = MANIFEST + " whitening";
            Gaussian g = readGaussian(root, "whitening", whitened);
            try {
                whitening = org.backstep.table.Whitening.of(g.mean(), g.covariance(), g.shrinkage());
            } catch (IllegalArgumentException e) {
                throw new ModelFileException(ww, e.getMessage(), e);
            }
        }
        Provenance provenance = ProvenanceJson.read(JsonFields.field(root, "provenance", MANIFEST));
        return new Manifest(options, transform, shape, range, provenance, baselineMean, baselineCovariance,
                baselineShrinkage, whitening, mixture);
    }

    private static ModelRange readRange(JsonNode node, int dc, int db, int[] categories) throws ModelFileException {
        String where = MANIFEST + " trainingRange";
        JsonFields.object(node, where);
        int d = dc + db + categories.length;
        JsonNode lo = JsonFields.array(JsonFields.field(node, "min", where), where + ".min", d, d);
        JsonNode hi = JsonFields.array(JsonFields.field(node, "max", where), where + ".max", d, d);
        double[] min = new double[d];
        double[] max = new double[d];
        for (int j = 0; j < min.length; j++) {
            // binary model columns hold 0 and 1, categorical ones an index 0..K-1; continuous ones are standardized values
            double bound = j < dc ? Float.MAX_VALUE : j < dc + db ? 1.0 : categories[j - dc - db] - 1.0;
            double floor = j < dc ? -Float.MAX_VALUE : 0.0;
            min[j] = JsonFields.number(lo.get(j), where + ".min[" + j + "]", floor, bound);
            max[j] = JsonFields.number(hi.get(j), where + ".max[" + j + "]", min[j], bound);
        }
        return new ModelRange(min, max, dc, ModelRange.TRAINING_ROWS);
    }

    private static NoiseSchedule readSchedule(JsonNode node, String where) throws ModelFileException {
        JsonFields.object(node, where);
        NoiseSchedule.Kind kind = constant(node, where, "kind", NoiseSchedule.Kind.class);
        int steps = int32(node, where, "steps", 1, Limits.MAX_STEPS);
        JsonNode b = JsonFields.array(JsonFields.field(node, "betas", where), where + ".betas", steps, steps);
        double[] betas = new double[steps];
        for (int i = 0; i < steps; i++) {
            betas[i] = JsonFields.number(b.get(i), where + ".betas[" + i + "]", Limits.MIN_BETA, 1.0);
        }
        try {
            return NoiseSchedule.of(kind, betas, null);
        } catch (IllegalArgumentException e) {
            throw new ModelFileException(where + ".betas", e.getMessage(), e);
        }
    }

    private static int int32(JsonNode parent, String where, String key, int lo, int hi) throws ModelFileException {
        return JsonFields.int32(JsonFields.field(parent, key, where), JsonFields.child(where, key), lo, hi);
    }

    private static double number(JsonNode parent, String where, String key) throws ModelFileException {
        return JsonFields.finite(JsonFields.field(parent, key, where), JsonFields.child(where, key));
    }

    private static <E extends Enum<E>> E constant(JsonNode parent, String where, String key, Class<E> type)
            throws ModelFileException {
        return JsonFields.constant(JsonFields.field(parent, key, where), JsonFields.child(where, key), type);
    }

    /**
     * The central directory's entries by name, read without reading any entry: each must be one
     * the format names, none may appear twice, and all three must be present.
     */
    private static Map<String, ZipEntry> entries(ZipFile zip, Path file) throws ModelFileException {
        Map<String, ZipEntry> named = new LinkedHashMap<>();
        if (zip.size() > MAX_ZIP_ENTRIES) {
            throw new ModelFileException("container", file + " lists " + zip.size() + " entries; the format has "
                    + ENTRIES.size());
        }
        java.util.Enumeration<? extends ZipEntry> all = zip.entries();
        while (all.hasMoreElements()) {
            ZipEntry e = all.nextElement();
            String name = e.getName();
            if (!ENTRIES.contains(name)) {
                throw new ModelFileException(JsonFields.shorten(name), "entry is not part of the format, which holds only "
                        + ENTRIES + "; refused unread");
            }
            if (named.put(name, e) != null) {
                throw new ModelFileException(name, "entry appears twice");
            }
        }
        for (String name : ENTRIES) {
            if (!named.containsKey(name)) {
                throw new ModelFileException(name, "entry missing from " + file + " (entries present: " + named.keySet() + ")");
            }
        }
        return named;
    }

    /**
     * An entry's bytes through a bounded stream: at most {@code limit} bytes are read, whatever its
     * header declares, and an entry holding more is refused.
     */
    private static byte[] read(ZipFile zip, ZipEntry e, long limit) throws IOException {
        String name = e.getName();
        if (e.getSize() > limit) {
            throw new ModelFileException(name, "declares " + e.getSize() + " bytes; expected at most " + limit);
        }
        try (InputStream in = zip.getInputStream(e)) {
            byte[] data = in.readNBytes((int) limit);
            if (in.read() != -1) {
                throw new ModelFileException(name, "holds more than " + limit + " bytes");
            }
            if (e.getSize() >= 0 && data.length != e.getSize()) {
                throw new ModelFileException(name, "holds " + data.length + " bytes; its header declares " + e.getSize());
            }
            return data;
        } catch (ZipException | EOFException ex) {
            throw new ModelFileException(name, "entry is corrupt: " + ex.getMessage(), ex);
        }
    }

    private static Map<String, String> readSums(byte[] bytes) throws ModelFileException {
        String sums = new String(bytes, StandardCharsets.UTF_8);
        Map<String, String> declared = new LinkedHashMap<>();
        for (String line : sums.split("\n")) {
            if (line.isBlank()) {
                continue;
            }
            int sep = line.indexOf("  ");
            if (sep != 64 || !line.substring(0, 64).matches("[0-9a-f]{64}")) {
                throw new ModelFileException(SUMS, "line is not \"<64 hex digits>  <entry>\": " + JsonFields.shorten(line));
            }
            if (declared.put(line.substring(sep + 2), line.substring(0, sep)) != null) {
                throw new ModelFileException(SUMS, "names " + JsonFields.shorten(line.substring(sep + 2)) + " twice");
            }
        }
        return declared;
    }

    private static void checkSum(String name, byte[] data, Map<String, String> declared) throws ModelFileException {
        String want = declared.get(name);
        if (want == null) {
            throw new ModelFileException(SUMS, "no checksum for " + name);
        }
        String got = sha256(data);
        if (!got.equals(want)) {
            throw new ModelFileException(name, "SHA-256 is " + got + "; " + SUMS + " says " + want);
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
