package org.backstep.spark;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

import org.apache.spark.api.java.function.MapFunction;
import org.apache.spark.sql.Column;
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

/**
 * Rows per second imputed and denoised through Spark local[1], with the rows sent to the core in
 * batches (each record with its own seed: {@code DiffusionModel.impute/denoise(.., long[])}, slices
 * of 256 rows) against one core call per row (what the module did before; here {@code batchRows}
 * = 1, so that each slice is one row), in one process, in turns. Not a unit test:
 * {@code diffusion-bench/spark-rowjobs.sh} runs it and writes
 * {@code diffusion-bench/results/spark-rowjobs.txt}.
 *
 * <p>Rows: those of {@link SparkScoringBenchmark} (20 correlated columns, row i from (seed, i)),
 * generated in the job; for imputation, cells i mod 20 and (i + 7) mod 20 of row i are missing.
 * Model: as the scoring benchmark's (T = 100, hidden 64,64). Imputation with {@code draws} draws on
 * the core's default 100 steps; denoising with {@code draws} draws and a noise of 0.3 per column.
 * Both modes give the same figures to float rounding: the sums of the cells on the same rows are
 * compared, and the run fails (after writing its report) when they differ by more than the sum over
 * the cells of {@link JobsTest#PLACE_ROUNDING} * max(1, |cell|), the per-cell tolerance of
 * {@code JobsTest} added up (triangle inequality; common practice, no source).
 *
 * <p>Arguments: {@code ROWS [DRAWS] [OUT]}; the one-row mode runs on ROWS / 10 rows.
 */
public final class SparkRowJobsBenchmark {

    private SparkRowJobsBenchmark() {
    }

    record Run(String job, String mode, int rows, double seconds, double cpu, double sum, double scale) {
    }

    static Dataset<Row> frame(SparkSession spark, int rows, boolean gaps) {
        List<StructField> f = new ArrayList<>();
        f.add(DataTypes.createStructField("reading_id", DataTypes.LongType, false));
        for (String n : SparkScoringBenchmark.names()) {
            f.add(DataTypes.createStructField(n, DataTypes.DoubleType, true));
        }
        StructType schema = new StructType(f.toArray(StructField[]::new));
        int cols = SparkScoringBenchmark.COLS;
        return spark.range(0, rows, 1, 4).map((MapFunction<Long, Row>) i -> {
            double[] x = SparkScoringBenchmark.row(i);
            Object[] v = new Object[cols + 1];
            v[0] = i;
            for (int j = 0; j < cols; j++) {
                boolean missing = gaps && (j == i % cols || j == (i + 7) % cols);
                v[j + 1] = missing ? null : x[j];
            }
            return RowFactory.create(v);
        }, Encoders.row(schema));
    }

    static Run run(BackstepModel stage, SparkSession spark, String job, String mode, int rows) {
        boolean impute = job.equals(BackstepParams.IMPUTE);
        Dataset<Row> frame = frame(spark, rows, impute);
        String suffix = impute ? RowJob.MEAN : RowJob.DENOISED;
        Column total = functions.lit(0.0);
        Column scale = functions.lit(0.0);                              // sum of max(1, |cell|)
        for (String n : SparkScoringBenchmark.names()) {
            total = total.plus(functions.col(n + suffix));
            scale = scale.plus(functions.greatest(functions.lit(1.0), functions.abs(functions.col(n + suffix))));
        }
        stage.transform(frame(spark, 8, impute)).count();               // warm-up: broadcast, load, JIT
        double c0 = SparkScoringBenchmark.cpuSeconds();
        long t0 = System.nanoTime();
        Row sums = stage.transform(frame).agg(functions.sum(total), functions.sum(scale)).first();
        return new Run(job, mode, rows, (System.nanoTime() - t0) / 1e9, SparkScoringBenchmark.cpuSeconds() - c0,
                sums.getDouble(0), sums.getDouble(1));
    }

