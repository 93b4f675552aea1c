package org.backstep.campaign;

import org.backstep.DiffusionModel;
import org.backstep.internal.store.ModelFile;
import org.backstep.io.AtomicFiles;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.FileTime;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;

/**
 * The kill-during-save campaign: a child JVM ({@link SaveLoop}) saves two models A and B over one
 * target in turns; after its first save it is killed (SIGKILL, {@link Process#destroyForcibly()})
 * after a random delay. Each time the target must hold exactly A or B, byte for byte, and load;
 * the temporary files the kill left must be named after the target; and after they have aged
 * past {@link AtomicFiles#STALE_AGE} (their times are set back, standing for the hour that
 * passes), the next save must leave none of them. Common practice, no source.
 */
public final class KillDuringSave {

    /**
     * The findings.
     *
     * @param kills children killed
     * @param heldA kills after which the target held A
     * @param heldB kills after which the target held B
     * @param killsLeavingTemporaries kills that left at least one temporary file
     * @param temporaryBytes bytes of those files together
     * @param failures a line per failed check
     * @param seconds the whole run
     * @param mode what the child ran ({@link SaveLoop})
     */
    public record Result(int kills, int heldA, int heldB, int killsLeavingTemporaries, long temporaryBytes,
                         List<String> failures, double seconds, String mode) {

        /** @return a summary */
        public String toText() {
            StringBuilder sb = new StringBuilder(String.format(Locale.ROOT,
                    "%d kills (child mode %s) in %.1f s: target held A %d times, B %d times, and loaded every time; "
                            + "%d kills left temporary files (%d bytes in all), all removed by the next save once stale; "
                            + "failures %d%n", kills, mode, seconds, heldA, heldB, killsLeavingTemporaries, temporaryBytes,
                    failures.size()));
            failures.forEach(f -> sb.append("FAILURE ").append(f).append('\n'));
            return sb.toString();
        }
    }

    private KillDuringSave() {
    }

    /**
     * @param kills how many children to kill
     * @param seed the seed of the delays
     * @param maxDelayMillis the longest delay between the child's first save and its kill
     * @param mode {@code model} or {@code bytes} (see {@link SaveLoop})
     * @param folder an empty folder to work in
     * @param modelA the bytes of a model file as {@link DiffusionModel#save(Path)} writes it
     * @param modelB another
     * @return the findings
     * @throws IOException if a child cannot be started or the folder used
     * @throws InterruptedException if interrupted
     */
    public static Result run(int kills, long seed, int maxDelayMillis, String mode, Path folder, byte[] modelA,
                             byte[] modelB) throws IOException, InterruptedException {
        Path a = Files.write(folder.resolve("a.backstep"), modelA);
        Path b = Files.write(folder.resolve("b.backstep"), modelB);
        Path work = Files.createDirectories(folder.resolve("target"));
        Path target = work.resolve("model.backstep");
        String shaA = ModelFile.sha256(modelA);
        String shaB = ModelFile.sha256(modelB);
        SplittableRandom rng = new SplittableRandom(seed);
        List<String> failures = new ArrayList<>();
        int heldA = 0;
        int heldB = 0;
        int littered = 0;
        long litterBytes = 0;
        long started = System.nanoTime();
        AtomicFiles.write(target, modelA);
        for (int k = 0; k < kills; k++) {
            long delay = rng.nextInt(maxDelayMillis + 1);
            String killed = child(mode, target, a, b, delay, folder.resolve("child-" + k + ".err"));
            if (killed != null) {
                failures.add("kill " + k + ": " + killed);
                continue;
            }
            String sha = ModelFile.sha256(Files.readAllBytes(target));
            if (sha.equals(shaA)) {
                heldA++;
            } else if (sha.equals(shaB)) {
                heldB++;
            } else {
                failures.add("kill " + k + " (after " + delay + " ms): the target is neither A nor B");
            }
            try {
                DiffusionModel.load(target);
            } catch (IOException | RuntimeException e) {
                failures.add("kill " + k + ": the target does not load: " + e);
            }
            List<Path> litter = list(work, p -> !p.equals(target));
            for (Path p : litter) {
                if (!AtomicFiles.isTemporaryOf(target, p)) {
                    failures.add("kill " + k + ": a file not named after the target was left: " + p.getFileName());
                }
                litterBytes += Files.size(p);
                Files.setLastModifiedTime(p, FileTime.from(Instant.now().minus(AtomicFiles.STALE_AGE).minusSeconds(60)));
            }
            littered += litter.isEmpty() ? 0 : 1;
            DiffusionModel.load(target).save(target);        // the next save, an hour later
            List<Path> left = list(work, p -> !p.equals(target));
            if (!left.isEmpty()) {
                failures.add("kill " + k + ": the next save left " + left);
            }
        }
        return new Result(kills, heldA, heldB, littered, litterBytes, failures, (System.nanoTime() - started) / 1e9, mode);
    }

    /** Starts a child, waits for its first save, sleeps, kills it; null if all went as planned. */
    private static String child(String mode, Path target, Path a, Path b, long delayMillis, Path err)
            throws IOException, InterruptedException {
        String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        String classPath = System.getProperty("surefire.test.class.path", System.getProperty("java.class.path"));
        ProcessBuilder pb = new ProcessBuilder(java, "-Xmx512m", "-XX:+UseSerialGC", "-XX:TieredStopAtLevel=1",
                "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn", "-cp", classPath, SaveLoop.class.getName(), mode,
                target.toString(), a.toString(), b.toString());
        pb.environment().put("OMP_NUM_THREADS", "1");
        pb.redirectError(err.toFile());
        Process p = pb.start();
        try {
            BufferedReader out = new BufferedReader(new InputStreamReader(p.getInputStream(), StandardCharsets.UTF_8));
            CompletableFuture<String> line = CompletableFuture.supplyAsync(() -> {
                try {
                    return out.readLine();
                } catch (IOException e) {
                    return null;
                }
            });
            String first;
            try {
                first = line.get(180, TimeUnit.SECONDS);
            } catch (java.util.concurrent.ExecutionException | java.util.concurrent.TimeoutException e) {
                first = null;
            }
            if (!SaveLoop.READY.equals(first)) {
                return "the child did not start saving (printed " + first + "; see " + err + ": "
                        + (Files.exists(err) ? Files.readString(err).lines().limit(3).toList() : "") + ")";
            }
            Thread.sleep(delayMillis);
            if (!p.isAlive()) {
                return "the child ended by itself with " + p.exitValue();
            }
            p.destroyForcibly();
            if (!p.waitFor(60, TimeUnit.SECONDS)) {
                return "the child did not die";
            }
            Files.deleteIfExists(err);
            return null;
        } finally {
            if (p.isAlive()) {
                p.destroyForcibly();
            }
        }
    }

    private static List<Path> list(Path dir, java.util.function.Predicate<Path> keep) throws IOException {
        try (Stream<Path> s = Files.list(dir)) {
            return s.filter(keep).toList();
        }
    }
}
