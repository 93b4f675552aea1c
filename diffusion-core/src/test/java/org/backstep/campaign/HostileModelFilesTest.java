package org.backstep.campaign;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.internal.store.ModelFile;
import org.backstep.io.ModelFileException;
import org.backstep.option.Limits;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.function.Consumer;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The hostile model files the hardening issue reproduced, each refused with a
 * {@link ModelFileException} naming the part (every edit with its SHA256SUMS recomputed, so that
 * only the loader's own checks stand between the file and the model). Common practice, no source.
 */
class HostileModelFilesTest {

    /**
     * A load refused before anything large is allocated allocates a few megabytes (the manifest, the
     * weights' entry read so far); a file that claims billions of weights must not make the loader
     * allocate them. Counted in bytes the test's thread allocated (HotSpot's per-thread counter), not
     * in wall time, so that a busy machine cannot fail it (measured: 6 KB to 2 MB per refusal, 159 MB for
     * the manifest of a million betas, which Jackson reads whole). Common practice, no source.
     */
    private static final long FEW_BYTES = 256L << 20;

    private static final ObjectMapper JSON = new ObjectMapper();
    private static Map<String, byte[]> golden;

    @TempDir
    Path dir;

    @BeforeAll
    static void read() throws IOException {
        golden = ModelFileFuzz.unzip(GoldenInputs.model());
    }

    private ModelFileException refusedEdit(Consumer<ObjectNode> edit) throws IOException {
        ObjectNode root = (ObjectNode) JSON.readTree(golden.get(ModelFile.MANIFEST));
        edit.accept(root);
        return refused(ModelFileFuzz.rebuild(JSON.writeValueAsBytes(root), golden.get(ModelFile.WEIGHTS)));
    }

    private ModelFileException refused(byte[] file) throws IOException {
        Path f = Files.write(dir.resolve("hostile.backstep"), file);
        long before = allocatedBytes();
        ModelFileException e = assertThrows(ModelFileException.class, () -> DiffusionModel.load(f));
        long bytes = allocatedBytes() - before;
        assertTrue(bytes < FEW_BYTES, "refusal allocated " + (bytes >> 20) + " MB: " + e.getMessage());
        return e;
    }

    /** Bytes allocated so far on this thread (HotSpot's com.sun.management extension of ThreadMXBean). */
    private static long allocatedBytes() {
        com.sun.management.ThreadMXBean threads =
                (com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory.getThreadMXBean();
        return threads.getCurrentThreadAllocatedBytes();
    }

    private static ObjectNode options(ObjectNode root) {
        return (ObjectNode) root.get("options");
    }

    private static ObjectNode column0(ObjectNode root) {
        return (ObjectNode) root.get("columns").get(0);
    }

    @Test
    void theGoldenFileRebuiltWithRecomputedSumsStillLoads() throws IOException {
        Path f = Files.write(dir.resolve("same.backstep"),
                ModelFileFuzz.rebuild(golden.get(ModelFile.MANIFEST), golden.get(ModelFile.WEIGHTS)));
        assertEquals(3, DiffusionModel.load(f).dimensions());
    }

    @Test
    void oversizedDeclarationsAreRefusedBeforeAllocating() throws IOException {
        assertEquals("model.json options.embeddingSize",
                refusedEdit(r -> options(r).put("embeddingSize", 2147483646)).part());
        // 7 KB of weights and a manifest declaring hidden [20000, 20000]: refused by the limit on
        // widths, and the shape is compared with the weights' size before any network exists
        assertEquals("model.json options.hidden[0]",
                refusedEdit(r -> options(r).set("hidden", JsonNodeFactory.instance.arrayNode().add(20000).add(20000))).part());
        ModelFileException wide = refusedEdit(r -> options(r).set("hidden",
                JsonNodeFactory.instance.arrayNode().add(16384).add(16384)));
        assertTrue(wide.getMessage().contains("Limits.MAX_PARAMETERS") || wide.part().equals(ModelFile.WEIGHTS),
                wide.getMessage());
        ModelFileException steps = refusedEdit(r -> ((ObjectNode) options(r).get("continuousSchedule")).put("steps", 4294967316L));
        assertEquals("model.json options.continuousSchedule.steps", steps.part());
        assertTrue(steps.getMessage().contains("4294967316 is outside 1 to 1000000"), steps.getMessage());
        assertEquals("model.json options.threads", refusedEdit(r -> options(r).put("threads", 1_000_000)).part());
    }

    @Test
    void aScheduleOneStepPastTheLimitIsRefusedAsTheBuilderRefusesIt() throws IOException {
        // the builder and the loader share Limits.MAX_STEPS
        assertEquals(Limits.MAX_STEPS, Backstep.builder().steps(Limits.MAX_STEPS).hidden(4).timeEmbedding(2,
                org.backstep.option.StepInput.INPUT).options().steps());
        IllegalArgumentException b = assertThrows(IllegalArgumentException.class,
                () -> Backstep.builder().steps(Limits.MAX_STEPS + 1).options());
        assertEquals("steps is 1000001; expected a whole number from 1 to 1000000", b.getMessage());
        ModelFileException e = refusedEdit(r -> {
            ObjectNode s = (ObjectNode) options(r).get("continuousSchedule");
            ArrayNode betas = s.putArray("betas");
            for (int i = 0; i <= Limits.MAX_STEPS; i++) {
                betas.add(1e-3);
            }
            s.put("steps", Limits.MAX_STEPS + 1);
        });
        assertEquals("model.json options.continuousSchedule.steps", e.part());
    }

    @Test
    void wrongTypesAreRefusedNotCoerced() throws IOException {
        assertEquals("model.json columns[0].shift", refusedEdit(r -> column0(r).put("shift", "CONSTANT")).part());
        assertEquals("model.json columns[0].shift",
                refusedEdit(r -> column0(r).set("shift", JsonNodeFactory.instance.arrayNode().add(1).add(2))).part());
        assertEquals("model.json columns[0].shift", refusedEdit(r -> column0(r).set("shift", JsonNodeFactory.instance.arrayNode())).part());
        assertEquals("model.json options.batchSize", refusedEdit(r -> options(r).put("batchSize", "64")).part());
        assertEquals("model.json options.batchSize", refusedEdit(r -> options(r).put("batchSize", 64.5)).part());
        assertEquals("model.json options.learningRate", refusedEdit(r -> options(r).put("learningRate", "NaN")).part());
        assertEquals("model.json options.variance", refusedEdit(r -> options(r).put("variance", "WIDE")).part());
        assertEquals("model.json provenance.trainingRows",
                refusedEdit(r -> ((ObjectNode) r.get("provenance")).put("trainingRows", "270")).part());
    }

    @Test
    void valuesThatWouldScoreNaNAreRefused() throws IOException {
        ModelFileException scale = refusedEdit(r -> column0(r).put("scale", 1e-300));
        assertEquals("model.json columns[0].scale", scale.part());
        assertTrue(scale.getMessage().contains("1.0E-300 is outside [1.0E-30, 1.0E30]"), scale.getMessage());
        ModelFileException beta = refusedEdit(r -> ((ArrayNode) options(r).get("continuousSchedule").get("betas")).set(0,
                JsonNodeFactory.instance.numberNode(1e-320)));
        assertEquals("model.json options.continuousSchedule.betas[0]", beta.part());
        assertEquals("model.json columns[0].shift", refusedEdit(r -> column0(r).put("shift", 1e300)).part());
    }

    @Test
    void optionsTheBuilderRefusesAreRefusedOnLoad() throws IOException {
        assertEquals("model.json options.threads", refusedEdit(r -> options(r).put("threads", 0)).part());
        assertEquals("model.json options.batchSize", refusedEdit(r -> options(r).put("batchSize", 0)).part());
        ModelFileException pair = refusedEdit(r -> options(r).put("loss", "SIMPLE"));
        assertEquals("model.json options", pair.part());
        assertTrue(pair.getMessage().contains("loss is SIMPLE but variance is LEARNED"), pair.getMessage());
        ModelFileException rate = refusedEdit(r -> options(r).put("learningRate", -0.5));
        assertTrue(rate.getMessage().contains("learningRate is -0.5; expected a finite number above 0"), rate.getMessage());
        ModelFileException moment = refusedEdit(r -> options(r).put("emaDecay", 1.0));
        assertTrue(moment.getMessage().contains("emaDecay is 1.0; expected a number in [0, 1)"), moment.getMessage());
    }

    @Test
    void entriesTheFormatDoesNotNameAreRefusedUnread() throws IOException {
        List<ZipBytes.Entry> entries = new ArrayList<>();
        golden.forEach((k, v) -> entries.add(ZipBytes.Entry.deflated(k, v)));
        // a gigabyte of zeros, about a megabyte packed: refused by its name, never inflated
        entries.add(ZipBytes.zeros("padding.bin", 1L << 30));
        ModelFileException e = refused(ZipBytes.write(entries));
        assertEquals("padding.bin", e.part());
        assertTrue(e.getMessage().contains("not part of the format"), e.getMessage());
        // a gigabyte of zeros as the manifest: read through a bounded stream and refused at its limit
        entries.remove(entries.size() - 1);
        entries.set(0, ZipBytes.zeros(ModelFile.MANIFEST, 1L << 30));
        assertEquals(ModelFile.MANIFEST, refused(ZipBytes.write(entries)).part());
        // the same entry twice
        List<ZipBytes.Entry> twice = new ArrayList<>();
        golden.forEach((k, v) -> twice.add(ZipBytes.Entry.stored(k, v)));
        twice.add(ZipBytes.Entry.stored(ModelFile.WEIGHTS, golden.get(ModelFile.WEIGHTS)));
        ModelFileException dup = refused(ZipBytes.write(twice));
        assertTrue(dup.getMessage().contains("appears twice"), dup.getMessage());
    }
}
