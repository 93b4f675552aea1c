package org.backstep.bench;

import org.backstep.DiffusionModel;
import org.backstep.campaign.GoldenInputs;
import org.backstep.campaign.KillDuringSave;
import org.backstep.campaign.ModelFileFuzz;

import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Comparator;
import java.util.stream.Stream;

/**
 * The long hardening campaigns (issue 15), the same code as diffusion-core's tests
 * {@code ModelFileFuzzTest} and {@code KillDuringSaveTest} at larger counts: a seeded fuzz of
 * mutated model files and kills of child JVMs during saves. Prints a summary of each; run by
 * {@code diffusion-bench/campaigns.sh}, which keeps it in {@code results/campaigns.txt}.
 *
 * <pre>
 *   java -cp benchmarks.jar org.backstep.bench.Campaigns FILES KILLS SEED [BOMB_MIB]
 * </pre>
 */
public final class Campaigns {

    /** The time one fuzz case may take, as in the CI test. */
    static final Duration LIMIT = Duration.ofSeconds(30);
    /** The longest delay between a child's first save and its kill, as in the CI test. */
    static final int MAX_DELAY_MILLIS = 150;

    private Campaigns() {
    }

    /**
     * @param args FILES KILLS SEED [BOMB_MIB]
     * @throws Exception if a campaign cannot run
     */
    public static void main(String[] args) throws Exception {
        if (args.length < 3) {
            throw new IllegalArgumentException("usage: Campaigns FILES KILLS SEED [BOMB_MIB]");
        }
        int files = Integer.parseInt(args[0]);
        int kills = Integer.parseInt(args[1]);
        long seed = Long.parseLong(args[2]);
        long bomb = (args.length > 3 ? Long.parseLong(args[3]) : 1024L) << 20;
        Path work = Files.createTempDirectory("backstep-campaigns");
        try {
            ModelFileFuzz fuzz = new ModelFileFuzz(GoldenInputs.model(), GoldenInputs.records(), bomb);
            Path fuzzDir = Files.createDirectories(work.resolve("fuzz"));
            ModelFileFuzz.Result r = fuzz.run(files, seed, LIMIT, fuzzDir);
            System.out.println("== model-file fuzz: " + files + " files, seed " + seed + ", zero bombs of "
                    + (bomb >> 20) + " MiB, " + LIMIT.toSeconds() + " s per file at most");
            System.out.print(r.toText());

            Path a = work.resolve("a.backstep");
            Path b = work.resolve("b.backstep");
            Files.write(work.resolve("v3.backstep"), GoldenInputs.model());
            DiffusionModel.load(work.resolve("v3.backstep")).save(a);
            Files.write(work.resolve("v2.backstep"), GoldenInputs.resourceBytes("/golden/model-v2.backstep"));
            DiffusionModel.load(work.resolve("v2.backstep")).save(b);
            Path killDir = Files.createDirectories(work.resolve("kills"));
            KillDuringSave.Result k = KillDuringSave.run(kills, seed, MAX_DELAY_MILLIS, "model", killDir,
                    Files.readAllBytes(a), Files.readAllBytes(b));
            System.out.println("== kills during saves: " + kills + " child JVMs saving by DiffusionModel.save, killed "
                    + "0 to " + MAX_DELAY_MILLIS + " ms after their first save, seed " + seed);
            System.out.print(k.toText());
            if (r.failureCount() > 0 || !k.failures().isEmpty()) {
                System.exit(1);
            }
        } finally {
            try (Stream<Path> s = Files.walk(work)) {
                s.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
            }
        }
    }
}
