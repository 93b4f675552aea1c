package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The atomic replacement of {@link CsvWriter#write(Table, Path)}: on success the new content is
 * in place; on any failure the old file is byte for byte as before and no temporary file is left.
 * (Common practice, no source: write-to-temporary, force, rename.)
 */
class CsvAtomicWriteTest {

    private static final byte[] OLD = "old,content\n1,2\n".getBytes(java.nio.charset.StandardCharsets.UTF_8);

    private static List<String> listNames(Path dir) throws IOException {
        List<String> names = new ArrayList<>();
        try (var s = Files.list(dir)) {
            s.forEach(p -> names.add(p.getFileName().toString()));
        }
        names.sort(null);
        return names;
    }

    @Test
    void writesOverAnExistingFile(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("telemetry.csv");
        Files.write(file, OLD);
        Table iris = OpenData.read("iris.csv");
        CsvTables.writer().write(iris, file);
        // common practice, no source: the new content replaces the old, nothing else is left
        assertEquals(iris, CsvTables.reader().read(file));
        assertEquals(List.of("telemetry.csv"), listNames(dir));
    }

    @Test
    void createsANewFile(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("new.csv");
        Table t = Table.of(new double[][] {{1.5, 1}}, ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        CsvTables.writer().write(t, file);
        // common practice, no source
        assertEquals("c0,c1\n1.5,1\n", Files.readString(file));
        assertEquals(List.of("new.csv"), listNames(dir));
    }

    @Test
    void failureMidWayLeavesOldFileAndNoTemp(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("telemetry.csv");
        Files.write(file, OLD);
        IOException boom = new IOException("disk unplugged");
        IOException thrown = assertThrows(IOException.class, () -> CsvWriter.writeAtomically(file, out -> {
            for (int i = 0; i < 100_000; i++) {
                out.write("1.0,2.0\n"); // well past any buffer, so part of it reached the temporary file
            }
            throw boom;
        }));
        // common practice, no source: the failure surfaces, the old bytes stay, the temporary file goes
        assertSame(boom, thrown);
        assertArrayEquals(OLD, Files.readAllBytes(file));
        assertEquals(List.of("telemetry.csv"), listNames(dir));
    }

    @Test
    void runtimeFailureMidWayLeavesOldFileAndNoTemp(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("telemetry.csv");
        Files.write(file, OLD);
        assertThrows(IllegalStateException.class, () -> CsvWriter.writeAtomically(file, out -> {
            out.write("half a row,");
            out.flush();
            throw new IllegalStateException("writer broke");
        }));
        // common practice, no source
        assertArrayEquals(OLD, Files.readAllBytes(file));
        assertEquals(List.of("telemetry.csv"), listNames(dir));
    }

    @Test
    void targetThatIsAFolderIsRefused(@TempDir Path dir) throws Exception {
        Path folder = Files.createDirectory(dir.resolve("data.csv"));
        Path inside = Files.write(folder.resolve("keep.txt"), OLD);
        Table t = Table.of(new double[][] {{1}}, ColumnKind.CONTINUOUS);
        IOException e = assertThrows(IOException.class, () -> CsvTables.writer().write(t, folder));
        // common practice, no source: a folder is not replaced, and nothing is left behind
        assertTrue(e.getMessage().contains("is a folder"), e.getMessage());
        assertTrue(Files.isDirectory(folder));
        assertArrayEquals(OLD, Files.readAllBytes(inside));
        assertEquals(List.of("data.csv"), listNames(dir));
        assertEquals(List.of("keep.txt"), listNames(folder));
    }

    @Test
    void missingFolderIsRefused(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("no-such-folder").resolve("t.csv");
        Table t = Table.of(new double[][] {{1}}, ColumnKind.CONTINUOUS);
        // common practice, no source: the failure surfaces and nothing is created
        assertThrows(IOException.class, () -> CsvTables.writer().write(t, file));
        assertFalse(Files.exists(file.getParent()));
        assertEquals(List.of(), listNames(dir));
    }
}
