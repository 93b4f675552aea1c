package org.backstep.spark;

import org.backstep.option.BoundOptions;
import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.concurrent.atomic.AtomicLong;

import org.apache.spark.api.java.function.MapFunction;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Encoders;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Rows per second scored through Spark in local mode with 1 and 2 cores against the same rows
 * scored in this JVM without Spark, in one process, in turns (A B C A B C ...). Not a unit test:
 * {@code diffusion-spark/bench.sh} runs it and writes {@code diffusion-bench/results/spark-scoring.txt}.
 *
 * <p>Rows: {@code COLS} correlated Gaussian columns, row i generated from (seed, i) alone, on the
 * executors for Spark and in a loop for the single JVM. Score: the Monte Carlo bound with
 * {@code K} steps, each row seeded by {@link RowSeeds#ofKey}(seed, i) in both paths, so both do the
 * same work and give the same numbers (the sums are compared). Also timed: the core's batched call
 * on the same rows (one call for all rows, one thread), which Spark cannot use while a row's stream
 * must not depend on its neighbours (see the README).
 *
 * <p>Arguments: {@code ROWS [ROUNDS] [K] [OUT]}.
 */
public final class SparkScoringBenchmark {

    static final int COLS = 20;
    static final long SEED = 2026L;

    private SparkScoringBenchmark() {
    }

    /** Row i of the generated table: an AR(1) chain across columns, coefficient 0.6. */
    static double[] row(long i) {
        SplittableRandom r = new SplittableRandom(RowSeeds.ofKey(SEED, i));
        double[] x = new double[COLS];
        double prev = 0.0;
        for (int j = 0; j < COLS; j++) {
            prev = 0.6 * prev + 0.8 * r.nextGaussian();
            x[j] = 10.0 * j + prev;
        }
        return x;
    }

    static List<String> names() {
        List<String> n = new ArrayList<>();
        for (int j = 0; j < COLS; j++) {
            n.add("sensor_" + j);
        }
        return n;
    }

    static Table table(long from, int rows) {
        double[][] x = new double[rows][];
        for (int i = 0; i < rows; i++) {
            x[i] = row(from + i);
        }
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < COLS; j++) {
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(names(), kinds, x);
    }

    static double cpuSeconds() {
        return ((com.sun.management.OperatingSystemMXBean) ManagementFactory.getOperatingSystemMXBean()).getProcessCpuTime() / 1e9;
    }

    static String loadAverage() {
        try {
            return Files.readString(Path.of("/proc/loadavg")).trim();
        } catch (IOException e) {
            return "unknown";
        }
    }

    /** The largest heap in use seen by a sampler thread while a run goes. */
    static final class HeapPeak implements AutoCloseable {
        private final AtomicLong peak = new AtomicLong();
        private volatile boolean running = true;
        private final Thread t = new Thread(() -> {
            while (running) {
                peak.accumulateAndGet(ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed(), Math::max);
                try {
                    Thread.sleep(50);
                } catch (InterruptedException e) {
                    return;
                }
            }
        });

        HeapPeak() {
            System.gc();
            t.setDaemon(true);
            t.start();
        }

        long megabytes() {
            return peak.get() >> 20;
        }

        @Override
        public void close() throws InterruptedException {
            running = false;
            t.join();
        }
    }

    record Run(String name, double seconds, double cpu, double sum, long heapMb) {
    }

    static Run single(DiffusionModel model, int rows, int k) throws InterruptedException {
        try (HeapPeak heap = new HeapPeak()) {
            double c0 = cpuSeconds();
            long t0 = System.nanoTime();
            double sum = 0.0;
            for (int i = 0; i < rows; i++) {
                sum += CoreCalls.score(model, table(i, 1), k, RowSeeds.ofKey(SEED, i));
            }
            return new Run("single JVM, one row per call", (System.nanoTime() - t0) / 1e9, cpuSeconds() - c0, sum, heap.megabytes());
        }
    }

    static Run batched(DiffusionModel model, int rows, int k) throws InterruptedException {
        Table all = table(0, rows);
        try (HeapPeak heap = new HeapPeak()) {
            double c0 = cpuSeconds();
            long t0 = System.nanoTime();
            double sum = 0.0;
            for (double v : model.bound(all, BoundOptions.sampled(k), SEED).nats()) {
                sum += v;
            }
            return new Run("single JVM, all rows in one call", (System.nanoTime() - t0) / 1e9, cpuSeconds() - c0, sum, heap.megabytes());
        }
    }

    static Run spark(BackstepModel stage, int cores, int rows) throws InterruptedException {
        SparkSession spark = SparkSession.builder().master("local[" + cores + "]").appName("backstep-bench")
                .config("spark.ui.enabled", "false").config("spark.driver.host", "127.0.0.1")
                .config("spark.driver.bindAddress", "127.0.0.1").getOrCreate();
        try {
            List<StructField> f = new ArrayList<>();
            f.add(DataTypes.createStructField("reading_id", DataTypes.LongType, false));
            for (String n : names()) {
                f.add(DataTypes.createStructField(n, DataTypes.DoubleType, false));
            }
            StructType schema = new StructType(f.toArray(StructField[]::new));
            Dataset<Row> frame = spark.range(0, rows, 1, 4 * cores).map((MapFunction<Long, Row>) i -> {
                double[] x = row(i);
                Object[] v = new Object[COLS + 1];
                v[0] = i;
                for (int j = 0; j < COLS; j++) {
                    v[j + 1] = x[j];
                }
                return RowFactory.create(v);
            }, Encoders.row(schema));
            stage.transform(frame.limit(cores * 8)).count();          // warm-up: broadcast, load, JIT
            try (HeapPeak heap = new HeapPeak()) {
                double c0 = cpuSeconds();
                long t0 = System.nanoTime();
                double sum = stage.transform(frame).agg(functions.sum("backstep_nats")).first().getDouble(0);
                return new Run("Spark local[" + cores + "]", (System.nanoTime() - t0) / 1e9, cpuSeconds() - c0, sum, heap.megabytes());
            }
        } finally {
            spark.stop();
        }
    }

    static double startup() {
        long t0 = System.nanoTime();
        SparkSession s = SparkSession.builder().master("local[2]").appName("backstep-startup")
                .config("spark.ui.enabled", "false").config("spark.driver.host", "127.0.0.1")
                .config("spark.driver.bindAddress", "127.0.0.1").getOrCreate();
        s.range(0, 10, 1, 2).count();
        double secs = (System.nanoTime() - t0) / 1e9;
        s.stop();
        return secs;
    }

    public static void main(String[] args) throws Exception {
        int rows = Integer.parseInt(args[0]);
        int rounds = args.length > 1 ? Integer.parseInt(args[1]) : 2;
        int k = args.length > 2 ? Integer.parseInt(args[2]) : 4;
        Path out = Path.of(args.length > 3 ? args[3] : "spark-scoring.txt");
        StringBuilder report = new StringBuilder();
        String load0 = loadAverage();
        double firstStartup = startup();
        double secondStartup = startup();

        long f0 = System.nanoTime();
        DiffusionModel model = Backstep.builder().steps(100).hidden(64, 64).epochs(20).threads(1).seed(SEED).fit(table(10_000_000L, 2000));
        double fitSecs = (System.nanoTime() - f0) / 1e9;
        BackstepModel stage = BackstepModel.of(model).setRowKeyCol("reading_id").setSeed(SEED).setScoreDraws(k)
                .setInputCols(names().toArray(String[]::new));
        single(model, Math.min(rows, 500), k);                         // warm-up
        batched(model, Math.min(rows, 500), k);

        List<Run> runs = new ArrayList<>();
        for (int round = 0; round < rounds; round++) {
            runs.add(single(model, rows, k));
            runs.add(spark(stage, 1, rows));
            runs.add(spark(stage, 2, rows));
            runs.add(batched(model, rows, k));
        }
        String load1 = loadAverage();

        report.append("Backstep on Spark: scoring throughput (SparkScoringBenchmark, diffusion-spark/bench.sh)\n\n");
        report.append(String.format(Locale.ROOT, "rows %,d x %d continuous columns (generated per row from its index), "
                + "Monte Carlo bound with K = %d steps per row, row key seeds%n", rows, COLS, k));
        report.append(String.format(Locale.ROOT, "model: T = 100, hidden 64,64, fitted on 2,000 rows in %.1f s (1 thread)%n", fitSecs));
        report.append("Spark ").append(org.apache.spark.package$.MODULE$.SPARK_VERSION()).append(", Java ")
                .append(System.getProperty("java.version")).append(", ").append(System.getProperty("os.name")).append(' ')
                .append(System.getProperty("os.version")).append(' ').append(System.getProperty("os.arch")).append(", ")
                .append(Runtime.getRuntime().availableProcessors()).append(" processors, max heap ")
                .append(Runtime.getRuntime().maxMemory() >> 20).append(" MB\n");
        report.append("OPENBLAS_CORETYPE=").append(System.getenv("OPENBLAS_CORETYPE")).append(", OMP_NUM_THREADS=")
                .append(System.getenv("OMP_NUM_THREADS")).append('\n');
        report.append("load average before: ").append(load0).append("; after: ").append(load1).append('\n');
        report.append("The machine was shared with other work while this ran; wall times swing with it.\n\n");
        report.append(String.format(Locale.ROOT, "Spark session start-up (local[2], first job of 10 rows): first %.1f s, second %.1f s%n%n",
                firstStartup, secondStartup));
        report.append(String.format(Locale.ROOT, "%-34s %5s %9s %9s %11s %10s %8s%n", "run", "round", "wall s", "cpu s",
                "rows/s", "sum nats", "heap MB"));
        for (int i = 0; i < runs.size(); i++) {
            Run r = runs.get(i);
            report.append(String.format(Locale.ROOT, "%-34s %5d %9.2f %9.2f %11.0f %10.1f %8d%n", r.name, i / 4 + 1, r.seconds,
                    r.cpu, rows / r.seconds, r.sum, r.heapMb));
        }
        double single = best(runs, "single JVM, one row per call");
        double one = best(runs, "Spark local[1]");
        double two = best(runs, "Spark local[2]");
        double batch = best(runs, "single JVM, all rows in one call");
        report.append('\n');
        report.append(String.format(Locale.ROOT, "best of %d rounds, rows per second: single JVM one row per call %.0f; Spark local[1] %.0f; "
                + "Spark local[2] %.0f; single JVM batched %.0f%n", rounds, rows / single, rows / one, rows / two, rows / batch));
        report.append(String.format(Locale.ROOT, "Spark local[1] / single JVM (same one-row calls): %.2f (target 0.80)%n", single / one));
        report.append(String.format(Locale.ROOT, "Spark overhead per row at 1 core: %.1f us (wall, local[1] minus single JVM)%n",
                (one - single) / rows * 1e6));
        report.append(String.format(Locale.ROOT, "scaling 1 -> 2 cores: %.2f (target 1.60)%n", one / two));
        report.append(String.format(Locale.ROOT, "one-row calls against the core's batched call: %.2f times the time%n", single / batch));
        double singleCpu = bestCpu(runs, "single JVM, one row per call");
        double oneCpu = bestCpu(runs, "Spark local[1]");
        double twoCpu = bestCpu(runs, "Spark local[2]");
        report.append(String.format(Locale.ROOT, "by process CPU time (steadier on a shared machine): Spark local[1] / single JVM %.2f; "
                + "Spark local[2] / single JVM %.2f; Spark overhead per row %.1f us of CPU%n", singleCpu / oneCpu,
                singleCpu / twoCpu, (oneCpu - singleCpu) / rows * 1e6));
        String text = report.toString();
        Path tmp = Files.createTempFile(out.toAbsolutePath().getParent(), "spark-scoring", ".tmp");
        Files.writeString(tmp, text, StandardCharsets.UTF_8);
        Files.move(tmp, out, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
        System.out.print(text);
    }

    static double bestCpu(List<Run> runs, String name) {
        return runs.stream().filter(r -> r.name.equals(name)).mapToDouble(Run::cpu).min().orElseThrow();
    }

    static double best(List<Run> runs, String name) {
        return runs.stream().filter(r -> r.name.equals(name)).mapToDouble(Run::seconds).min().orElseThrow();
    }
}
