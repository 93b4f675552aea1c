package org.backstep;

import org.backstep.internal.store.ModelFile;
import org.backstep.internal.chain.Estimator;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.option.Baseline;
import org.backstep.option.Coordinates;
import org.backstep.option.ReverseVariance;
import org.backstep.internal.chain.ModelRange;
import org.backstep.option.FitOptions;
import org.backstep.report.BoundReport;
import org.backstep.training.Provenance;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.internal.net.DoubleReference;
import org.backstep.internal.net.NetworkShape;
import org.backstep.option.StepInput;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.junit.jupiter.params.provider.ValueSource;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.condition.EnabledIfSystemProperty;
import org.nd4j.linalg.api.ndarray.INDArray;

import java.io.IOException;
import java.io.InputStream;
import java.net.URL;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.zip.ZipEntry;
import java.util.zip.ZipInputStream;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * A model saved in each model-file format version, 1 to 4 (test resources golden/, see the
 * README.md there), must still load and give the same numbers: the exact bounds of fixed records
 * for a fixed seed, and samples for a fixed seed. {@link #regenerateGoldenFiles()} made the files;
 * it runs only with {@code -Dbackstep.regenerateGolden=true}.
 */
class GoldenModelTest {

    /**
     * Relative tolerance (of max(|value|, 1)) of a number recomputed from the golden model. Not bit
     * equality: the network runs in float32 through ND4J's matrix products, whose BLAS kernels are
     * chosen at run time for the processor (vector width, blocking), so another machine may add the
     * products in another order and round differently. The network's sums partly cancel, so that
     * rounding is not negligible: measured on this model, a double-precision evaluation of the same
     * weights moves the bounds by up to 8e-7 (relative) and the samples by 1e-7, so the 1e-6 first
     * planned would leave no margin between two float32 machines. 1e-5 leaves a factor of ten; a
     * changed formula, schedule or weight layout moves these numbers by far more.
     */
    private static final double GOLDEN_REL_TOL = 1e-5;
    /**
     * The double-precision evaluation must lie within half the tolerance: if every float32 machine
     * is that close to it, any two machines agree within {@link #GOLDEN_REL_TOL} (triangle inequality).
     */
    private static final double REFERENCE_SHARE = 0.5;

    static final String FOLDER = "golden";
    /** The golden files of format version v: the model, the figures expected of it, its training table. */
    static String model(String golden) {
        return golden + ".backstep";
    }

    static String expected(String golden) {
        return golden + "-expected.json";
    }

    static String training(String golden) {
        return golden + "-training.csv";
    }

    /** The format version of a golden file's stem: "model-v4-baseline" is version 4. */
    static int versionOf(String golden) {
        String rest = golden.substring("model-v".length());
        int end = rest.indexOf('-');
        return Integer.parseInt(end < 0 ? rest : rest.substring(0, end));
    }

    // The golden files: one per format version, and two for version 4, which holds two sets of new
    // entries (integer/categorical columns, the closed-form part): model-v4 has no baseline,
    // model-v4-baseline was fitted with Baseline.FITTED_GAUSSIAN.
    /** Seeds of the golden figures. */
    static final long FIT_SEED = 20260;
    static final long BOUND_SEED = 11;
    static final long SAMPLE_SEED = 12;
    static final int SAMPLE_COUNT = 6;
    static final int STEPS = 20;
    static final int EPOCHS = 300;

    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);

    @ParameterizedTest(name = "{0}")
    @ValueSource(strings = {"model-v1", "model-v2", "model-v3", "model-v4", "model-v4-baseline", "model-v5-whitened",
        "model-v6-mixture"})
    void goldenModelStillLoadsAndGivesTheSameNumbers(String golden) throws Exception {
        int version = versionOf(golden);
        String MODEL = model(golden);
        String TRAINING = training(golden);
        JsonNode expected = JSON.readTree(resource(expected(golden)));
        Path file = Path.of(resource(MODEL).toURI());

        // the container: the three entries of every format version (ModelFile's Javadoc)
        assertEquals(new TreeSet<>(List.of(ModelFile.MANIFEST, ModelFile.WEIGHTS, ModelFile.SUMS)), zipEntries(file),
                "entries of the golden file");
        // the pins below are the project's own format versions (ModelFile's Javadoc); common practice, no source
        assertEquals(4, ModelFile.VERSION, "this test pins format versions 1 to 4; add a golden file for a new version");
        assertEquals(5, ModelFile.WHITENED_VERSION, "this test pins version 5 (a whitened model)");
        assertEquals(6, ModelFile.NEWEST_VERSION, "this test pins version 6 (a mixture model); add a golden file for a new version");
        assertTrue(ModelFile.OLDEST_VERSION <= version, "version " + version + " must still load");
        assertEquals(version, expected.path("formatVersion").asInt());

        DiffusionModel model = DiffusionModel.load(file);
        // the golden files of versions 1 to 4 were written before the provenance recorded its gap counts:
        // read as not recorded
        assertEquals(version < 5 ? -1 : 0, model.provenance().rowsWithGaps(), "rowsWithGaps of the file");
        // version 5: the whitened model (coordinates WHITENED with the N(0, I) part); older files are standardized
        assertEquals(version >= 5 ? Coordinates.WHITENED : Coordinates.STANDARDIZED, model.options().coordinates());
        assertEquals(version >= 5, model.parts().whitening() != null, "the whitening of the file");

        // options as the generator set them (common practice, no source: the file states how it was made)
        FitOptions o = model.options();
        assertEquals(STEPS, o.steps());
        assertArrayEquals(goldenSchedule().betas(), o.continuousSchedule().betas(), "continuous betas");
        assertArrayEquals(new int[] {16, 16}, o.hidden());
        assertEquals(EPOCHS, o.epochs());
        assertEquals(FIT_SEED, o.seed());
        assertEquals(expected.path("options").path("variance").asText(), o.variance().name());
        assertEquals(expected.path("options").path("loss").asText(), o.loss().name());
        // version 4 added the closed-form part (model-v4-baseline uses the fitted Gaussian, model-v4 none);
        // older files have none
        JsonNode eo = expected.path("options");
        assertEquals(version >= 4 && eo.has("baseline") ? eo.path("baseline").asText() : "NONE", o.baseline().name());
        assertEquals(golden.endsWith("-baseline") || golden.endsWith("-whitened") || golden.endsWith("-mixture"),
                o.baseline() != Baseline.NONE, "the baseline, whitened and mixture golden files have one");
        // version 6: the mixture part (coordinates WHITENED, FITTED_MIXTURE)
        assertEquals(version >= 6, o.baseline() == Baseline.FITTED_MIXTURE, "the mixture part of the file");
        assertEquals(List.of("supply_c", "return_c", "door_open"), model.transform().names());
        assertEquals(List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), model.transform().kinds());

        // provenance, field by field, as the generator recorded it
        Provenance p = model.provenance();
        JsonNode ep = expected.path("provenance");
        assertEquals(ep.path("libraryVersion").asText(), p.libraryVersion());
        assertTrue(p.libraryVersion().startsWith("0.1.0"), "library version " + p.libraryVersion());
        assertEquals(ep.path("javaVersion").asText(), p.javaVersion());
        assertEquals(ep.path("os").asText(), p.os());
        assertEquals(ep.path("arch").asText(), p.arch());
        assertEquals(ep.path("fittedAt").asText(), p.fittedAt());
        Instant.parse(p.fittedAt()); // ISO-8601 instant (java.time), throws if not
        assertEquals(ep.path("trainingSeconds").asDouble(), p.trainingSeconds());
        assertEquals(ep.path("tableRows").asInt(), p.tableRows());
        assertEquals(ep.path("trainingRows").asInt(), p.trainingRows());
        assertEquals(ep.path(version == 1 ? "validationRows" : "checkpointRows").asInt(), p.checkpointRows());
        assertEquals(ep.path("tableSha256").asText(), p.tableSha256());
        assertEquals(EPOCHS, p.history().size());
        assertEquals(ep.path("historyLosses").size(), p.history().size());
        for (int e = 0; e < EPOCHS; e++) {
            assertEquals(e + 1, p.history().get(e).epoch());
            assertEquals(ep.path("historyLosses").get(e).asDouble(), p.history().get(e).loss(), "loss of epoch " + (e + 1));
        }
        List<String> notes = new ArrayList<>();
        ep.path("notes").forEach(n -> notes.add(n.asText()));
        assertEquals(notes, p.notes());
        // the training table beside the model is the one the provenance fingerprints (SHA-256, NIST FIPS 180-4)
        Table training = CsvTables.reader().binary("door_open").read(Path.of(resource(TRAINING).toURI()));
        assertEquals(p.tableSha256(), training.sha256(), "SHA-256 of " + TRAINING);
        assertEquals(p.tableRows(), training.rows());

        // the numbers: exact bounds of the fixed records, and samples, within GOLDEN_REL_TOL
        Table records = recordsOf(expected.path("records"), model);
        BoundReport bound = model.bound(records, expected.path("boundSeed").asLong());
        assertClose(doubles(expected.path("boundNats")), bound.nats(), "bound, nats, model space");
        assertClose(doubles(expected.path("boundNatsOriginalUnits")), bound.natsOriginalUnits(), "bound, nats, original units");
        assertClose(doubles(expected.path("perStepMean")), bound.perStepMean(), "per-step mean bound terms");

        // the range sampled rows are checked against: measured on the training rows from version 3
        // on, Samuelson's bound +-sqrt(n - 1) of the n training rows before (Samuelson 1968)
        ModelRange range = model.parts().range();
        if (version >= 3) {
            assertEquals(ModelRange.TRAINING_ROWS, range.basis());
            assertArrayEquals(doubles(expected.path("trainingRange").path("min")), range.min(), "training range, min");
            assertArrayEquals(doubles(expected.path("trainingRange").path("max")), range.max(), "training range, max");
        } else {
            assertEquals(-Math.sqrt(p.trainingRows() - 1.0), range.min()[0], "Samuelson bound");
            assertEquals(Math.sqrt(p.trainingRows() - 1.0), range.max()[1], "Samuelson bound");
        }

        Table samples = model.sample(expected.path("sampleCount").asInt(), expected.path("sampleSeed").asLong());
        JsonNode es = expected.path("samples");
        assertEquals(es.size(), samples.rows());
        for (int r = 0; r < samples.rows(); r++) {
            assertClose(doubles(es.get(r)), samples.row(r), "sample row " + r);
        }
    }

    @ParameterizedTest(name = "{0}")
    @ValueSource(strings = {"model-v1", "model-v2", "model-v3", "model-v4", "model-v4-baseline"})
    void goldenFiguresHoldForADoublePrecisionNetwork(String golden) throws Exception {
        String EXPECTED = expected(golden);
        String MODEL = model(golden);
        // The same weights evaluated by DoubleReference (plain double loops written from the
        // network's documented formula) instead of ND4J's float32 kernels: what is left is float32
        // rounding, which is what differs between machines. It must fit well inside the tolerance.
        JsonNode expected = JSON.readTree(resource(EXPECTED));
        DiffusionModel model = DiffusionModel.load(Path.of(resource(MODEL).toURI()));
        DiffusionModel reference = DiffusionModel.withEstimator(model.options(), model.transform(),
                withBaseline(doublePrecision(model.parts().network().shape(), model.parts().network().parameters()),
                        model.parts().closedForm(), model.options().variance() == ReverseVariance.LEARNED));
        double tol = REFERENCE_SHARE * GOLDEN_REL_TOL;
        Table records = recordsOf(expected.path("records"), model);
        assertClose(doubles(expected.path("boundNats")), reference.bound(records, expected.path("boundSeed").asLong()).nats(),
                tol, "bound of the double-precision network");
        Table samples = reference.sample(expected.path("sampleCount").asInt(), expected.path("sampleSeed").asLong());
        for (int r = 0; r < samples.rows(); r++) {
            assertClose(doubles(expected.path("samples").get(r)), samples.row(r), tol, "double-precision sample row " + r);
        }
    }

    /** The network of {@code shape} with {@code weights}, evaluated in double and rounded once to float32. */
    private static Estimator doublePrecision(NetworkShape shape, float[] weights) {
        double[] p = new double[weights.length];
        for (int i = 0; i < p.length; i++) {
            p[i] = weights[i];
        }
        return new Estimator() {
            @Override
            public int inputs() {
                return shape.inputs();
            }

            @Override
            public int outputs() {
                return shape.outputs();
            }

            @Override
            public void predict(INDArray xt, int[] steps, INDArray out) {
                double[][] y = DoubleReference.forward(shape, p, xt.toDoubleMatrix(), steps);
                for (int r = 0; r < y.length; r++) {
                    for (int c = 0; c < y[r].length; c++) {
                        out.putScalar(r, c, (float) y[r][c]);
                    }
                }
            }
        };
    }

    /**
     * Writes the golden files into src/test/resources/golden of this module. Run only on purpose,
     * when a new format version is released (keep the old files and add new ones):
     * {@code mvn -B -o -pl diffusion-schedules,diffusion-core test -Dtest=GoldenModelTest#regenerateGoldenFiles
     * -Dbackstep.regenerateGolden=true}.
     */
    @Test
    @EnabledIfSystemProperty(named = "backstep.regenerateGolden", matches = "true")
    void regenerateGoldenFiles() throws Exception {
        Path folder = Path.of(System.getProperty("basedir", System.getProperty("user.dir")))
                .resolve("src/test/resources").resolve(FOLDER);
        Files.createDirectories(folder);
        // the current version's two golden models: without and with the closed-form part
        regenerate(folder, "model-v" + ModelFile.VERSION, Baseline.NONE);
        regenerate(folder, "model-v" + ModelFile.VERSION + "-baseline", Baseline.FITTED_GAUSSIAN);
        // version 5: a whitened model
        regenerate(folder, "model-v" + ModelFile.WHITENED_VERSION + "-whitened", Baseline.STANDARD_NORMAL,
                Coordinates.WHITENED);
    }

    /**
     * Writes the golden files of the version-5 whitened model only (the older ones stay as released):
     * {@code mvn -B -o -pl diffusion-schedules,diffusion-core test -Dtest=GoldenModelTest#regenerateWhitenedGoldenFile
     * -Dbackstep.regenerateGolden=whitened}.
     */
    @Test
    @EnabledIfSystemProperty(named = "backstep.regenerateGolden", matches = "whitened")
    void regenerateWhitenedGoldenFile() throws Exception {
        Path folder = Path.of(System.getProperty("basedir", System.getProperty("user.dir")))
                .resolve("src/test/resources").resolve(FOLDER);
        regenerate(folder, "model-v" + ModelFile.WHITENED_VERSION + "-whitened", Baseline.STANDARD_NORMAL,
                Coordinates.WHITENED);
    }

    /**
     * Writes the golden files of the version-6 mixture model only (the older ones stay as released):
     * {@code mvn -B -o -pl diffusion-schedules,diffusion-core test -Dtest=GoldenModelTest#regenerateMixtureGoldenFile
     * -Dbackstep.regenerateGolden=mixture}.
     */
    @Test
    @EnabledIfSystemProperty(named = "backstep.regenerateGolden", matches = "mixture")
    void regenerateMixtureGoldenFile() throws Exception {
        Path folder = Path.of(System.getProperty("basedir", System.getProperty("user.dir")))
                .resolve("src/test/resources").resolve(FOLDER);
        regenerate(folder, "model-v" + ModelFile.MIXTURE_VERSION + "-mixture", Baseline.FITTED_MIXTURE,
                Coordinates.WHITENED);
    }

    private static void regenerate(Path folder, String golden, Baseline baseline) throws Exception {
        regenerate(folder, golden, baseline, Coordinates.STANDARDIZED);
    }

    private static void regenerate(Path folder, String golden, Baseline baseline, Coordinates coordinates)
            throws Exception {
        String TRAINING = training(golden);
        String MODEL = model(golden);
        String EXPECTED = expected(golden);

        Table training = sensorTable(300, 5);
        CsvTables.writer().write(training, folder.resolve(TRAINING));
        Table back = CsvTables.reader().binary("door_open").read(folder.resolve(TRAINING));
        assertEquals(training, back, "CSV round trip of the training table");

        DiffusionModel fitted = Backstep.builder().continuousSchedule(goldenSchedule()).hidden(16, 16)
                .timeEmbedding(8, StepInput.EVERY_BLOCK).epochs(EPOCHS).batchSize(64).learningRate(3e-3)
                .checkpointFraction(0.1).seed(FIT_SEED).threads(2).baseline(baseline).coordinates(coordinates).fit(back);
        Path modelFile = folder.resolve(MODEL);
        fitted.save(modelFile);
        DiffusionModel model = DiffusionModel.load(modelFile);

        Table records = sensorTable(8, 77);
        BoundReport bound = model.bound(records, BOUND_SEED);
        Table samples = model.sample(SAMPLE_COUNT, SAMPLE_SEED);

        ObjectNode root = JSON.createObjectNode();
        root.put("about", "Figures of " + MODEL + " computed right after it was saved and loaded, by "
                + "GoldenModelTest#regenerateGoldenFiles; see README.md in this folder.");
        root.put("formatVersion", versionOf(golden));
        ObjectNode opts = root.putObject("options");
        opts.put("variance", model.options().variance().name());
        opts.put("loss", model.options().loss().name());
        if (baseline != Baseline.NONE) {
            opts.put("baseline", model.options().baseline().name());
        }
        ObjectNode rec = root.putObject("records");
        ArrayNode names = rec.putArray("names");
        records.names().forEach(names::add);
        ArrayNode rows = rec.putArray("rows");
        for (int r = 0; r < records.rows(); r++) {
            ArrayNode row = rows.addArray();
            for (double v : records.row(r)) {
                row.add(v);
            }
        }
        root.put("boundSeed", BOUND_SEED);
        putArray(root, "boundNats", bound.nats());
        putArray(root, "boundNatsOriginalUnits", bound.natsOriginalUnits());
        putArray(root, "perStepMean", bound.perStepMean());
        ObjectNode trainingRange = root.putObject("trainingRange");
        putArray(trainingRange, "min", model.parts().range().min());
        putArray(trainingRange, "max", model.parts().range().max());
        root.put("sampleSeed", SAMPLE_SEED);
        root.put("sampleCount", SAMPLE_COUNT);
        ArrayNode s = root.putArray("samples");
        for (int r = 0; r < samples.rows(); r++) {
            ArrayNode row = s.addArray();
            for (double v : samples.row(r)) {
                row.add(v);
            }
        }
        Provenance p = model.provenance();
        ObjectNode prov = root.putObject("provenance");
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
        ArrayNode losses = prov.putArray("historyLosses");
        p.history().forEach(e -> losses.add(e.loss()));
        ArrayNode notes = prov.putArray("notes");
        p.notes().forEach(notes::add);
        Files.write(folder.resolve(EXPECTED), JSON.writeValueAsBytes(root));
    }

    /** The estimator plus the model's closed-form part, as the model's own NetworkEstimator adds it. */
    static Estimator withBaseline(Estimator inner, org.backstep.internal.chain.ClosedFormPart baseline, boolean learned) {
        if (baseline == null) {
            return inner;
        }
        return new Estimator() {
            @Override
            public int inputs() {
                return inner.inputs();
            }

            @Override
            public int outputs() {
                return inner.outputs();
            }

            @Override
            public GaussianBaseline baseline() {
                return baseline.linear();
            }

            @Override
            public org.backstep.internal.chain.ClosedFormPart closedForm() {
                return baseline;
            }

            @Override
            public void predict(INDArray xt, int[] steps, INDArray out) {
                inner.predict(xt, steps, out);
                int rows = (int) xt.rows();
                float[] x = xt.dup('c').data().asFloat();
                float[] o = out.dup('c').data().asFloat();
                baseline.addInPlace(x, inputs(), steps, o, outputs(), rows, learned);
                out.assign(org.nd4j.linalg.factory.Nd4j.create(o, new long[] {rows, outputs()}, 'c'));
            }
        };
    }

    /**
     * Linear betas from 1e-3 to 0.5 over T = 20 steps. The default linear schedule at T = 20 ends
     * at beta = 0.999 (the 1000/T rescaling hits the cap), where 1/sqrt(alpha_T) = 31.6 magnifies
     * every error of a small network: its sampling chain diverged; this one ends at 1/sqrt(0.5).
     */
    static NoiseSchedule goldenSchedule() {
        return NoiseSchedule.linear(STEPS, 1e-3, 0.5);
    }

    /** Invented readings of a refrigerated container: supply air, return air (correlated), door open (0/1), to 2 decimals. */
    static Table sensorTable(int n, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] rows = new double[n][3];
        for (double[] r : rows) {
            double supply = 4.0 + 1.5 * rng.nextGaussian();
            r[2] = rng.nextDouble() < 0.2 ? 1 : 0;
            double ret = supply + 0.8 + 0.4 * rng.nextGaussian() + 1.5 * r[2];
            r[0] = Math.round(supply * 100) / 100.0;
            r[1] = Math.round(ret * 100) / 100.0;
        }
        return Table.of(List.of("supply_c", "return_c", "door_open"),
                List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
    }

    private static Table recordsOf(JsonNode node, DiffusionModel model) {
        List<String> names = new ArrayList<>();
        node.path("names").forEach(n -> names.add(n.asText()));
        assertEquals(model.transform().names(), names);
        double[][] rows = new double[node.path("rows").size()][];
        for (int r = 0; r < rows.length; r++) {
            rows[r] = doubles(node.path("rows").get(r));
        }
        assertTrue(rows.length > 0, "no golden records");
        return Table.of(names, model.transform().kinds(), rows);
    }

    private static void assertClose(double[] expected, double[] actual, String what) {
        assertClose(expected, actual, GOLDEN_REL_TOL, what);
    }

    private static void assertClose(double[] expected, double[] actual, double relTol, String what) {
        assertEquals(expected.length, actual.length, what + ": length");
        assertTrue(expected.length > 0, what + ": nothing to compare");
        for (int i = 0; i < expected.length; i++) {
            assertTrue(Double.isFinite(expected[i]), what + " [" + i + "] of the golden file is " + expected[i]);
            assertEquals(expected[i], actual[i], relTol * Math.max(1.0, Math.abs(expected[i])), what + " [" + i + "]");
        }
    }

    private static double[] doubles(JsonNode arr) {
        assertNotNull(arr);
        double[] v = new double[arr.size()];
        for (int i = 0; i < v.length; i++) {
            v[i] = arr.get(i).asDouble();
        }
        return v;
    }

    private static void putArray(ObjectNode root, String name, double[] values) {
        ArrayNode a = root.putArray(name);
        for (double v : values) {
            a.add(v);
        }
    }

    private static URL resource(String name) {
        URL url = GoldenModelTest.class.getResource("/" + FOLDER + "/" + name);
        assertNotNull(url, "test resource " + FOLDER + "/" + name + " is missing; see " + FOLDER
                + "/README.md for how it was made");
        return url;
    }

    private static TreeSet<String> zipEntries(Path file) throws IOException {
        TreeMap<String, Long> names = new TreeMap<>();
        try (InputStream in = Files.newInputStream(file); ZipInputStream zip = new ZipInputStream(in, StandardCharsets.UTF_8)) {
            for (ZipEntry e = zip.getNextEntry(); e != null; e = zip.getNextEntry()) {
                names.put(e.getName(), zip.transferTo(java.io.OutputStream.nullOutputStream()));
            }
        }
        names.values().forEach(size -> assertTrue(size > 0, "an entry of " + file + " is empty"));
        return new TreeSet<>(names.keySet());
    }
}
