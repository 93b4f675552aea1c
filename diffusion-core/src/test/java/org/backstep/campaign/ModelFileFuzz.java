package org.backstep.campaign;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.internal.store.ModelFile;
import org.backstep.io.ModelFileException;
import org.backstep.option.SamplingPlan;
import org.backstep.table.Table;

import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.zip.ZipEntry;
import java.util.zip.ZipInputStream;

/**
 * A seeded fuzz of the model-file loader: mutated copies of one valid model file, each loaded
 * (within a time limit) and, if it loads, scored and sampled. A file must either be refused with
 * a {@link ModelFileException} or load into a model whose bound of the given records is finite
 * (or whose scoring refuses the records with an {@link IllegalArgumentException} that names them);
 * anything else (another exception, an error, a time-out, a NaN or infinite score) is a failure.
 * Common practice, no source: mutation fuzzing of a parser, with the mutations the hardening
 * issue names (byte flips, truncations, removed, duplicated and renamed entries, edited manifests
 * with recomputed checksums, oversized declarations) and a few more (unknown entries, zip headers
 * that lie, edited weights).
 *
 * <p>Case i is made from a generator seeded by the campaign's seed and i alone, so a failing case
 * can be rebuilt from its number.
 */
public final class ModelFileFuzz {

    /** How a case was made. */
    public enum Mutation {
        /** 1 to 8 random bytes of the file set to random values. */
        FLIP_BYTES,
        /** The file cut at a random length. */
        TRUNCATE,
        /** One of the three entries left out. */
        REMOVE_ENTRY,
        /** One entry written twice (the second copy possibly altered). */
        DUPLICATE_ENTRY,
        /** One entry under another name. */
        RENAME_ENTRY,
        /** An entry the format does not name, small or a bomb of zeros. */
        EXTRA_ENTRY,
        /** One manifest field removed, retyped or given an extreme value; checksums recomputed. */
        EDIT_MANIFEST,
        /** One character of the manifest's text changed; checksums recomputed. */
        EDIT_MANIFEST_TEXT,
        /** A size declared far past the limits (network, steps, columns, parameters, entries); checksums recomputed. */
        OVERSIZED,
        /** The weights made shorter, longer or not finite; checksums recomputed. */
        EDIT_WEIGHTS,
        /** A zip header that lies about an entry's size or CRC-32. */
        LYING_HEADER
    }

    /** What became of a case. */
    public enum Outcome {
        /** Refused with a ModelFileException. */
        REFUSED(false),
        /** Loaded; finite bound of every record. */
        LOADED(false),
        /** Loaded; scoring refused the records with an IllegalArgumentException naming them. */
        LOADED_SCORING_REFUSED(false),
        /** Loaded, and a record scored NaN or infinite: a failure. */
        SCORED_NOT_FINITE(true),
        /** Any other exception or error: a failure. */
        OTHER_EXCEPTION(true),
        /** Did not finish within the time limit: a failure. */
        TIMEOUT(true);

        private final boolean failure;

        Outcome(boolean failure) {
            this.failure = failure;
        }

        /** @return whether this outcome fails the campaign */
        public boolean failure() {
            return failure;
        }
    }

