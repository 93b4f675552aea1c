package org.backstep.spark;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.SplittableRandom;

import org.apache.spark.TaskContext;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.JavaSparkContext;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.Backstep;
import org.backstep.internal.net.AdamOptimizer;
import org.backstep.internal.train.GradientShare;
import org.backstep.internal.train.Trainer;
import org.backstep.option.FitOptions;
import org.backstep.option.TrainingBudget;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.TrainingListener;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * Fitting from a DataFrame, two ways, measured in one process (Spark local[2]): (a) a uniform
 * sample collected to the driver and trained there, against (b) synchronous data-parallel training
 * over the executors: each step broadcasts the weights, each partition computes the gradient of
 * its share of the minibatch (B / partitions rows drawn from its own rows, kept in model space in
 * Spark's cache), a treeAggregate sums the gradients, and the driver applies the Adam step. Both
 * use the same gradient code ({@code GradientShare}, internal), the same Adam, the same initial
 * weights, minibatch and learning rate, and the same column transforms (computed over the whole
 * table by {@link WholeTableStatistics}); they differ in where the gradient is computed and in
 * which rows a minibatch may hold. A third run times (b)'s Spark job with no gradient work (the
 * overhead of a step's job alone). The runs take turns, steps/{@value #EVERY_PARTS} steps each
 * (A B C A B C ...), so that a busy spell of the shared machine falls on all of them alike; after
 * each turn the Monte Carlo bound of each run's current
 * weights is taken on held-out rows (not in the table; common random numbers), outside the step
 * times. Also timed: the core's own trainer ({@code Trainer.fit} with the transforms given) on the
 * largest sample, to show that the driver loop of (a) runs at the core's pace.
 *
 * <p>Not a unit test: {@code diffusion-bench/spark-fitting.sh} runs it and writes
 * {@code diffusion-bench/results/spark-fitting.txt}. Arguments:
 * {@code ROWS,ROWS.. STEPS HIDDEN OUT [TIMING_HIDDEN TIMING_STEPS]}.
 */
public final class SparkFittingMeasurement {

    static final int BATCH = 256;
    static final int PARTITIONS = 2;
    static final int HELD_OUT = 2_000;
    static final int DRAWS = 8;
    static final int EVERY_PARTS = 12;

    /** The options and transforms the executors' shares are built with (local mode: this JVM). */
    static final class Config {
        static volatile FitOptions options;
        static volatile TableTransform transform;
        static volatile int generation;
        private static final ThreadLocal<GradientShare> SHARE = new ThreadLocal<>();
        private static final ThreadLocal<Integer> SHARE_GENERATION = new ThreadLocal<>();

        static GradientShare share(int rows) {
            GradientShare s = SHARE.get();
            if (s == null || SHARE_GENERATION.get() != generation) {
                if (s != null) {
                    s.close();
                }
                s = GradientShare.of(options, transform, rows, BATCH, 1);
                SHARE.set(s);
                SHARE_GENERATION.set(generation);
            }
            return s;
        }
    }

    private final StringBuilder out = new StringBuilder();

    private SparkFittingMeasurement() {
    }

    private void line(String format, Object... args) {
        String s = String.format(Locale.ROOT, format, args);
        out.append(s).append('\n');
        System.out.println(s);
    }

    static StructType schema() {
        List<StructField> f = new ArrayList<>();
        f.add(DataTypes.createStructField("id", DataTypes.LongType, false));
        for (String n : SparkScoringBenchmark.names()) {
            f.add(DataTypes.createStructField(n, DataTypes.DoubleType, false));
        }
        return new StructType(f.toArray(StructField[]::new));
    }

    static Dataset<Row> frame(SparkSession spark, long rows) {
        JavaRDD<Row> rdd = spark.range(0, rows, 1, PARTITIONS).javaRDD().map(id -> {
            double[] x = SparkScoringBenchmark.row(id);
            Object[] v = new Object[x.length + 1];
            v[0] = id;
            for (int j = 0; j < x.length; j++) {
                v[j + 1] = x[j];
            }
            return RowFactory.create(v);
        });
        return spark.createDataFrame(rdd, schema());
    }

    /** A run's record: its step seconds, and the bound at each evaluation. */
    record Run(String name, long rows, double setupSeconds, double[] stepSeconds, double[] bounds, int every) {
        double meanStep() {
            return Arrays.stream(stepSeconds).average().orElse(Double.NaN);
        }

        double medianStep() {
            double[] s = stepSeconds.clone();
            Arrays.sort(s);
            return s[s.length / 2];
        }

        /** Steps to the first evaluation at or below the target, or -1. */
        int stepsTo(double target) {
            for (int e = 0; e < bounds.length; e++) {
                if (bounds[e] <= target) {
                    return e * every;
                }
            }
            return -1;
        }
    }

    private static float[] step(AdamOptimizer adam, float[] weights, float[] gradient, double rate) {
        INDArray p = Nd4j.createFromArray(weights);
        adam.stepInPlace(p, Nd4j.createFromArray(gradient), rate);
        return p.toFloatVector();
    }

    /** One way of training, advanced a few steps at a time so that the ways take turns on the machine. */
    abstract static class Way {
        final String name;
        final long rows;
        final FitOptions options;
        final TableTransform transform;
        final int total;
        double setup;
        float[] w;
        final AdamOptimizer adam;
        final double[] times;
        final List<Double> bounds = new ArrayList<>();
        int done;

        Way(String name, long rows, FitOptions options, TableTransform transform, int total) {
            this.name = name;
            this.rows = rows;
            this.options = options;
            this.transform = transform;
            this.total = total;
            this.w = GradientShare.initialWeights(options, transform);
            this.adam = GradientShare.optimizer(options, transform);
            this.times = new double[total];
        }

        abstract float[] gradient(int step);

        void advance(int count) {
            for (int i = 0; i < count && done < total; i++, done++) {
                long t0 = System.nanoTime();
                float[] g = gradient(done);
                w = step(adam, w, g, options.learningRateSchedule().rate(options.learningRate(), done, total));
                times[done] = (System.nanoTime() - t0) / 1e9;
            }
        }

        void evaluate(float[] heldOut) {
            bounds.add(GradientShare.bound(options, transform, w, heldOut, HELD_OUT, DRAWS, 77L, 2));
        }

        Run run(int every) {
            return new Run(name, rows, setup, times, bounds.stream().mapToDouble(Double::doubleValue).toArray(), every);
        }

        void close() {
        }
    }

    /** (a): minibatches drawn from the sample on the driver, gradient on 2 threads, as the core's trainer. */
    static final class OnDriver extends Way {
        private final float[] x;
        private final int n;
        private final int d;
        private final SplittableRandom rng;
        private final float[] batch;
        private final GradientShare share;

        OnDriver(FitOptions options, TableTransform transform, Table sample, double collectSeconds, int total,
                 long rows) {
            super("(a) sample of " + sample.rows() + " on the driver", rows, options, transform, total);
            setup = collectSeconds;
            x = GradientShare.modelRows(transform, sample);
            d = transform.modelColumns();
            n = sample.rows();
            rng = new SplittableRandom(options.seed());
            batch = new float[BATCH * d];
            share = GradientShare.of(options, transform, BATCH, BATCH, 2);
        }

        @Override
        float[] gradient(int step) {
            for (int r = 0; r < BATCH; r++) {
                System.arraycopy(x, rng.nextInt(n) * d, batch, r * d, d);
            }
            float[] g = new float[w.length];
            share.addGradientInPlace(w, batch, rng.nextLong(), g);
            return g;
        }

        @Override
        void close() {
            share.close();
        }
    }

    /**
     * (b): each step a Spark job: broadcast the weights, the gradient of a share per partition,
     * treeAggregate, Adam on the driver. With {@code work} false, the same job without the
     * gradient (each partition returns zeros): the overhead of a step's job alone.
     */
    static final class DataParallel extends Way {
        private final JavaSparkContext jsc;
        private final JavaRDD<float[]> blocks;
        private final boolean work;

        DataParallel(SparkSession spark, Dataset<Row> frame, FitOptions options, TableTransform transform, int total,
                     long rows, boolean work) {
            super(work ? "(b) data-parallel over all rows" : "(b) its Spark job alone, no gradient", rows, options,
                    transform, total);
            this.work = work;
            jsc = JavaSparkContext.fromSparkContext(spark.sparkContext());
            Config.options = options;
            Config.transform = transform;
            Config.generation++;
            int d = transform.modelColumns();
            String[] cols = SparkScoringBenchmark.names().toArray(String[]::new);
            ColumnMatch match = ColumnMatch.of(frame.schema(), cols, List.of(cols), transform.kinds(), "");
            long t0 = System.nanoTime();
            blocks = frame.javaRDD().mapPartitions((Iterator<Row> it) -> {
                List<double[]> cells = new ArrayList<>();
                ColumnMatch.RowName where = new ColumnMatch.RowName(TaskContext.getPartitionId(), -1);
                while (it.hasNext()) {
                    cells.add(match.cells(it.next(), where));
                }
                TableTransform here = Config.transform;     // local mode: this JVM's (a cluster would broadcast it once)
                Table t = Table.of(List.of(cols), here.kinds(), cells.toArray(double[][]::new));
                return List.of(GradientShare.modelRows(here, t)).iterator();
            }).cache();
            long cached = blocks.map(b -> (long) b.length).reduce(Long::sum) / d;
            if (cached != rows) {
                throw new IllegalStateException("cached " + cached + " rows of " + rows);
            }
            setup = (System.nanoTime() - t0) / 1e9;
        }

        @Override
        float[] gradient(int step) {
            Broadcast<float[]> weights = jsc.broadcast(w);
            long seed = options.seed() * 1_000_003L + step;
            int d = transform.modelColumns();
            int share = BATCH / PARTITIONS;
            boolean compute = work;
            float[] g = blocks.treeAggregate(new float[w.length], (acc, block) -> {
                float[] current = weights.value();
                if (!compute) {
                    return acc;
                }
                int n = block.length / d;
                SplittableRandom rng = new SplittableRandom(seed * 31 + TaskContext.getPartitionId());
                float[] rowsOf = new float[share * d];
                for (int r = 0; r < share; r++) {
                    System.arraycopy(block, rng.nextInt(n) * d, rowsOf, r * d, d);
                }
                Config.share(share).addGradientInPlace(current, rowsOf, rng.nextLong(), acc);
                return acc;
            }, (a, b) -> {
                for (int i = 0; i < a.length; i++) {
                    a[i] += b[i];
                }
                return a;
            }, 2);
            weights.destroy();
            return g;
        }

        @Override
        void close() {
            blocks.unpersist();
        }
    }

    /** Runs the ways in turns, {@code every} steps each, evaluating all of them after each turn. */
    private static List<Run> inTurns(List<Way> ways, int steps, int every, float[] heldOut) {
        for (Way w : ways) {
            w.evaluate(heldOut);
        }
        for (int done = 0; done < steps; done += every) {
            for (Way w : ways) {
                w.advance(every);
            }
            for (Way w : ways) {
                w.evaluate(heldOut);
            }
        }
        List<Run> runs = new ArrayList<>();
        for (Way w : ways) {
            w.close();
            runs.add(w.run(every));
        }
        return runs;
    }

    private static Table sample(Dataset<Row> frame, long rows, int size) {
        double fraction = Math.min(1.0, 1.2 * size / rows);
        List<Row> got = frame.sample(false, fraction, 5L).limit(size).collectAsList();
        double[][] x = new double[got.size()][];
        for (int i = 0; i < x.length; i++) {
            double[] c = new double[SparkScoringBenchmark.COLS];
            for (int j = 0; j < c.length; j++) {
                c[j] = got.get(i).getDouble(j + 1);
            }
            x[i] = c;
        }
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < SparkScoringBenchmark.COLS; j++) {
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(SparkScoringBenchmark.names(), kinds, x);
    }

    private static FitOptions options(int[] hidden) {
        // GradientShare supports standardized coordinates without a closed-form part only (the defaults before issue 11's flip)
        return Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED)
                .baseline(org.backstep.option.Baseline.NONE).steps(100).hidden(hidden).seed(7).threads(2).options();
    }

    private void table(List<Run> runs) {
        line("%-44s %10s %9s %9s %9s  %s", "run", "table rows", "setup s", "mean ms", "median ms",
                "held-out bound (nats per row) at steps 0, " + runs.get(0).every() + ", ...");
        for (Run r : runs) {
            StringBuilder b = new StringBuilder();
            for (double v : r.bounds()) {
                b.append(String.format(Locale.ROOT, " %.3f", v));
            }
            line("%-44s %,10d %9.2f %9.2f %9.2f %s", r.name(), r.rows(), r.setupSeconds(), 1e3 * r.meanStep(),
                    1e3 * r.medianStep(), b);
        }
    }

    public static void main(String[] args) throws IOException {
        long[] sizes = Arrays.stream(args[0].split(",")).mapToLong(Long::parseLong).toArray();
        int steps = Integer.parseInt(args[1]);
        int[] hidden = Arrays.stream(args[2].split(",")).mapToInt(Integer::parseInt).toArray();
        Path file = Path.of(args[3]);
        int[] timingHidden = args.length > 4 ? Arrays.stream(args[4].split(",")).mapToInt(Integer::parseInt).toArray() : null;
        int timingSteps = args.length > 5 ? Integer.parseInt(args[5]) : 100;
        new SparkFittingMeasurement().run(sizes, steps, hidden, file, timingHidden, timingSteps);
    }

    private void run(long[] sizes, int steps, int[] hidden, Path file, int[] timingHidden, int timingSteps)
            throws IOException {
        line("Backstep on Spark: fitting from a DataFrame, (a) a sample trained on the driver against (b) synchronous");
        line("data-parallel training over the executors (SparkFittingMeasurement, diffusion-bench/spark-fitting.sh)");
        line("");
        line("Java %s, %s %s %s, %d processors, max heap %d MB", System.getProperty("java.version"),
                System.getProperty("os.name"), System.getProperty("os.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors(), Runtime.getRuntime().maxMemory() >> 20);
        line("OPENBLAS_CORETYPE=%s, OMP_NUM_THREADS=%s", System.getenv("OPENBLAS_CORETYPE"), System.getenv("OMP_NUM_THREADS"));
        line("load average before: %s", SparkScoringBenchmark.loadAverage());
        SparkSession spark = SparkSession.builder().appName("backstep-fitting").master("local[" + PARTITIONS + "]")
                .config("spark.ui.enabled", "false").config("spark.driver.host", "127.0.0.1")
                .config("spark.driver.bindAddress", "127.0.0.1").getOrCreate();
        line("Spark %s, master local[%d], %d partitions; minibatch %d rows (%d per partition in (b)); T = 100,"
                + " hidden %s; Adam, learning rate and schedule of the core's defaults", spark.version(), PARTITIONS,
                PARTITIONS, BATCH, BATCH / PARTITIONS, Arrays.toString(hidden));
        line("rows: %d continuous columns, row i generated from (seed, i) in the job (an AR(1) chain across columns);"
                + " held-out: %d rows after the table's, Monte Carlo bound with %d steps per row, common random numbers",
                SparkScoringBenchmark.COLS, HELD_OUT, DRAWS);
        line("step times exclude the held-out evaluations; (b)'s setup is reading the table into Spark's cache in"
                + " model space, (a)'s is collecting the sample to the driver");
        line("");
        List<Run> all = new ArrayList<>();
        for (long rows : sizes) {
            Dataset<Row> frame = frame(spark, rows);
            String[] cols = SparkScoringBenchmark.names().toArray(String[]::new);
            List<ColumnKind> kinds = new ArrayList<>();
            for (int j = 0; j < cols.length; j++) {
                kinds.add(ColumnKind.CONTINUOUS);
            }
            long t0 = System.nanoTime();
            WholeTableStatistics.Result stats = WholeTableStatistics.of(frame, cols, List.of(cols), kinds, Set.of(), "");
            double statSeconds = (System.nanoTime() - t0) / 1e9;
            TableTransform transform = stats.transform();
            float[] heldOut = GradientShare.modelRows(transform, SparkScoringBenchmark.table(rows, HELD_OUT));
            FitOptions options = options(hidden);
            line("table of %,d rows: the transforms over every row (two passes of exact sums) took %.2f s", rows,
                    statSeconds);
            List<Way> ways = new ArrayList<>();
            for (int size : new int[] {10_000, 100_000}) {
                if (size > rows) {
                    continue;
                }
                long c0 = System.nanoTime();
                Table sample = sample(frame, rows, size);
                double collect = (System.nanoTime() - c0) / 1e9;
                ways.add(new OnDriver(options, transform, sample, collect, steps, rows));
            }
            ways.add(new DataParallel(spark, frame, options, transform, steps, rows, true));
            ways.add(new DataParallel(spark, frame, options, transform, steps, rows, false));
            int every = Math.max(1, steps / EVERY_PARTS);
            List<Run> runs = inTurns(ways, steps, every, heldOut);
            table(runs);
            all.addAll(runs);
            line("");
        }

        // ratios and the steps and time to a bound every run reaches
        double target = all.stream().filter(r -> !r.name().contains("alone"))
                .mapToDouble(r -> r.bounds()[r.bounds().length - 1]).max().orElseThrow();
        line("target: %.3f nats per row, the worst final bound of the runs above (every run reaches it)", target);
        line("%-44s %10s %14s %16s", "run", "table rows", "steps to target", "seconds to target");
        for (Run r : all) {
            if (r.name().contains("alone")) {
                continue;
            }
            int s = r.stepsTo(target);
            line("%-44s %,10d %14d %16.1f", r.name(), r.rows(), s, r.setupSeconds() + s * r.meanStep());
        }
        line("");
        for (long rows : sizes) {
            Run driver = all.stream().filter(r -> r.rows() == rows && r.name().startsWith("(a)")).reduce((x, y) -> y)
                    .orElseThrow();
            Run spread = all.stream().filter(r -> r.rows() == rows && r.name().startsWith("(b) data")).findFirst()
                    .orElseThrow();
            Run job = all.stream().filter(r -> r.rows() == rows && r.name().contains("alone")).findFirst().orElseThrow();
            line("table of %,d rows: (b) / (a) time per step %.1f (mean), %.1f (median); (b) - (a) = %.1f ms per step"
                    + " (median); the job alone %.1f ms (median)", rows, spread.meanStep() / driver.meanStep(),
                    spread.medianStep() / driver.medianStep(), 1e3 * (spread.medianStep() - driver.medianStep()),
                    1e3 * job.medianStep());
        }

        // the core's own trainer on the largest sample, for the pace of (a)'s loop
        long rows = sizes[sizes.length - 1];
        Dataset<Row> frame = frame(spark, rows);
        int size = (int) Math.min(100_000, rows);
        Table sample = sample(frame, rows, size);
        TableTransform transform = TableTransform.fit(sample, Set.of());
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE)
                .steps(100).hidden(hidden).seed(7).threads(2).checkpointFraction(0.0)
                .options();
        Trainer.Fitted fitted = Trainer.fit(options, sample, null, transform, TrainingListener.NONE, () -> false,
                TrainingBudget.updates(steps));
        line("the core's trainer (Trainer.fit, 2 threads, transforms given) on the sample of %,d: %d updates in %.2f s,"
                + " %.2f ms per update", size, fitted.updates(), fitted.updateSeconds(),
                1e3 * fitted.updateSeconds() / fitted.updates());

        if (timingHidden != null) {
            line("");
            line("time per step, hidden %s (the core's default network), %d steps each (evaluations outside the times):",
                    Arrays.toString(timingHidden), timingSteps);
            FitOptions big = options(timingHidden);
            List<Way> timingWays = new ArrayList<>();
            timingWays.add(new OnDriver(big, transform, sample, 0, timingSteps, rows));
            timingWays.add(new DataParallel(spark, frame, big, transform, timingSteps, rows, true));
            List<Run> timing = inTurns(timingWays, timingSteps, Math.max(1, timingSteps / 4), GradientShare.modelRows(
                    transform, SparkScoringBenchmark.table(rows, HELD_OUT)));
            table(timing);
            line("hidden %s: (b) / (a) time per step %.1f (median); (b) - (a) = %.1f ms per step",
                    Arrays.toString(timingHidden), timing.get(1).medianStep() / timing.get(0).medianStep(),
                    1e3 * (timing.get(1).medianStep() - timing.get(0).medianStep()));
        }
        line("");
        line("load average after: %s", SparkScoringBenchmark.loadAverage());
        spark.stop();
        Path tmp = file.resolveSibling(file.getFileName() + ".tmp");
        Files.writeString(tmp, out.toString(), StandardCharsets.UTF_8);
        Files.move(tmp, file, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
    }
}
