package org.backstep.spark;

import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;
import java.util.List;

import org.apache.hadoop.fs.FileSystem;
import org.apache.spark.SparkContext;
import org.apache.spark.api.java.JavaSparkContext;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.ml.Model;
import org.apache.spark.ml.param.DoubleParam;
import org.apache.spark.ml.param.ParamMap;
import org.apache.spark.ml.util.DefaultParamsReader;
import org.apache.spark.ml.util.DefaultParamsWriter;
import org.apache.spark.ml.util.Identifiable;
import org.apache.spark.ml.util.MLReader;
import org.apache.spark.ml.util.MLWritable;
import org.apache.spark.ml.util.MLWriter;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Encoders;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.DiffusionModel;
import org.backstep.report.DriftReport;

/**
 * A fitted Backstep model as a Spark ML Transformer: {@link #transform(Dataset)} appends the
 * columns of the chosen job (score and flag, the culprit columns of flagged rows, imputation, or
 * denoising; see {@link BackstepParams}) to every row of a DataFrame; {@link #drift(Dataset, Dataset)}
 * tests whether a new DataFrame differs from a reference one; {@link #sample(SparkSession, long, int, long)} draws synthetic rows
 * as a DataFrame spread over partitions. Made by {@link BackstepEstimator#fit(Dataset)}, or around
 * a model fitted in one JVM by {@link #of(DiffusionModel)} or {@link #load(Path)}.
 *
 * <p>What is sent where: the model file's bytes are broadcast once per transform (Spark ships a
 * broadcast to each executor once); each executor JVM loads the model once, keyed by the SHA-256 of
 * the bytes ({@code ExecutorModels}), whatever the number of tasks. Rows stay in their partitions;
 * each partition is read in batches of {@code batchRows} rows, each row with its own random stream
 * ({@link RowSeeds}), on {@code spark.task.cpus} threads; scoring, imputation and denoising send a
 * batch to the core as matrices (each record with its own seed), a flagged row's surprisal one row
 * per call.
 *
 * <p>Saved with Spark ML's writer: the folder holds Spark's {@code metadata} (every Param) and the
 * Backstep model file, {@value #MODEL_FILE}, byte for byte.
 *
 * <p>Cautions: imputed, denoised and synthetic values are not measurements; synthetic rows can
 * reproduce training rows; a likelihood score ranks records and is not a calibrated probability of
 * a fault; for safety-, health- or compliance-critical decisions, defer to local regulations and
 * qualified review.
 */
public final class BackstepModel extends Model<BackstepModel> implements BackstepParams<BackstepModel>, MLWritable {

    private static final long serialVersionUID = 1L;

    /** The name of the Backstep model file inside a saved model's folder. */
    public static final String MODEL_FILE = "backstep-model.zip";

    private final String uid;
    private final byte[] modelBytes;
    private final String sha256;
    private final Defs defs;
    private final DoubleParam threshold;
    private transient Broadcast<byte[]> broadcast;
    private transient SparkContext broadcastContext;

    BackstepModel(String uid, byte[] modelBytes) {
        this.uid = uid;
        this.modelBytes = modelBytes.clone();
        this.sha256 = sha256(this.modelBytes);
        this.defs = new Defs(this);
        this.threshold = new DoubleParam(this, "threshold",
                "the score past which a row is flagged, in nats; NaN: no flag column");
        setDefault(threshold, (Object) Double.NaN);
        setDefault(inputCols(), CoreCalls.names(model()).toArray(String[]::new));
    }

    /**
     * Wraps a model fitted in one JVM.
     *
     * @param model the model (not modified)
     * @return the transformer, with default Params
     */
    public static BackstepModel of(DiffusionModel model) {
        if (model == null) {
            throw new IllegalArgumentException("model is null");
        }
        return new BackstepModel(Identifiable.randomUID("backstep"), CoreCalls.toBytes(model));
    }

    /**
     * Wraps a Backstep model file ({@link DiffusionModel#save(Path)}).
     *
     * @param modelFile the file
     * @return the transformer, with default Params
     * @throws IOException if the file cannot be read
     * @throws org.backstep.io.ModelFileException if it is not a valid model file
     */
    public static BackstepModel load(Path modelFile) throws IOException {
        byte[] bytes = Files.readAllBytes(modelFile);
        DiffusionModel.load(modelFile);      // refuses a bad file here, naming the part
        return new BackstepModel(Identifiable.randomUID("backstep"), bytes);
    }

    @Override
    public String uid() {
        return uid;
    }

    @Override
    public Defs paramDefs() {
        return defs;
    }

    /** @return the Param: the flag threshold in nats, NaN for none */
    public DoubleParam threshold() {
        return threshold;
    }

