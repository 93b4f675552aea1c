package org.backstep.bench;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.InputStream;
import java.io.StringReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;

/**
 * How much heap reading a large numeric CSV needs, against the size of the table it holds: for
 * each of two generated files (the second has twice the rows of the first) and each way of reading,
 * the smallest maximum heap ({@code -Xmx}) at which a fresh JVM reads the file, found by bisection to
 * within {@link #RESOLUTION_MB} MB. Two sizes give the slope (heap per MB of table) and the constant.
 *
 * <p>The ways of reading: {@code file}, {@code CsvReader.read(Path)} (two passes, the cells stored
 * into one array of the table's size); {@code stream}, {@code CsvReader.read(InputStream, name)}
 * (one pass into growing blocks, joined at the end); {@code string}, the whole file read into one
 * String first and parsed from it, as the reader did before it streamed (for comparison only).
 *
 * <pre>
 *   diffusion-bench/csv-memory.sh [ROWS [COLUMNS]]     writes results/csv-read-memory.txt
 * </pre>
 *
 * The file holds invented refrigerated-container telemetry (not measurements): {@code COLUMNS - 1}
 * continuous readings with up to four decimals and one binary door column, 0.5% of cells missing.
 * Memory figures do not depend on the machine's load, times do: the machine is shared.
 */
public final class CsvReadMemory {

    /** Bisection stops when the failing and the succeeding heap are this close, in MB. */
    static final int RESOLUTION_MB = 4;

    /** Exit code of a child JVM that ran out of heap. */
    static final int OUT_OF_MEMORY = 3;

    private CsvReadMemory() {
    }

    /**
     * Runs the measurement, or (with {@code child MODE FILE}) one read in a child JVM.
     *
     * @param args {@code [ROWS [COLUMNS [OUTPUT [LABEL]]]]} (LABEL: a line for the report, e.g. the
     *     commit), or {@code child MODE FILE}
     * @throws Exception if generating, reading or writing fails
     */
    public static void main(String[] args) throws Exception {
        if (args.length == 3 && args[0].equals("child")) {
            System.exit(child(args[1], Path.of(args[2])));
        }
        int rows = args.length > 0 ? Integer.parseInt(args[0]) : 1_000_000;
        int columns = args.length > 1 ? Integer.parseInt(args[1]) : 8;
        Path output = args.length > 2 ? Path.of(args[2]) : null;
        String label = args.length > 3 ? args[3] : "";
        Path dir = Files.createTempDirectory("csv-read-memory");
        List<String> report = new ArrayList<>();
        report.add("CSV reading: smallest -Xmx at which a fresh JVM reads the file, against the table's size");
        report.add(String.format(Locale.ROOT, "run %s UTC; java %s (%s); child JVMs -XX:+UseG1GC -Xmx...;"
                + " %d CPUs; load average before %s", Instant.now().toString().substring(0, 16).replace('T', ' '),
                System.getProperty("java.version"), System.getProperty("java.vm.name"),
                Runtime.getRuntime().availableProcessors(), loadAverage()));
        if (!label.isEmpty()) {
            report.add(label);
        }
        report.add("the machine was shared with other work: times are indicative, heap sizes are not affected");
        report.add("bisection to " + RESOLUTION_MB + " MB; invented reefer telemetry, " + columns
                + " columns (one binary), 0.5% missing");
        report.add("");
        report.add(String.format(Locale.ROOT, "%-8s %10s %9s %9s %8s %11s %10s %8s", "mode", "rows", "file MB",
                "table MB", "min -Xmx", "heap/table", "heap/file", "read s"));
        double[][] minHeap = new double[3][2];
        double[] tableMb = new double[2];
        String[] modes = {"file", "stream", "string"};
        try {
            for (int s = 0; s < 2; s++) {
                int n = rows * (s + 1);
                Path file = dir.resolve("telemetry-" + n + ".csv");
                generate(file, n, columns, 20240611L);
                double fileMb = Files.size(file) / 1048576.0;
                tableMb[s] = (double) n * columns * Double.BYTES / 1048576.0;
                for (int m = 0; m < modes.length; m++) {
                    int[] found = smallestHeap(modes[m], file, (int) tableMb[s]);
                    minHeap[m][s] = found[0];
                    String line = String.format(Locale.ROOT, "%-8s %,10d %9.1f %9.1f %8d %11.2f %10.2f %8.1f",
                            modes[m], n, fileMb, tableMb[s], found[0], found[0] / tableMb[s], found[0] / fileMb,
                            found[1] / 1000.0);
                    report.add(line);
                    System.out.println(line);
                }
                Files.delete(file);
            }
        } finally {
            Files.deleteIfExists(dir);
        }
        report.add("");
        report.add("slope and constant from the two sizes: min -Xmx = slope x table + constant");
        for (int m = 0; m < modes.length; m++) {
            double slope = (minHeap[m][1] - minHeap[m][0]) / (tableMb[1] - tableMb[0]);
            double constant = minHeap[m][0] - slope * tableMb[0];
            report.add(String.format(Locale.ROOT, "%-8s slope %.2f, constant %.0f MB", modes[m], slope, constant));
        }
        report.add("after: load average " + loadAverage());
        report.add("read s: wall time of the read at the smallest heap found (GC pressure included)");
        String text = String.join("\n", report) + "\n";
        System.out.print(text);
        if (output != null) {
            Files.writeString(output, text, StandardCharsets.UTF_8);
        }
    }