    /**
     * The campaign's findings.
     *
     * @param files cases run
     * @param counts per mutation, per outcome
     * @param failures a line per failing case (number, mutation, what was done, what happened)
     * @param slowestSeconds the longest time one case took
     * @param seconds the whole run
     * @param refusedParts how often each part was named by a refusal (the part up to its first bracket)
     * @param scoringRefusals the first ten files that loaded but whose records the model refused to score, and why
     */
    public record Result(int files, Map<Mutation, Map<Outcome, Integer>> counts, List<String> failures,
                         double slowestSeconds, double seconds, Map<String, Integer> refusedParts,
                         List<String> scoringRefusals) {

        /** @return how many cases ended in the outcome */
        public int count(Outcome o) {
            return counts.values().stream().mapToInt(m -> m.getOrDefault(o, 0)).sum();
        }

        /** @return how many cases failed */
        public int failureCount() {
            return Arrays.stream(Outcome.values()).filter(Outcome::failure).mapToInt(this::count).sum();
        }

        /** @return a table of the counts, then the failures */
        public String toText() {
            StringBuilder sb = new StringBuilder();
            sb.append(String.format(Locale.ROOT, "%-20s", "mutation"));
            for (Outcome o : Outcome.values()) {
                sb.append(String.format(Locale.ROOT, " %10s", abbreviation(o)));
            }
            sb.append('\n');
            for (Mutation m : Mutation.values()) {
                sb.append(String.format(Locale.ROOT, "%-20s", m));
                for (Outcome o : Outcome.values()) {
                    sb.append(String.format(Locale.ROOT, " %10d", counts.getOrDefault(m, Map.of()).getOrDefault(o, 0)));
                }
                sb.append('\n');
            }
            sb.append(String.format(Locale.ROOT, "%-20s", "all"));
            for (Outcome o : Outcome.values()) {
                sb.append(String.format(Locale.ROOT, " %10d", count(o)));
            }
            sb.append('\n');
            sb.append("columns: ");
            for (Outcome o : Outcome.values()) {
                sb.append(abbreviation(o)).append(" = ").append(o).append("; ");
            }
            sb.append('\n');
            sb.append(String.format(Locale.ROOT, "%d files in %.1f s; slowest case %.3f s; failures %d%n", files, seconds,
                    slowestSeconds, failureCount()));
            sb.append("parts named by the refusals:\n");
            refusedParts.forEach((part, n) -> sb.append(String.format(Locale.ROOT, "  %6d  %s%n", n, part)));
            scoringRefusals.forEach(f -> sb.append("loaded, scoring refused: ").append(f).append('\n'));
            failures.forEach(f -> sb.append("FAILURE ").append(f).append('\n'));
            return sb.toString();
        }

        private static String abbreviation(Outcome o) {
            return switch (o) {
                case REFUSED -> "refused";
                case LOADED -> "loaded";
                case LOADED_SCORING_REFUSED -> "load+IAE";
                case SCORED_NOT_FINITE -> "NaN/Inf";
                case OTHER_EXCEPTION -> "other";
                case TIMEOUT -> "timeout";
            };
        }
    }

    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);
    private static final long SEED_STEP = 0x9E3779B97F4A7C15L;

    private final byte[] base;
    private final Map<String, byte[]> entries;
    private final Table records;
    private final long zeroBombBytes;
    private ZipBytes.Entry bomb;

    /**
     * @param base the bytes of a valid model file (not modified)
     * @param records complete records with the model's columns, to score every model that loads
     * @param zeroBombBytes the unpacked size of the zero-filled entries of the bomb cases (their
     *     packed size is about a thousandth of it)
     * @throws IOException if {@code base} is not a zip of the three entries
     */
    public ModelFileFuzz(byte[] base, Table records, long zeroBombBytes) throws IOException {
        this.base = base.clone();
        this.entries = unzip(base);
        if (!entries.keySet().equals(new java.util.HashSet<>(ModelFile.ENTRIES))) {
            throw new IOException("the base file holds " + entries.keySet() + "; expected " + ModelFile.ENTRIES);
        }
        this.records = records;
        this.zeroBombBytes = zeroBombBytes;
    }

    /**
     * Runs cases 0..files-1.
     *
     * @param files how many cases
     * @param seed the campaign's seed
     * @param limit the time one case may take (load, score and sample)
     * @param folder where the case files are written (one at a time, then deleted)
     * @return the findings
     * @throws IOException if a case file cannot be written
     */
    public Result run(int files, long seed, Duration limit, Path folder) throws IOException {
        Map<Mutation, Map<Outcome, Integer>> counts = new EnumMap<>(Mutation.class);
        Map<String, Integer> parts = new java.util.TreeMap<>();
        List<String> failures = new ArrayList<>();
        List<String> scoringRefusals = new ArrayList<>();
        double slowest = 0;
        long started = System.nanoTime();
        ExecutorService worker = newWorker();
        try {
            for (int i = 0; i < files; i++) {
                SplittableRandom rng = new SplittableRandom(seed + SEED_STEP * (i + 1));
                Mutation m = Mutation.values()[rng.nextInt(Mutation.values().length)];
                StringBuilder what = new StringBuilder();
                byte[] bytes = mutate(m, rng, what);
                Path file = folder.resolve("case-" + i + ".backstep");
                Files.write(file, bytes);
                long t0 = System.nanoTime();
                long caseSeed = seed + i;
                Future<String[]> f = worker.submit(() -> attempt(file, caseSeed));
                String[] result;
                try {
                    result = f.get(limit.toMillis(), TimeUnit.MILLISECONDS);
                } catch (TimeoutException e) {
                    f.cancel(true);
                    worker.shutdownNow();
                    worker = newWorker();
                    result = new String[] {Outcome.TIMEOUT.name(), "no result within " + limit};
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    throw new IOException("interrupted", e);
                } catch (ExecutionException e) {
                    result = new String[] {Outcome.OTHER_EXCEPTION.name(), String.valueOf(e.getCause())};
                }
                slowest = Math.max(slowest, (System.nanoTime() - t0) / 1e9);
                Files.deleteIfExists(file);
                Outcome o = Outcome.valueOf(result[0]);
                counts.computeIfAbsent(m, k -> new EnumMap<>(Outcome.class)).merge(o, 1, Integer::sum);
                if (o == Outcome.REFUSED) {
                    parts.merge(result[1].split("\\[", 2)[0], 1, Integer::sum);
                }
                if (o.failure()) {
                    failures.add("case " + i + " (" + m + ": " + what + "): " + o + ": " + result[1]);
                } else if (o == Outcome.LOADED_SCORING_REFUSED && scoringRefusals.size() < 10) {
                    scoringRefusals.add("case " + i + " (" + m + ": " + what + "): " + result[1]);
                }
            }
        } finally {
            worker.shutdownNow();
        }
        return new Result(files, counts, failures, slowest, (System.nanoTime() - started) / 1e9, parts, scoringRefusals);
    }

    private static ExecutorService newWorker() {
        return Executors.newSingleThreadExecutor(r -> {
            Thread t = new Thread(r, "model-file-fuzz");
            t.setDaemon(true);
            return t;
        });
    }

    /** Loads, scores and samples one file: {outcome, detail}. Errors count as other exceptions. */
    private String[] attempt(Path file, long seed) {
        DiffusionModel model;
        try {
            model = DiffusionModel.load(file);
        } catch (ModelFileException e) {
            return new String[] {Outcome.REFUSED.name(), e.part()};
        } catch (Throwable e) {
            return new String[] {Outcome.OTHER_EXCEPTION.name(), "load: " + e};
        }
        try {
            double[] nats = model.bound(records, seed).nats();
            for (int r = 0; r < nats.length; r++) {
                if (!Double.isFinite(nats[r])) {
                    return new String[] {Outcome.SCORED_NOT_FINITE.name(), "record " + r + " scored " + nats[r]};
                }
            }
        } catch (IllegalArgumentException e) {
            return new String[] {Outcome.LOADED_SCORING_REFUSED.name(), e.getMessage()};
        } catch (Throwable e) {
            return new String[] {Outcome.OTHER_EXCEPTION.name(), "bound: " + e};
        }
        try {
            model.sampleChecked(8, SamplingPlan.ancestral(), seed);
        } catch (IllegalStateException e) {
            // the chain left the float range: the documented outcome of a diverging chain
        } catch (Throwable e) {
            return new String[] {Outcome.OTHER_EXCEPTION.name(), "sample: " + e};
        }
        return new String[] {Outcome.LOADED.name(), ""};
    }

    // ------------------------------------------------------------------ mutations

    /**
     * @param m the kind of mutation
     * @param rng the case's generator
     * @param what receives a short description of what was done
     * @return the bytes of the mutated file
     */
    byte[] mutate(Mutation m, SplittableRandom rng, StringBuilder what) throws IOException {
        switch (m) {
            case FLIP_BYTES -> {
                byte[] b = base.clone();
                int n = 1 + rng.nextInt(8);
                for (int k = 0; k < n; k++) {
                    int at = rng.nextInt(b.length);
                    b[at] = (byte) rng.nextInt(256);
                    what.append(k == 0 ? "bytes at " : ", ").append(at);
                }
                return b;
            }
            case TRUNCATE -> {
                int cut = rng.nextInt(base.length);
                what.append("cut at ").append(cut).append(" of ").append(base.length);
                return Arrays.copyOf(base, cut);
            }
            case REMOVE_ENTRY -> {
                String gone = ModelFile.ENTRIES.get(rng.nextInt(3));
                what.append("without ").append(gone);
                List<ZipBytes.Entry> list = new ArrayList<>();
                for (Map.Entry<String, byte[]> e : entries.entrySet()) {
                    if (!e.getKey().equals(gone)) {
                        list.add(ZipBytes.Entry.deflated(e.getKey(), e.getValue()));
                    }
                }
                return ZipBytes.write(list);
            }
            case DUPLICATE_ENTRY -> {
                String twice = ModelFile.ENTRIES.get(rng.nextInt(3));
                List<ZipBytes.Entry> list = deflatedEntries(entries);
                byte[] copy = entries.get(twice).clone();
                if (rng.nextBoolean() && copy.length > 0) {
                    copy[rng.nextInt(copy.length)] ^= 1;
                    what.append("altered ");
                }
                list.add(rng.nextInt(list.size() + 1), ZipBytes.Entry.deflated(twice, copy));
                what.append(twice).append(" twice");
                return ZipBytes.write(list);
            }
            case RENAME_ENTRY -> {
                List<ZipBytes.Entry> list = deflatedEntries(entries);
                int k = rng.nextInt(list.size());
                String[] names = {"MODEL.JSON", "model.json ", "../model.json", "/" + list.get(k).name(), "weights.f64",
                        "SHA256SUMS.txt", "x", "", "dir/" + list.get(k).name(), "model.json\u0000",
                        ModelFile.ENTRIES.get((ModelFile.ENTRIES.indexOf(list.get(k).name()) + 1) % 3)};
                String name = names[rng.nextInt(names.length)];
                what.append(list.get(k).name()).append(" renamed \"").append(name).append('"');
                list.set(k, list.get(k).withName(name));
                return ZipBytes.write(list);
            }
            case EXTRA_ENTRY -> {
                List<ZipBytes.Entry> list = deflatedEntries(entries);
                boolean isBomb = rng.nextInt(4) == 0;
                ZipBytes.Entry extra = isBomb ? bomb("padding.bin")
                        : ZipBytes.Entry.deflated(new String[] {"README", "notes.txt", "model.json.bak", "weights.f32.old"}
                                [rng.nextInt(4)], "extra content".getBytes(StandardCharsets.UTF_8));
                what.append(isBomb ? "a bomb of " + zeroBombBytes + " zeros" : "a small entry").append(" named ")
                        .append(extra.name());
                list.add(rng.nextInt(list.size() + 1), extra);
                return ZipBytes.write(list);
            }
            case EDIT_MANIFEST -> {
                JsonNode root = JSON.readTree(entries.get(ModelFile.MANIFEST));
                editRandomField(root, rng, what);
                return rebuild(JSON.writeValueAsBytes(root), entries.get(ModelFile.WEIGHTS));
            }
            case EDIT_MANIFEST_TEXT -> {
                byte[] text = entries.get(ModelFile.MANIFEST).clone();
                int at = rng.nextInt(text.length);
                String pool = "0123456789-.eE\"[]{},: aZ";
                text[at] = (byte) pool.charAt(rng.nextInt(pool.length()));
                what.append("manifest character ").append(at).append(" set to '").append((char) text[at]).append('\'');
                return rebuild(text, entries.get(ModelFile.WEIGHTS));
            }
            case OVERSIZED -> {
                return oversized(rng, what);
            }
            case EDIT_WEIGHTS -> {
                byte[] w = entries.get(ModelFile.WEIGHTS);
                int kind = rng.nextInt(5);
                byte[] out;
                if (kind == 0) {
                    out = Arrays.copyOf(w, w.length - 4 * (1 + rng.nextInt(Math.max(1, w.length / 4 - 1))));
                    what.append("weights cut to ").append(out.length).append(" bytes");
                } else if (kind == 1) {
                    out = Arrays.copyOf(w, w.length + 1 + rng.nextInt(64));
                    what.append("weights extended to ").append(out.length).append(" bytes");
                } else if (kind == 2) {
                    out = w.clone();
                    float[] bad = {Float.NaN, Float.POSITIVE_INFINITY, Float.NEGATIVE_INFINITY};
                    int at = rng.nextInt(w.length / 4);
                    ByteBuffer.wrap(out).order(ByteOrder.LITTLE_ENDIAN).putFloat(4 * at, bad[rng.nextInt(3)]);
                    what.append("weight ").append(at).append(" not finite");
                } else if (kind == 3) {
                    out = new byte[w.length];
                    what.append("every weight 0");
                } else {
                    out = Arrays.copyOf(w, w.length + 1);
                    out = Arrays.copyOf(out, w.length - 1);
                    what.append("weights one byte short");
                }
                return rebuild(entries.get(ModelFile.MANIFEST), out);
            }
            case LYING_HEADER -> {
                List<ZipBytes.Entry> list = new ArrayList<>();
                int k = rng.nextInt(3);
                boolean stored = rng.nextBoolean();
                int lie = rng.nextInt(4);
                int i = 0;
                for (Map.Entry<String, byte[]> e : entries.entrySet()) {
                    ZipBytes.Entry z = stored ? ZipBytes.Entry.stored(e.getKey(), e.getValue())
                            : ZipBytes.Entry.deflated(e.getKey(), e.getValue());
                    if (i++ == k) {
                        z = switch (lie) {
                            case 0 -> z.withDeclaredSize(z.size() + 1 + rng.nextInt(1000));
                            case 1 -> z.withDeclaredSize(Math.max(0, z.size() - 1 - rng.nextInt(10)));
                            case 2 -> z.withDeclaredSize(0xFFFFFFFFL);
                            default -> z.withCrc(z.crc() ^ 0x5A5A5A5AL);
                        };
                        what.append(z.name()).append(stored ? " stored" : " deflated").append(lie < 3
                                ? " declaring " + z.size() + " bytes" : " with a wrong CRC-32");
                    }
                    list.add(z);
                }
                return ZipBytes.write(list);
            }
            default -> throw new AssertionError(m);
        }
    }

    /** Sizes declared far past the limits, each with recomputed checksums. */
    private byte[] oversized(SplittableRandom rng, StringBuilder what) throws IOException {
        ObjectNode root = (ObjectNode) JSON.readTree(entries.get(ModelFile.MANIFEST));
        ObjectNode opts = (ObjectNode) root.get("options");
        JsonNodeFactory f = JsonNodeFactory.instance;
        int kind = rng.nextInt(12);
        switch (kind) {
            case 0 -> {
                opts.set("hidden", f.arrayNode().add(20000).add(20000));
                what.append("hidden [20000, 20000]");
            }
            case 1 -> {
                ArrayNode h = f.arrayNode();
                for (int i = 0; i < 64; i++) {
                    h.add(16384);
                }
                opts.set("hidden", h);
                what.append("hidden 64 x 16384");
            }
            case 2 -> {
                opts.put("embeddingSize", 2147483646);
                what.append("embeddingSize 2147483646");
            }
            case 3 -> {
                ((ObjectNode) opts.get("continuousSchedule")).put("steps", 4294967316L);
                what.append("steps 4294967316");
            }
            case 4 -> {
                ((ObjectNode) opts.get("continuousSchedule")).put("steps", 1_000_000);
                ((ObjectNode) root.get("network")).put("steps", 1_000_000);
                what.append("steps 1000000 with 20 betas");
            }
            case 5 -> {
                ((ObjectNode) root.get("network")).put("parameters", 1L << 40);
                ((ArrayNode) root.get("arrays").get(0).get("shape")).set(0, f.numberNode(1L << 40));
                what.append("parameters 2^40");
            }
            case 6 -> {
                ArrayNode cols = (ArrayNode) root.get("columns");
                JsonNode first = cols.get(0);
                int n = 100_000;
                for (int i = 0; i < n; i++) {
                    cols.add(((ObjectNode) first.deepCopy()).put("name", "c" + i));
                }
                what.append(n).append(" more columns");
            }
            case 7 -> {
                opts.set("hidden", f.arrayNode().add(16384).add(16384).add(16384));
                what.append("hidden [16384, 16384, 16384] (past the parameter limit)");
            }
            case 8 -> {
                opts.put("embeddingSize", 1024);
                opts.put("threads", 1_000_000);
                what.append("threads 1000000");
            }
            case 9 -> {
                List<ZipBytes.Entry> list = deflatedEntries(entries);
                list.set(0, bomb(ModelFile.MANIFEST));
                what.append("the manifest a bomb of ").append(zeroBombBytes).append(" zeros");
                return ZipBytes.write(list);
            }
            case 10 -> {
                Map<String, byte[]> copy = new LinkedHashMap<>(entries);
                copy.remove(ModelFile.WEIGHTS);
                List<ZipBytes.Entry> list = deflatedEntries(copy);
                list.add(1, bomb(ModelFile.WEIGHTS));
                what.append("the weights a bomb of ").append(zeroBombBytes).append(" zeros");
                return ZipBytes.write(list);
            }
            default -> {
                ((ObjectNode) root.get("provenance")).put("trainingRows", Integer.MAX_VALUE);
                ArrayNode notes = (ArrayNode) root.get("provenance").get("notes");
                notes.add("x".repeat(1 << 20));
                what.append("trainingRows 2^31-1 and a note of 1 MiB");
            }
        }
        return rebuild(JSON.writeValueAsBytes(root), entries.get(ModelFile.WEIGHTS));
    }

    /** Removes, retypes or sets to an extreme value one field reached by a random walk down the manifest. */
    private static void editRandomField(JsonNode root, SplittableRandom rng, StringBuilder what) {
        JsonNode parent = root;
        String path = "";
        while (true) {
            int size = parent.size();
            if (size == 0) {
                break;
            }
            int pick = rng.nextInt(size);
            JsonNode child;
            String key;
            if (parent.isObject()) {
                Iterator<String> names = parent.fieldNames();
                String name = null;
                for (int i = 0; i <= pick; i++) {
                    name = names.next();
                }
                key = name;
                child = parent.get(name);
            } else {
                key = Integer.toString(pick);
                child = parent.get(pick);
            }
            if (child.isContainerNode() && child.size() > 0 && rng.nextDouble() < 0.7) {
                parent = child;
                path += (parent.isArray() || !path.isEmpty() ? "." : "") + key;
                continue;
            }
            path += "." + key;
            what.append(path).append(": ");
            apply(parent, key, child, rng, what);
            return;
        }
        what.append("(empty container)");
    }

    private static void apply(JsonNode parent, String key, JsonNode old, SplittableRandom rng, StringBuilder what) {
        JsonNodeFactory f = JsonNodeFactory.instance;
        JsonNode v;
        int kind = rng.nextInt(24);
        double x = old.isNumber() ? old.doubleValue() : 1.0;
        switch (kind) {
            case 0 -> v = null;
            case 1 -> v = f.textNode("CONSTANT");
            case 2 -> v = f.textNode(old.isValueNode() ? old.asText() : "[]");
            case 3 -> v = f.arrayNode().add(1).add(2);
            case 4 -> v = f.arrayNode();
            case 5 -> v = f.objectNode();
            case 6 -> v = f.nullNode();
            case 7 -> v = f.booleanNode(true);
            case 8 -> v = f.numberNode(0);
            case 9 -> v = f.numberNode(-1);
            case 10 -> v = f.numberNode(4294967316L);
            case 11 -> v = f.numberNode(2147483646);
            case 12 -> v = f.numberNode(2147483648L);
            case 13 -> v = f.numberNode(1e300);
            case 14 -> v = f.numberNode(-1e300);
            case 15 -> v = f.numberNode(1e-300);
            case 16 -> v = f.numberNode(1e-320);
            case 17 -> v = f.textNode("NaN");
            case 18 -> v = f.numberNode(x * new double[] {2, 1e6, 1e-6, -1, 1.0000001, 0.5}[rng.nextInt(6)]);
            case 19 -> v = f.numberNode(old.isIntegralNumber() ? old.longValue() + (rng.nextBoolean() ? 1 : -1) : 0.5);
            case 20 -> v = f.numberNode(1.5);
            case 21 -> v = f.numberNode(20000);
            case 22 -> v = f.numberNode(new java.math.BigInteger("123456789012345678901234567890"));
            default -> {
                if (old.isArray() && old.size() > 0) {
                    ArrayNode a = ((ArrayNode) old).deepCopy();
                    if (rng.nextBoolean()) {
                        a.remove(a.size() - 1);
                    } else {
                        a.add(a.get(0).deepCopy());
                    }
                    v = a;
                } else {
                    v = f.numberNode(1e-12);
                }
            }
        }
        what.append(v == null ? "removed" : "set to " + shortText(v));
        if (parent.isObject()) {
            if (v == null) {
                ((ObjectNode) parent).remove(key);
            } else {
                ((ObjectNode) parent).set(key, v);
            }
        } else {
            int i = Integer.parseInt(key);
            if (v == null) {
                ((ArrayNode) parent).remove(i);
            } else {
                ((ArrayNode) parent).set(i, v);
            }
        }
    }

    private static String shortText(JsonNode v) {
        String s = v.toString();
        return s.length() <= 40 ? s : s.substring(0, 37) + "...";
    }

    private ZipBytes.Entry bomb(String name) {
        if (bomb == null) {
            bomb = ZipBytes.zeros(name, zeroBombBytes);
        }
        return bomb.withName(name);
    }

    /** A file of the given manifest and weights with its SHA256SUMS recomputed. */
    static byte[] rebuild(byte[] manifest, byte[] weights) {
        String sums = ModelFile.sha256(manifest) + "  " + ModelFile.MANIFEST + "\n" + ModelFile.sha256(weights) + "  "
                + ModelFile.WEIGHTS + "\n";
        return ZipBytes.write(List.of(ZipBytes.Entry.deflated(ModelFile.MANIFEST, manifest),
                ZipBytes.Entry.deflated(ModelFile.WEIGHTS, weights),
                ZipBytes.Entry.deflated(ModelFile.SUMS, sums.getBytes(StandardCharsets.UTF_8))));
    }

    private static List<ZipBytes.Entry> deflatedEntries(Map<String, byte[]> entries) {
        List<ZipBytes.Entry> list = new ArrayList<>();
        entries.forEach((k, v) -> list.add(ZipBytes.Entry.deflated(k, v)));
        return list;
    }

    /** The entries of a model file, in order. */
    static Map<String, byte[]> unzip(byte[] file) throws IOException {
        Map<String, byte[]> m = new LinkedHashMap<>();
        try (ZipInputStream z = new ZipInputStream(new ByteArrayInputStream(file))) {
            for (ZipEntry e = z.getNextEntry(); e != null; e = z.getNextEntry()) {
                m.put(e.getName(), z.readAllBytes());
            }
        }
        return m;
    }
}
