package org.backstep.campaign;

import org.backstep.DiffusionModel;
import org.backstep.io.AtomicFiles;

import java.nio.file.Files;
import java.nio.file.Path;

/**
 * The child process of the kill-during-save campaign: saves two models over one target in turns,
 * without end, until it is killed. After its first save it prints one line, {@value #READY}.
 *
 * <pre>
 *   java -cp ... org.backstep.campaign.SaveLoop MODE TARGET A B
 * </pre>
 * MODE {@code model}: loads the model files A and B and saves them by
 * {@link DiffusionModel#save(Path)}, the whole public path (it starts ND4J, a few seconds per
 * child). MODE {@code bytes}: writes the bytes of A and B by {@link AtomicFiles#write(Path, byte[])},
 * the write that {@code DiffusionModel.save} ends in once it has the file's bytes in memory, in a
 * JVM that starts in a fraction of a second.
 */
public final class SaveLoop {

    /** The line printed after the first save. */
    public static final String READY = "saving";

    private SaveLoop() {
    }

    /**
     * @param args MODE TARGET A B
     * @throws Exception if a save fails
     */
    public static void main(String[] args) throws Exception {
        if (args.length != 4 || !(args[0].equals("model") || args[0].equals("bytes"))) {
            throw new IllegalArgumentException("usage: SaveLoop model|bytes TARGET A B");
        }
        Path target = Path.of(args[1]);
        if (args[0].equals("model")) {
            DiffusionModel[] models = {DiffusionModel.load(Path.of(args[2])), DiffusionModel.load(Path.of(args[3]))};
            for (long i = 0; ; i++) {
                models[(int) (i % 2)].save(target);
                ready(i);
            }
        }
        byte[][] files = {Files.readAllBytes(Path.of(args[2])), Files.readAllBytes(Path.of(args[3]))};
        for (long i = 0; ; i++) {
            AtomicFiles.write(target, files[(int) (i % 2)]);
            ready(i);
        }
    }

    private static void ready(long i) {
        if (i == 0) {
            System.out.println(READY);
            System.out.flush();
        }
    }
}
