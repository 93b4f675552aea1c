package org.backstep.io;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.FileTime;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.stream.Collectors;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Atomic writes name their temporary files after their target and remove the stale ones of the
 * same target, and only those (common practice, no source: the rules of {@link AtomicFiles}).
 */
class AtomicFilesTest {

    private static final Duration OLD = AtomicFiles.STALE_AGE.plusMinutes(5);

    @Test
    void theTemporaryFileIsNamedAfterItsTarget(@TempDir Path dir) throws IOException {
        Path target = dir.resolve("model.backstep");
        List<String> seen = new ArrayList<>();
        AtomicFiles.write(target, out -> {
            out.write(1);
            seen.addAll(names(dir));
        });
        assertEquals(1, seen.size(), "files while writing: " + seen);
        String tmp = seen.get(0);
        assertTrue(tmp.matches("\\.model\\.backstep\\.backstep-save\\.[0-9]+\\.tmp"), tmp);
        assertTrue(AtomicFiles.isTemporaryOf(target, dir.resolve(tmp)));
        assertEquals(Set.of("model.backstep"), names(dir), "after the write");
    }

    @Test
    void aWriteRemovesStaleTemporariesOfItsOwnTargetOnly(@TempDir Path dir) throws IOException {
        Path target = dir.resolve("m.backstep");
        Path other = dir.resolve("other.backstep");
        String own = AtomicFiles.temporaryPrefix(target);
        Path stale1 = file(dir, own + "123" + AtomicFiles.TEMPORARY_SUFFIX, OLD);
        Path stale2 = file(dir, own + "18446744073709551615" + AtomicFiles.TEMPORARY_SUFFIX, OLD);
        Path fresh = file(dir, own + "77" + AtomicFiles.TEMPORARY_SUFFIX, Duration.ofMinutes(5));
        Path othersStale = file(dir, AtomicFiles.temporaryPrefix(other) + "5" + AtomicFiles.TEMPORARY_SUFFIX, OLD);
        Path notOurs = file(dir, own + "abc" + AtomicFiles.TEMPORARY_SUFFIX, OLD);
        Path unrelated = file(dir, "m.backstep.tmp", OLD);
        AtomicFiles.write(target, "new".getBytes(StandardCharsets.UTF_8));
        assertFalse(Files.exists(stale1), "a stale temporary file of the target is removed");
        assertFalse(Files.exists(stale2), "a stale temporary file of the target is removed");
        assertTrue(Files.exists(fresh), "a younger one may belong to a write still running");
        assertTrue(Files.exists(othersStale), "another target's files are left alone");
        assertTrue(Files.exists(notOurs), "a name that is not of the pattern is left alone");
        assertTrue(Files.exists(unrelated));
        assertEquals("new", Files.readString(target));
    }

    @Test
    void aFailedWriteLeavesNoTemporaryFileAndTheOldTarget(@TempDir Path dir) throws IOException {
        Path target = dir.resolve("m.backstep");
        Files.writeString(target, "old");
        assertThrows(IOException.class, () -> AtomicFiles.write(target, out -> {
            out.write(2);
            throw new IOException("disk full (simulated)");
        }));
        assertEquals(Set.of("m.backstep"), names(dir));
        assertEquals("old", Files.readString(target));
    }

    @Test
    void aLongTargetNameIsCutInTheTemporaryName(@TempDir Path dir) throws IOException {
        Path target = dir.resolve("x".repeat(240));
        AtomicFiles.write(target, new byte[] {1, 2, 3});
        assertEquals(3, Files.size(target));
        String prefix = AtomicFiles.temporaryPrefix(target);
        assertEquals(1 + AtomicFiles.NAME_CHARS + AtomicFiles.TEMPORARY_MARK.length(), prefix.length());
        Path stale = file(dir, prefix + "9" + AtomicFiles.TEMPORARY_SUFFIX, OLD);
        assertEquals(1, AtomicFiles.removeStaleTemporaries(target, AtomicFiles.STALE_AGE));
        assertFalse(Files.exists(stale));
    }

    @Test
    void badArgumentsAreNamed() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> AtomicFiles.removeStaleTemporaries(Path.of("x"), Duration.ofSeconds(-1)));
        assertTrue(e.getMessage().startsWith("age is"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> AtomicFiles.write(null, new byte[0]));
        assertTrue(e.getMessage().startsWith("target is null"), e.getMessage());
    }

    private static Path file(Path dir, String name, Duration age) throws IOException {
        Path p = Files.writeString(dir.resolve(name), "left by a killed write");
        Files.setLastModifiedTime(p, FileTime.from(Instant.now().minus(age)));
        return p;
    }

    private static Set<String> names(Path dir) throws IOException {
        try (Stream<Path> s = Files.list(dir)) {
            return s.map(p -> p.getFileName().toString()).collect(Collectors.toCollection(TreeSet::new));
        }
    }
}