    /** Bisects the smallest -Xmx in MB at which {@code mode} reads {@code file}; returns it and its read time in ms. */
    private static int[] smallestHeap(String mode, Path file, int tableMb) throws IOException, InterruptedException {
        int fail = Math.max(16, tableMb / 2);
        int ok = 2 * tableMb + 64;
        int okMillis;
        while ((okMillis = runChild(mode, file, ok)) < 0) {
            fail = ok;
            ok *= 2;
        }
        while (ok - fail > RESOLUTION_MB) {
            int mid = (ok + fail) / 2;
            int ms = runChild(mode, file, mid);
            if (ms < 0) {
                fail = mid;
            } else {
                ok = mid;
                okMillis = ms;
            }
        }
        return new int[] {ok, okMillis};
    }

    /** Reads the file in a fresh JVM with the given maximum heap; the read's time in ms, or -1 if it ran out of heap. */
    private static int runChild(String mode, Path file, int heapMb) throws IOException, InterruptedException {
        String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        ProcessBuilder pb = new ProcessBuilder(java, "-XX:+UseG1GC", "-Xmx" + heapMb + "m", "-cp", System.getProperty("java.class.path"),
                CsvReadMemory.class.getName(), "child", mode, file.toString());
        pb.redirectErrorStream(true);
        Process p = pb.start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8).strip();
        int code = p.waitFor();
        if (code == OUT_OF_MEMORY) {
            return -1;
        }
        if (code != 0) {
            throw new IllegalStateException("child " + mode + " -Xmx" + heapMb + "m ended with " + code + ": " + out);
        }
        return Integer.parseInt(out.substring(out.lastIndexOf(' ') + 1));
    }

    /** One read in this JVM; prints "rows columns millis". */
    private static int child(String mode, Path file) throws Exception {
        long start = System.nanoTime();
        try {
            Table t = switch (mode) {
                case "file" -> CsvTables.reader().read(file);
                case "stream" -> {
                    try (InputStream in = Files.newInputStream(file)) {
                        yield CsvTables.reader().read(in, file.toString());
                    }
                }
                case "string" -> CsvTables.reader().read(new StringReader(Files.readString(file)), file.toString());
                default -> throw new IllegalArgumentException("mode is " + mode + "; expected file, stream or string");
            };
            System.out.println(t.rows() + " " + t.columns() + " " + (System.nanoTime() - start) / 1_000_000);
            return 0;
        } catch (OutOfMemoryError e) {
            return OUT_OF_MEMORY;
        }
    }

    /** Writes {@code rows} records of invented telemetry. */
    static void generate(Path file, int rows, int columns, long seed) throws IOException {
        SplittableRandom rng = new SplittableRandom(seed);
        try (BufferedWriter w = Files.newBufferedWriter(file, StandardCharsets.UTF_8)) {
            StringBuilder line = new StringBuilder();
            for (int c = 0; c < columns - 1; c++) {
                line.append("reading_").append(c).append(',');
            }
            w.write(line.append("door_open\n").toString());
            for (int r = 0; r < rows; r++) {
                line.setLength(0);
                double load = rng.nextGaussian();
                for (int c = 0; c < columns - 1; c++) {
                    if (rng.nextInt(200) != 0) {
                        double v = 10.0 * (c - 3) + 0.6 * load + 0.8 * rng.nextGaussian();
                        line.append(Math.round(v * 1e4) / 1e4);
                    }
                    line.append(',');
                }
                if (rng.nextInt(200) != 0) {
                    line.append(rng.nextInt(20) == 0 ? '1' : '0');
                }
                w.write(line.append('\n').toString());
            }
        }
    }

    private static String loadAverage() {
        try {
            String[] f = Files.readString(Path.of("/proc/loadavg")).split(" ");
            return f[0] + " " + f[1] + " " + f[2];
        } catch (IOException | RuntimeException e) {
            return "(unknown)";
        }
    }
}
