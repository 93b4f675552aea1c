package org.backstep;

import org.backstep.internal.store.ModelFile;
import org.backstep.io.ModelFileException;

import org.backstep.option.StepInput;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.zip.ZipEntry;
import java.util.zip.ZipInputStream;
import java.util.zip.ZipOutputStream;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/** Model files: round trip, refusals of every kind of damage, atomic saving (common practice, no source). */
class ModelFileTest {

    static DiffusionModel model;
    static Table data;

    @BeforeAll
    static void fit() {
        SplittableRandom rng = new SplittableRandom(3);
        double[][] rows = new double[400][3];
        for (double[] r : rows) {
            r[0] = 20 + 3 * rng.nextGaussian();
            r[1] = r[0] * 0.5 + rng.nextGaussian();
            r[2] = rng.nextDouble() < 0.3 ? 1 : 0;
        }
        data = Table.of(List.of("supply", "return", "door"),
                List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
        model = Backstep.builder().steps(20).hidden(16, 16).timeEmbedding(8, StepInput.INPUT).epochs(3)
                .batchSize(64).seed(5).threads(2).fit(data);
    }

    @Test
    void roundTripGivesIdenticalNumbers(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        DiffusionModel back = DiffusionModel.load(f);
        assertArrayEquals(model.parts().network().parameters(), back.parts().network().parameters());
        assertArrayEquals(model.bound(data, 3).nats(), back.bound(data, 3).nats());
        assertArrayEquals(model.sample(50, 4).toArray(), back.sample(50, 4).toArray());
        assertEquals(model.options(), back.options());
        assertEquals(model.transform(), back.transform());
        assertEquals(model.provenance().history(), back.provenance().history());
        assertEquals(model.provenance().tableSha256(), back.provenance().tableSha256());
    }

    /**
     * A model whose continuous columns are mapped by their normal scores keeps its knots (the sorted
     * training values) in the file: the same transforms and the same bound after a round trip; knots
     * on a column of another transform are refused by name (common practice, no source).
     */
    @Test
    void normalScoreTransformsKeepTheirKnots(@TempDir Path dir) throws IOException {
        DiffusionModel scores = Backstep.builder().steps(10).hidden(8).epochs(2).batchSize(64).seed(5).threads(1)
                .fit(data, org.backstep.table.TableTransform.fitNormalScores(data, 1.0));
        assertEquals(org.backstep.table.ColumnTransform.Kind.NORMAL_SCORES, scores.transform().transform(0).kind());
        Path f = dir.resolve("scores.backstep");
        scores.save(f);
        DiffusionModel back = DiffusionModel.load(f);
        assertEquals(scores.transform(), back.transform());
        assertEquals(data.rows(), back.transform().transform(1).knots().length);
        assertArrayEquals(scores.bound(data, 3).nats(), back.bound(data, 3).nats());

        Map<String, byte[]> e = entries(f);
        String manifest = new String(e.get(ModelFile.MANIFEST), StandardCharsets.UTF_8);
        String door = "\"transform\" : \"IDENTITY\",";
        assertTrue(manifest.contains(door), manifest);
        e.put(ModelFile.MANIFEST, manifest.replace(door, door + " \"knots\" : [ 0.0, 1.0 ],").getBytes(StandardCharsets.UTF_8));
        e.put(ModelFile.SUMS, sums(e).getBytes(StandardCharsets.UTF_8));
        Path extra = dir.resolve("extra");
        write(extra, e);
        ModelFileException x = refused(extra);
        assertTrue(x.getMessage().contains("columns[2]") && x.getMessage().contains("knots has 2 values; expected none for"
                + " IDENTITY"), x.getMessage());
    }

    /** The entries of a zip file by name, in order. */
    static Map<String, byte[]> entries(Path f) throws IOException {
        Map<String, byte[]> m = new LinkedHashMap<>();
        try (ZipInputStream z = new ZipInputStream(Files.newInputStream(f))) {
            ZipEntry e;
            while ((e = z.getNextEntry()) != null) {
                m.put(e.getName(), z.readAllBytes());
            }
        }
        return m;
    }

    /** Writes entries into a zip file (tests that rewrite a model file's parts). */
    static void write(Path f, Map<String, byte[]> entries) throws IOException {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try (ZipOutputStream z = new ZipOutputStream(out)) {
            for (Map.Entry<String, byte[]> e : entries.entrySet()) {
                z.putNextEntry(new ZipEntry(e.getKey()));
                z.write(e.getValue());
                z.closeEntry();
            }
        }
        Files.write(f, out.toByteArray());
    }

    /** The sums entry a model file would carry for these entries. */
    static String sums(Map<String, byte[]> entries) {
        StringBuilder sb = new StringBuilder();
        for (String name : List.of(ModelFile.MANIFEST, ModelFile.WEIGHTS)) {
            sb.append(ModelFile.sha256(entries.get(name))).append("  ").append(name).append('\n');
        }
        return sb.toString();
    }

    private static ModelFileException refused(Path f) {
        return assertThrows(ModelFileException.class, () -> DiffusionModel.load(f));
    }

    @Test
    void truncatedFilesAreRefused(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        byte[] all = Files.readAllBytes(f);
        SplittableRandom rng = new SplittableRandom(9);
        for (int i = 0; i < 25; i++) {
            int cut = rng.nextInt(all.length);
            Path g = dir.resolve("cut" + i);
            Files.write(g, java.util.Arrays.copyOf(all, cut));
            refused(g);
        }
    }

    @Test
    void flippedBytesInEachEntryAreRefused(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        for (String name : List.of(ModelFile.MANIFEST, ModelFile.WEIGHTS)) {
            for (int k = 0; k < 5; k++) {
                Map<String, byte[]> e = entries(f);
                byte[] b = e.get(name).clone();
                int at = (int) ((k + 1) * (long) b.length / 7);
                b[at] ^= 0x20;
                e.put(name, b);
                Path g = dir.resolve("flip-" + name + k);
                write(g, e);
                ModelFileException x = refused(g);
                assertTrue(x.part().startsWith(name), "part " + x.part() + " for a flip in " + name);
            }
        }
    }

    @Test
    void foreignMissingVersionAndShapeProblemsAreRefused(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        Path foreign = dir.resolve("foreign");
        Files.writeString(foreign, "supply,return\n1,2\n");
        assertEquals("container", refused(foreign).part());

        Map<String, byte[]> e = entries(f);
        e.remove(ModelFile.WEIGHTS);
        Path missing = dir.resolve("missing");
        write(missing, e);
        assertEquals(ModelFile.WEIGHTS, refused(missing).part());

        e = entries(f);
        String manifest = new String(e.get(ModelFile.MANIFEST), StandardCharsets.UTF_8);
        e.put(ModelFile.MANIFEST, manifest.replaceFirst("\"formatVersion\" : [0-9]+", "\"formatVersion\" : 99").getBytes(StandardCharsets.UTF_8));
        e.put(ModelFile.SUMS, sums(e).getBytes(StandardCharsets.UTF_8));
        Path version = dir.resolve("version");
        write(version, e);
        ModelFileException v = refused(version);
        assertTrue(v.getMessage().contains("99"), v.getMessage());

        e = entries(f);
        manifest = new String(e.get(ModelFile.MANIFEST), StandardCharsets.UTF_8);
        int p = model.parts().network().parameters().length;
        e.put(ModelFile.MANIFEST, manifest.replace("\"parameters\" : " + p, "\"parameters\" : " + (p + 1))
                .getBytes(StandardCharsets.UTF_8));
        e.put(ModelFile.SUMS, sums(e).getBytes(StandardCharsets.UTF_8));
        Path shape = dir.resolve("shape");
        write(shape, e);
        assertEquals(ModelFile.WEIGHTS, refused(shape).part());

        e = entries(f);
        e.put(ModelFile.WEIGHTS, java.util.Arrays.copyOf(e.get(ModelFile.WEIGHTS), e.get(ModelFile.WEIGHTS).length - 4));
        e.put(ModelFile.SUMS, sums(e).getBytes(StandardCharsets.UTF_8));
        Path shortWeights = dir.resolve("short");
        write(shortWeights, e);
        assertEquals(ModelFile.WEIGHTS, refused(shortWeights).part());

        e = entries(f);
        manifest = new String(e.get(ModelFile.MANIFEST), StandardCharsets.UTF_8);
        e.put(ModelFile.MANIFEST, manifest.replace("\"steps\" : 20", "\"steps\" : 2000000").getBytes(StandardCharsets.UTF_8));
        e.put(ModelFile.SUMS, sums(e).getBytes(StandardCharsets.UTF_8));
        Path huge = dir.resolve("huge");
        write(huge, e);
        assertTrue(refused(huge).part().contains("steps"));
    }

    @Test
    void interruptedSaveLeavesTheOldFile(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        byte[] before = Files.readAllBytes(f);
        IOException x = assertThrows(IOException.class, () -> org.backstep.io.AtomicFiles.write(f, out -> {
            out.write(new byte[1000]);
            throw new IOException("disk full (simulated)");
        }));
        assertTrue(x.getMessage().contains("simulated"));
        assertArrayEquals(before, Files.readAllBytes(f));
        try (var list = Files.list(dir)) {
            assertEquals(1, list.count(), "no temporary file left behind");
        }
        DiffusionModel oracle = GaussianOracle.model(org.backstep.schedule.NoiseSchedule.linear(10), new double[] {0},
                new double[][] {{1}}, org.backstep.table.ColumnTransform.Kind.STANDARDIZE);
        assertThrows(IllegalArgumentException.class, () -> oracle.save(f));
        assertArrayEquals(before, Files.readAllBytes(f));
    }

    @Test
    void writtenFilesGetOrdinaryOrKeptPermissions(@TempDir Path dir) throws IOException {
        Path f = dir.resolve("m.backstep");
        model.save(f);
        // a new file is world-readable like one written by an ordinary program (common practice, no source)
        assertEquals("rw-r--r--", java.nio.file.attribute.PosixFilePermissions.toString(Files.getPosixFilePermissions(f)));
        Files.setPosixFilePermissions(f, java.nio.file.attribute.PosixFilePermissions.fromString("rw-rw----"));
        model.save(f);
        assertEquals("rw-rw----", java.nio.file.attribute.PosixFilePermissions.toString(Files.getPosixFilePermissions(f)));
    }
}