    public static void main(String[] args) throws Exception {
        int rows = Integer.parseInt(args[0]);
        int draws = args.length > 1 ? Integer.parseInt(args[1]) : 5;
        Path out = Path.of(args.length > 2 ? args[2] : "spark-rowjobs.txt");
        int oneRows = Math.max(8, rows / 10);
        String load0 = SparkScoringBenchmark.loadAverage();
        long f0 = System.nanoTime();
        // standardized maps: the benchmark denoises, which needs them (Marginals Javadoc)
        DiffusionModel model = Backstep.builder().steps(100).hidden(64, 64).epochs(20).threads(1)
                .marginals(org.backstep.option.Marginals.STANDARDIZED)
                .seed(SparkScoringBenchmark.SEED).fit(SparkScoringBenchmark.table(10_000_000L, 2000));
        double fitSecs = (System.nanoTime() - f0) / 1e9;
        double[] noise = new double[SparkScoringBenchmark.COLS];
        java.util.Arrays.fill(noise, 0.3);
        SparkSession spark = SparkSession.builder().master("local[1]").appName("backstep-rowjobs")
                .config("spark.ui.enabled", "false").config("spark.driver.host", "127.0.0.1")
                .config("spark.driver.bindAddress", "127.0.0.1").getOrCreate();
        List<Run> runs = new ArrayList<>();
        try {
            for (String job : List.of(BackstepParams.IMPUTE, BackstepParams.DENOISE)) {
                BackstepModel stage = BackstepModel.of(model).setRowKeyCol("reading_id").setSeed(SparkScoringBenchmark.SEED)
                        .setInputCols(SparkScoringBenchmark.names().toArray(String[]::new)).setJob(job).setDraws(draws)
                        .setNoiseSd(noise);
                // in turns: batches, one row per call, and the batches again on the one-row mode's rows (for the sums)
                runs.add(run(stage.copy(org.apache.spark.ml.param.ParamMap.empty()).setBatchRows(256), spark, job,
                        "batches of 256", rows));
                runs.add(run(stage.copy(org.apache.spark.ml.param.ParamMap.empty()).setBatchRows(1), spark, job,
                        "one row per call", oneRows));
                runs.add(run(stage.copy(org.apache.spark.ml.param.ParamMap.empty()).setBatchRows(256), spark, job,
                        "batches of 256", oneRows));
            }
        } finally {
            spark.stop();
        }
        String load1 = SparkScoringBenchmark.loadAverage();
        StringBuilder r = new StringBuilder();
        r.append("Backstep on Spark: imputation and denoising throughput (SparkRowJobsBenchmark, diffusion-bench/spark-rowjobs.sh)\n\n");
        r.append(String.format(Locale.ROOT, "rows %,d (one row per call: %,d) x %d continuous columns, generated per row from its index"
                + " in the job; impute: 2 of 20 cells missing per row, %d draws, the core's default steps (100 = T);"
                + " denoise: noise 0.3 per column, %d draws; row key seeds; Spark local[1] (one task core)%n",
                rows, oneRows, SparkScoringBenchmark.COLS, draws, draws));
        r.append(String.format(Locale.ROOT, "model: T = 100, hidden 64,64, fitted on 2,000 rows in %.1f s (1 thread)%n", fitSecs));
        r.append("before: batchRows = 1, so each core call takes one row (as the module did before the per-record-seed calls);"
                + " after: batchRows = 256, one core call per slice of 256 rows, each record with its own seed\n");
        r.append("Spark ").append(org.apache.spark.package$.MODULE$.SPARK_VERSION()).append(", Java ")
                .append(System.getProperty("java.version")).append(", ").append(System.getProperty("os.name")).append(' ')
                .append(System.getProperty("os.version")).append(' ').append(System.getProperty("os.arch")).append(", ")
                .append(Runtime.getRuntime().availableProcessors()).append(" processors\n");
        r.append("OPENBLAS_CORETYPE=").append(System.getenv("OPENBLAS_CORETYPE")).append(", OMP_NUM_THREADS=")
                .append(System.getenv("OMP_NUM_THREADS")).append('\n');
        r.append("load average before: ").append(load0).append("; after: ").append(load1).append('\n');
        r.append("The machine was shared with other work while this ran: absolute rates swing with it; the ratios come\n"
                + "from runs in turns in one process.\n\n");
        r.append(String.format(Locale.ROOT, "%-8s %-18s %9s %9s %9s %9s %16s%n", "job", "mode", "rows", "wall s", "cpu s",
                "rows/s", "sum of cells"));
        for (Run x : runs) {
            r.append(String.format(Locale.ROOT, "%-8s %-18s %,9d %9.2f %9.2f %9.1f %16.4f%n", x.job, x.mode, x.rows,
                    x.seconds, x.cpu, x.rows / x.seconds, x.sum));
        }
        r.append('\n');
        List<String> apart = new ArrayList<>();
        for (int j = 0; j < runs.size(); j += 3) {
            Run batch = runs.get(j);
            Run one = runs.get(j + 1);
            Run sameRows = runs.get(j + 2);
            r.append(String.format(Locale.ROOT, "%s: %.1f rows/s in batches, %.1f one row per call: %.1f times the rows per second"
                    + " (by CPU time %.1f); sums on the same %,d rows %.4f and %.4f, difference %.3g (allowed %.3g)%n", batch.job,
                    batch.rows / batch.seconds, one.rows / one.seconds, (batch.rows / batch.seconds) / (one.rows / one.seconds),
                    (one.cpu / one.rows) / (batch.cpu / batch.rows), one.rows, one.sum, sameRows.sum,
                    Math.abs(one.sum - sameRows.sum), JobsTest.PLACE_ROUNDING * one.scale));
            if (!(Math.abs(one.sum - sameRows.sum) <= JobsTest.PLACE_ROUNDING * one.scale)) {
                apart.add(batch.job);
            }
        }
        String text = r.toString();
        Path tmp = Files.createTempFile(out.toAbsolutePath().getParent(), "spark-rowjobs", ".tmp");
        Files.writeString(tmp, text, StandardCharsets.UTF_8);
        Files.move(tmp, out, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
        System.out.print(text);
        if (!apart.isEmpty()) {
            throw new IllegalStateException("batched and one-row sums differ beyond the rounding allowed for " + apart);
        }
    }
}
