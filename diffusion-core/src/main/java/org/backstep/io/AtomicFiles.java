package org.backstep.io;

import org.backstep.schedule.Require;

import java.io.IOException;
import java.io.BufferedOutputStream;
import java.io.OutputStream;
import java.nio.channels.Channels;
import java.nio.channels.FileChannel;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.nio.file.StandardOpenOption;

/**
 * Atomic file writes: the content goes to a temporary file in the target's folder, is forced to
 * the device, and the temporary file is then moved over the target (an atomic rename where the
 * file system allows). On any failure the temporary file is removed and an existing target is left
 * exactly as it was.
 */
public final class AtomicFiles {

    private static final org.slf4j.Logger LOG = org.slf4j.LoggerFactory.getLogger(AtomicFiles.class);

    private AtomicFiles() {
    }

    /** Writes a file's content to a stream; may fail part way, which leaves the target untouched. */
    @FunctionalInterface
    public interface Content {
        /**
         * @param out where to write; do not close it
         * @throws IOException on failure
         */
        void writeTo(OutputStream out) throws IOException;
    }

    /**
     * @param target the file to create or replace
     * @param content the bytes to write, not modified
     * @throws IOException if the folder is missing or the write or move fails
     */
    public static void write(Path target, byte[] content) throws IOException {
        Require.notNull("content", content);
        write(target, out -> out.write(content));
    }

    /**
     * @param target the file to create or replace
     * @param content what writes the bytes
     * @throws IOException if the folder is missing, the content fails, or the move fails
     */
    public static void write(Path target, Content content) throws IOException {
        Require.notNull("target", target);
        Require.notNull("content", content);
        Path abs = target.toAbsolutePath();
        Path dir = abs.getParent();
        if (dir == null || !Files.isDirectory(dir)) {
            throw new IOException("the folder of " + target + " does not exist");
        }
        if (Files.isDirectory(abs)) {
            throw new IOException(target + " is a folder; expected a file path");
        }
        Path tmp = Files.createTempFile(dir, "." + abs.getFileName() + ".", ".tmp");
        boolean moved = false;
        try {
            try (FileChannel ch = FileChannel.open(tmp, StandardOpenOption.WRITE, StandardOpenOption.TRUNCATE_EXISTING)) {
                OutputStream out = new BufferedOutputStream(Channels.newOutputStream(ch), 1 << 16);
                content.writeTo(out);
                out.flush();
                ch.force(true);
            }
            matchPermissions(tmp, abs);
            try {
                Files.move(tmp, abs, StandardCopyOption.ATOMIC_MOVE, StandardCopyOption.REPLACE_EXISTING);
            } catch (AtomicMoveNotSupportedException e) {
                Files.move(tmp, abs, StandardCopyOption.REPLACE_EXISTING);
            }
            moved = true;
        } finally {
            if (!moved) {
                Files.deleteIfExists(tmp);
            }
        }
        forceFolder(dir);
    }

    /**
     * A temporary file is created readable by its owner only; give it the permissions of the file
     * it replaces, or rw-r--r-- for a new file, where the file system has POSIX permissions.
     */
    private static void matchPermissions(Path tmp, Path target) throws IOException {
        if (!Files.getFileStore(tmp).supportsFileAttributeView(java.nio.file.attribute.PosixFileAttributeView.class)) {
            return;
        }
        java.util.Set<java.nio.file.attribute.PosixFilePermission> perms = Files.exists(target)
                ? Files.getPosixFilePermissions(target)
                : java.nio.file.attribute.PosixFilePermissions.fromString("rw-r--r--");
        Files.setPosixFilePermissions(tmp, perms);
    }

    /** Makes the rename durable where the platform allows forcing a folder (Linux does, Windows does not). */
    private static void forceFolder(Path folder) {
        try (FileChannel ch = FileChannel.open(folder, StandardOpenOption.READ)) {
            ch.force(true);
        } catch (IOException | UnsupportedOperationException e) {
            LOG.debug("could not force folder {} after an atomic move: {}", folder, e.toString());
        }
    }
}