    /** @param nats the score past which a row is flagged; NaN for no flag column @return this */
    public BackstepModel setThreshold(double nats) {
        set(threshold, (Object) nats);
        return this;
    }

    /**
     * Screening: a copy of this model whose threshold is the {@code quantile}-quantile of the scores
     * of held-out rows (rows not trained on), scored through Spark as {@link #transform(Dataset)}
     * scores rows (same seed, row keys and {@code scoreDraws}); the quantile is the empirical one
     * of Hyndman &amp; Fan (1996), type 7 (commons-math3). The scores are collected to the driver.
     *
     * <p>Caution: the flag ranks records against held-out ones; it is not a calibrated probability
     * of a fault.
     *
     * @param heldOut complete rows not trained on, at least {@link BackstepEstimator#MIN_HELD_OUT}
     * @param quantile in (0, 1), e.g. 0.99
     * @return a copy with the threshold set and the job set to score (kept at attribute if it was)
     * @throws IllegalArgumentException naming the quantile or the held-out row count
     */
    public BackstepModel screenAgainst(Dataset<?> heldOut, double quantile) {
        if (!(quantile > 0 && quantile < 1)) {
            throw new IllegalArgumentException("quantile is " + quantile + "; expected a number in (0, 1)");
        }
        String keep = ATTRIBUTE.equalsIgnoreCase(getOrDefault(job())) ? ATTRIBUTE : SCORE;
        BackstepModel scorer = copy(ParamMap.empty()).setJob(SCORE).setThreshold(Double.NaN);
        String col = scorer.getOrDefault(outputCol());
        double[] scores = scorer.transform(heldOut).select(col).collectAsList().stream()
                .mapToDouble(r -> r.getDouble(0)).toArray();
        if (scores.length < BackstepEstimator.MIN_HELD_OUT) {
            throw new IllegalArgumentException("heldOut has " + scores.length + " rows; expected at least "
                    + BackstepEstimator.MIN_HELD_OUT);
        }
        double t = new org.apache.commons.math3.stat.descriptive.rank.Percentile()
                .withEstimationType(org.apache.commons.math3.stat.descriptive.rank.Percentile.EstimationType.R_7)
                .evaluate(scores, 100.0 * quantile);
        return copy(ParamMap.empty()).setJob(keep).setThreshold(t);
    }

    /** @return the model, loaded in this JVM (once; shared with the transforms run here) */
    public DiffusionModel model() {
        return ExecutorModels.get(sha256, () -> modelBytes, 0);
    }

    /** @return a copy of the model file's bytes */
    public byte[] modelFileBytes() {
        return modelBytes.clone();
    }

    /** @return the hex SHA-256 of the model file's bytes */
    public String modelSha256() {
        return sha256;
    }

    private ColumnMatch match(StructType schema) {
        DiffusionModel m = model();
        return ColumnMatch.of(schema, getOrDefault(inputCols()), CoreCalls.names(m), CoreCalls.kinds(m),
                CoreCalls.categories(m), getOrDefault(rowKeyCol()));
    }

    @Override
    public StructType transformSchema(StructType schema) {
        RowJob.Kind kind = checkJob();
        ColumnMatch m = match(schema);
        return RowJob.outputSchema(schema, RowJob.addedFields(kind, m, getOrDefault(outputCol()),
                getOrDefault(flagCol()), (Double) getOrDefault(threshold), getOrDefault(culpritCol()),
                getOrDefault(surprisalCol()), (Boolean) getOrDefault(keepDraws())));
    }

    private RowJob.Kind checkJob() {
        RowJob.Kind kind = RowJob.check(this, CoreCalls.names(model()).size());
        if (kind == RowJob.Kind.ATTRIBUTE && Double.isNaN((Double) getOrDefault(threshold))) {
            throw new IllegalArgumentException("job is 'attribute' and threshold is NaN; expected a threshold in nats "
                    + "(setThreshold, or screenAgainst held-out rows)");
        }
        return kind;
    }

    @Override
    public Dataset<Row> transform(Dataset<?> dataset) {
        StructType out = transformSchema(dataset.schema());
        RowJob job = job(dataset.schema(), checkJob());
        return dataset.toDF().mapPartitions(job, Encoders.row(out));
    }

    private RowJob job(StructType schema, RowJob.Kind kind) {
        return new RowJob(broadcastBytes(), sha256, match(schema), kind,
                (Long) getOrDefault(seed()), (Integer) getOrDefault(scoreDraws()), (Integer) getOrDefault(draws()),
                (Double) getOrDefault(level()), getOrDefault(noiseSd()), (Double) getOrDefault(threshold),
                (Integer) getOrDefault(batchRows()), (Integer) getOrDefault(culprits()),
                new int[] {(Integer) getOrDefault(surprisalDraws()), (Integer) getOrDefault(surprisalSteps()),
                        (Integer) getOrDefault(surprisalRounds())}, (Boolean) getOrDefault(keepDraws()));
    }

