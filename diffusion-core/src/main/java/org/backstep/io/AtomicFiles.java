package org.backstep.io;

import org.backstep.schedule.Require;

import java.io.IOException;
import java.io.BufferedOutputStream;
import java.io.OutputStream;
import java.nio.channels.Channels;
import java.nio.file.DirectoryStream;
import java.nio.file.LinkOption;
import java.nio.file.attribute.BasicFileAttributes;
import java.nio.file.attribute.FileTime;
import java.time.Duration;
import java.time.Instant;
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
 *
 * <p>The temporary file is named {@code .<target name>.backstep-save.<random>.tmp}, so that it
 * says what it belongs to. A process killed during a write (kill -9, power loss) leaves it
 * behind; so every write first removes the temporary files of <em>its own target</em> that are
 * older than {@link #STALE_AGE}. Why one hour: a write of the largest model file (1 GiB of
 * weights) takes seconds, so a temporary file an hour old belongs to a write that died, while a
 * younger one may belong to a write still running in another process, which must not lose it.
 * Files of other targets, and files not named by this pattern, are never touched.
 */
public final class AtomicFiles {

    private static final org.slf4j.Logger LOG = org.slf4j.LoggerFactory.getLogger(AtomicFiles.class);

    /** How old a temporary file of the same target must be before a write removes it as stale. */
    public static final Duration STALE_AGE = Duration.ofHours(1);
    /** What every temporary file's name has between the target's name and the random part. */
    public static final String TEMPORARY_MARK = ".backstep-save.";
    /** The end of every temporary file's name. */
    public static final String TEMPORARY_SUFFIX = ".tmp";
    /**
     * The most characters of the target's name kept in a temporary name, so that the whole stays
     * within the 255 bytes most file systems allow.
     */
    static final int NAME_CHARS = 150;
    private static final java.security.SecureRandom NAMES = new java.security.SecureRandom();

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
        removeStaleTemporaries(abs, STALE_AGE);
        Path tmp = createTemporary(dir, abs);
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
     * Creates {@code .<name>.backstep-save.<random>.tmp} in the folder, new (never an existing
     * file), readable and writable by its owner only where the file system has POSIX permissions.
     */
    private static Path createTemporary(Path dir, Path target) throws IOException {
        boolean posix = Files.getFileStore(dir).supportsFileAttributeView(java.nio.file.attribute.PosixFileAttributeView.class);
        for (int attempt = 1; ; attempt++) {
            Path p = dir.resolve(temporaryPrefix(target) + Long.toUnsignedString(NAMES.nextLong()) + TEMPORARY_SUFFIX);
            try {
                return posix ? Files.createFile(p, java.nio.file.attribute.PosixFilePermissions.asFileAttribute(
                        java.nio.file.attribute.PosixFilePermissions.fromString("rw-------"))) : Files.createFile(p);
            } catch (java.nio.file.FileAlreadyExistsException e) {
                if (attempt >= 100) {
                    throw e;
                }
            }
        }
    }

    /**
     * @param target a target file
     * @return what the names of its temporary files begin with: {@code .<name>.backstep-save.}
     */
    public static String temporaryPrefix(Path target) {
        Require.notNull("target", target);
        Path name = target.toAbsolutePath().getFileName();
        String n = name == null ? "" : name.toString();
        return "." + (n.length() > NAME_CHARS ? n.substring(0, NAME_CHARS) : n) + TEMPORARY_MARK;
    }

    /**
     * @param target a target file
     * @param file any file
     * @return whether {@code file} is named as a temporary file of {@code target} (its folder is not compared)
     */
    public static boolean isTemporaryOf(Path target, Path file) {
        Require.notNull("file", file);
        Path name = file.getFileName();
        if (name == null) {
            return false;
        }
        String n = name.toString();
        String prefix = temporaryPrefix(target);
        if (!n.startsWith(prefix) || !n.endsWith(TEMPORARY_SUFFIX)) {
            return false;
        }
        String random = n.substring(prefix.length(), n.length() - TEMPORARY_SUFFIX.length());
        return !random.isEmpty() && random.chars().allMatch(Character::isDigit);
    }

    /**
     * Removes the temporary files of {@code target} in its folder that were last modified more
     * than {@code age} ago; a file that cannot be removed is logged and left.
     *
     * @param target the target whose temporary files to remove
     * @param age how old a temporary file must be, at least 0
     * @return how many were removed
     * @throws IOException if the folder cannot be listed
     */
    public static int removeStaleTemporaries(Path target, Duration age) throws IOException {
        Require.notNull("target", target);
        Require.notNull("age", age);
        if (age.isNegative()) {
            throw new IllegalArgumentException("age is " + age + "; expected at least 0");
        }
        Path abs = target.toAbsolutePath();
        Path dir = abs.getParent();
        if (dir == null || !Files.isDirectory(dir)) {
            return 0;
        }
        FileTime cutoff = FileTime.from(Instant.now().minus(age));
        int removed = 0;
        try (DirectoryStream<Path> files = Files.newDirectoryStream(dir, p -> isTemporaryOf(abs, p))) {
            for (Path f : files) {
                try {
                    BasicFileAttributes a = Files.readAttributes(f, BasicFileAttributes.class, LinkOption.NOFOLLOW_LINKS);
                    if (a.isRegularFile() && a.lastModifiedTime().compareTo(cutoff) < 0 && Files.deleteIfExists(f)) {
                        removed++;
                        LOG.info("removed {}, a temporary file of {} left by a write that did not finish", f, abs);
                    }
                } catch (IOException e) {
                    LOG.warn("could not remove the stale temporary file {}: {}", f, e.toString());
                }
            }
        }
        return removed;
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