    /**
     * Whether a new batch of rows differs from a reference batch: the core's drift tests
     * ({@link DriftReport}: a two-sample Kolmogorov-Smirnov test on the rows' scores, one test per
     * column, Holm's adjustment). The scores are computed on the executors, partition by partition
     * in batches, with common random numbers (every row shares the draws of {@link #seed()}, so a
     * row's score does not depend on its partition; {@code DiffusionModel.screeningScores}) by the
     * bound {@link #scoreDraws()} names (0: exact; the core's own drift default is a Monte Carlo
     * bound of {@code Defaults.SCREENING_DRAWS} draws); then each row's model cells and score (one
     * double per model column and one more) are collected to the driver, which runs the tests. The
     * report equals {@code model().drift(reference, batch, Defaults.drift().withBound(..), seed)} on
     * the same rows in one JVM. The notes count rows in the order they were collected.
     *
     * <p>Driver memory: 8 (columns + 1) bytes per row of both batches, e.g. 336 MB for two batches
     * of a million rows of 20 columns.
     *
     * <p>Caution: a drift alarm says the batches differ; it does not say the new batch is faulty.
     *
     * @param reference rows the model is known to fit (e.g. held-out rows); complete, at least 2
     * @param batch the new rows; complete, at least 2
     * @return the tests
     * @throws IllegalArgumentException naming a missing or mistyped column, a row with a missing
     *     cell, or a batch of fewer than 2 rows
     */
    public DriftReport drift(Dataset<?> reference, Dataset<?> batch) {
        if (reference == null || batch == null) {
            throw new IllegalArgumentException((reference == null ? "reference" : "batch") + " is null");
        }
        int sd = (Integer) getOrDefault(scoreDraws());
        if (sd < 0) {
            throw new IllegalArgumentException("scoreDraws is " + sd + "; expected 0 (exact bound) or a count of at least 1");
        }
        DiffusionModel m = model();
        Object[] ref = commonScores(reference, "reference");
        Object[] now = commonScores(batch, "batch");
        return CoreCalls.drift(m, (org.backstep.table.Table) ref[0], (double[]) ref[1],
                (org.backstep.table.Table) now[0], (double[]) now[1]);
    }

    /** The rows' model cells as a table and their common-random-number scores, computed on the executors. */
    private Object[] commonScores(Dataset<?> rows, String name) {
        List<String> names = CoreCalls.names(model());
        List<org.backstep.table.ColumnKind> kinds = CoreCalls.kinds(model());
        RowJob job = job(rows.schema(), RowJob.Kind.COMMON);
        String scoreCol = "backstep_score";
        List<Row> got = rows.toDF().mapPartitions(job, Encoders.row(RowJob.commonSchema(names, kinds, scoreCol)))
                .collectAsList();
        if (got.size() < 2) {
            throw new IllegalArgumentException(name + " has " + got.size() + " rows; expected at least 2");
        }
        int d = names.size();
        double[][] cells = new double[got.size()][d];
        double[] scores = new double[got.size()];
        // a categorical column's labels: the model's, then those it does not know, in order of first appearance
        java.util.Map<String, ColumnMatch.LabelsSeen> seen = new java.util.HashMap<>();
        for (int j = 0; j < d; j++) {
            if (kinds.get(j) == org.backstep.table.ColumnKind.CATEGORICAL) {
                seen.put(names.get(j), new ColumnMatch.LabelsSeen(CoreCalls.categories(model()).get(names.get(j))));
            }
        }
        for (int i = 0; i < got.size(); i++) {
            Row r = got.get(i);
            for (int j = 0; j < d; j++) {
                if (kinds.get(j) == org.backstep.table.ColumnKind.CATEGORICAL) {
                    int row = i;
                    String column = names.get(j);
                    cells[i][j] = seen.get(column).indexOf(r.getString(j),
                            () -> name + " row " + row + ", column '" + column + "'");
                } else {
                    cells[i][j] = r.getDouble(j);
                }
            }
            scores[i] = r.getDouble(d);
        }
        java.util.Map<String, List<String>> categories = new java.util.HashMap<>();
        seen.forEach((column, labels) -> categories.put(column, labels.labels()));
        return new Object[] {org.backstep.table.Table.of(names, kinds, categories, cells), scores};
    }

    /**
     * Synthetic rows by ancestral sampling through all T steps, spread over partitions: row i of
     * the {@code count} (partition p draws a contiguous share, in slices of {@code batchRows} rows)
     * is drawn from its own seed {@link RowSeeds#ofKey(long, long) RowSeeds.ofKey}(seed, i), so the
     * same seed and count give the same rows whatever the partition count and slice size (to the
     * float32 network's rounding; row i equals the core's
     * {@code model.sample(1, SamplingPlan.ancestral(), RowSeeds.ofKey(seed, i))}). Columns: the
     * model's; continuous and binary columns as doubles (binary 0 or 1), integer columns as longs,
     * categorical columns as their labels.
     *
     * <p>Caution: synthetic rows are not measurements and can reproduce training rows.
     *
     * @param spark the session
     * @param count rows in all, at least 1
     * @param partitions partitions, at least 1
     * @param seed the seed
     * @return the rows
     */
    public Dataset<Row> sample(SparkSession spark, long count, int partitions, long seed) {
        if (count < 1) {
            throw new IllegalArgumentException("count is " + count + "; expected at least 1");
        }
        if (partitions < 1) {
            throw new IllegalArgumentException("partitions is " + partitions + "; expected at least 1");
        }
        int slice = (Integer) getOrDefault(batchRows());
        if (slice < 1) {
            throw new IllegalArgumentException("batchRows is " + slice + "; expected at least 1");
        }
        List<String> names = CoreCalls.names(model());
        List<org.backstep.table.ColumnKind> kinds = CoreCalls.kinds(model());
        StructType schema = new StructType();
        for (int j = 0; j < names.size(); j++) {
            schema = schema.add(DataTypes.createStructField(names.get(j), SampleJob.sampledCellType(kinds.get(j)), false));
        }
        return spark.range(0, partitions, 1, partitions).as(Encoders.LONG())
                .mapPartitions(new SampleJob(broadcast(spark), sha256, count, partitions, seed, slice), Encoders.row(schema));
    }

    /** The broadcast of the active session. */
    private Broadcast<byte[]> broadcastBytes() {
        return broadcast(SparkSession.active());
    }

    /** The model file's bytes as a broadcast variable of the session's context, made once per context. */
    private synchronized Broadcast<byte[]> broadcast(SparkSession spark) {
        SparkContext sc = spark.sparkContext();
        if (broadcast == null || broadcastContext != sc || sc.isStopped()) {
            broadcast = JavaSparkContext.fromSparkContext(sc).broadcast(modelBytes);
            broadcastContext = sc;
        }
        return broadcast;
    }

    @Override
    public BackstepModel copy(ParamMap extra) {
        BackstepModel copy = new BackstepModel(uid, modelBytes);
        copy.broadcast = broadcast;
        copy.broadcastContext = broadcastContext;
        return copyValues(copy, extra).setParent(parent());
    }

    @Override
    public MLWriter write() {
        return new Writer(this);
    }

    /** @return the reader of saved models, for {@code BackstepModel.read().load(path)} and Pipelines */
    public static MLReader<BackstepModel> read() {
        return new Reader();
    }

    static String sha256(byte[] bytes) {
        try {
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(bytes));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is missing from this JVM", e);
        }
    }

    /** Writes Spark's metadata and the model file. */
    private static final class Writer extends MLWriter {
        private final BackstepModel model;

        Writer(BackstepModel model) {
            this.model = model;
        }

        @Override
        public void saveImpl(String path) {
            DefaultParamsWriter.saveMetadata(model, path, sparkSession());
            org.apache.hadoop.fs.Path file = new org.apache.hadoop.fs.Path(path, MODEL_FILE);
            try {
                FileSystem fs = file.getFileSystem(sc().hadoopConfiguration());
                try (OutputStream out = fs.create(file, true)) {
                    out.write(model.modelBytes);
                }
            } catch (IOException e) {
                throw new UncheckedIOException("could not write " + file, e);
            }
        }
    }

    /** Reads Spark's metadata and the model file. */
    private static final class Reader extends MLReader<BackstepModel> {
        @Override
        public BackstepModel load(String path) {
            DefaultParamsReader.Metadata meta = DefaultParamsReader.loadMetadata(path, sparkSession(),
                    BackstepModel.class.getName());
            org.apache.hadoop.fs.Path file = new org.apache.hadoop.fs.Path(path, MODEL_FILE);
            byte[] bytes;
            try {
                FileSystem fs = file.getFileSystem(sc().hadoopConfiguration());
                try (InputStream in = fs.open(file)) {
                    bytes = in.readAllBytes();
                }
            } catch (IOException e) {
                throw new UncheckedIOException("could not read " + file, e);
            }
            BackstepModel model = new BackstepModel(meta.uid(), bytes);
            meta.getAndSetParams(model, scala.Option.empty());
            return model;
        }
    }
}
