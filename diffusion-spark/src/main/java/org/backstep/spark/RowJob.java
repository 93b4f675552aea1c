package org.backstep.spark;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.NoSuchElementException;
import java.util.function.IntFunction;
import java.util.stream.IntStream;

import org.apache.spark.TaskContext;
import org.apache.spark.api.java.function.MapPartitionsFunction;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.report.Surprisal;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * One job over the rows of a DataFrame, run per partition: the rows are read in batches of
 * {@code batchRows}, each row's random stream is seeded from the job's seed and the row's key
 * ({@link RowSeeds}), on the task's cores. Scoring, imputation and denoising send each batch to the
 * core as tables (slices of at most {@value #SLICE_ROWS} rows, one per task core at least), each
 * record drawing from its own seed, so a row's results do not depend on the rows beside it (to the
 * network's float rounding: see the core's per-record-seed calls); the surprisal of a flagged row
 * sends one record per call. Output rows
 * are the input rows with the job's columns appended; for {@link Kind#COMMON}, the model's cells
 * and the score only.
 */
final class RowJob implements MapPartitionsFunction<Row, Row>, Serializable {

    private static final long serialVersionUID = 1L;
    private static final org.slf4j.Logger LOG = org.slf4j.LoggerFactory.getLogger(RowJob.class);

    /** The jobs a {@link BackstepModel} runs on rows. */
    enum Kind {
        /** The bound in nats, and a flag past a threshold. */
        SCORE,
        /** Mean and central interval of draws of each missing cell. */
        IMPUTE,
        /** Posterior mean and spread of each cell of readings with known noise. */
        DENOISE,
        /** Score and flag, and for a flagged row its surprisal per column and the most surprising columns. */
        ATTRIBUTE,
        /** Internal (drift): the model's cells and the score with common random numbers. */
        COMMON
    }

    /**
     * The most rows of one scoring call into the core: the core's chunk (256 rows, evaluated on the
     * calling thread), so that a task uses the threads it was given and no more.
     */
    static final int SLICE_ROWS = 256;

    /** Suffixes of the columns the impute and denoise jobs add, after the input column's name. */
    static final String MEAN = "_mean";
    static final String LOWER = "_lower";
    static final String UPPER = "_upper";
    static final String DENOISED = "_denoised";
    static final String SD = "_sd";
    static final String DRAWS = "_draws";

    private final Broadcast<byte[]> modelBytes;
    private final String sha256;
    private final ColumnMatch match;
    private final Kind kind;
    private final long seed;
    private final int scoreDraws;
    private final int draws;
    private final double level;
    private final double[] noiseSd;
    private final double threshold;
    private final int batchRows;
    private final int culprits;
    private final int[] surprisal;
    private final boolean keepDraws;

    /**
     * @param surprisal the surprisal's draws, steps and rounds (attribute)
     * @param culprits how many culprit names (attribute)
     * @param keepDraws whether impute appends each cell's draws
     */
    RowJob(Broadcast<byte[]> modelBytes, String sha256, ColumnMatch match, Kind kind, long seed, int scoreDraws,
           int draws, double level, double[] noiseSd, double threshold, int batchRows, int culprits, int[] surprisal,
           boolean keepDraws) {
        this.modelBytes = modelBytes;
        this.sha256 = sha256;
        this.match = match;
        this.kind = kind;
        this.seed = seed;
        this.scoreDraws = scoreDraws;
        this.draws = draws;
        this.level = level;
        this.noiseSd = noiseSd.clone();
        this.threshold = threshold;
        this.batchRows = batchRows;
        this.culprits = culprits;
        this.surprisal = surprisal.clone();
        this.keepDraws = keepDraws;
    }

    /**
     * The fields the job appends.
     *
     * @param kind the job
     * @param match the model's columns in the DataFrame
     * @param outputCol the score column
     * @param flagCol the flag column
     * @param threshold the flag's threshold, NaN for no flag column
     * @param culpritCol the culprit column (attribute)
     * @param surprisalCol the surprisal column (attribute)
     * @param keepDraws whether impute appends each cell's draws
     * @return the new fields
     */
    static List<StructField> addedFields(Kind kind, ColumnMatch match, String outputCol, String flagCol, double threshold,
                                         String culpritCol, String surprisalCol, boolean keepDraws) {
        List<StructField> f = new ArrayList<>();
        switch (kind) {
            case SCORE -> {
                f.add(DataTypes.createStructField(outputCol, DataTypes.DoubleType, false));
                if (!Double.isNaN(threshold)) {
                    f.add(DataTypes.createStructField(flagCol, DataTypes.BooleanType, false));
                }
            }
            case ATTRIBUTE -> {
                f.add(DataTypes.createStructField(outputCol, DataTypes.DoubleType, false));
                f.add(DataTypes.createStructField(flagCol, DataTypes.BooleanType, false));
                f.add(DataTypes.createStructField(culpritCol, DataTypes.createArrayType(DataTypes.StringType, false), false));
                f.add(DataTypes.createStructField(surprisalCol, DataTypes.createArrayType(DataTypes.DoubleType, false), false));
            }
            case IMPUTE -> {
                for (int j = 0; j < match.columns(); j++) {
                    DataType t = jobCellType(match.kind(j));
                    f.add(DataTypes.createStructField(match.inputCol(j) + MEAN, t, false));
                    f.add(DataTypes.createStructField(match.inputCol(j) + LOWER, t, false));
                    f.add(DataTypes.createStructField(match.inputCol(j) + UPPER, t, false));
                    if (keepDraws) {
                        f.add(DataTypes.createStructField(match.inputCol(j) + DRAWS, DataTypes.createArrayType(t, false), false));
                    }
                }
            }
            case DENOISE -> {
                for (int j = 0; j < match.columns(); j++) {
                    f.add(DataTypes.createStructField(match.inputCol(j) + DENOISED, jobCellType(match.kind(j)), false));
                    f.add(DataTypes.createStructField(match.inputCol(j) + SD, DataTypes.DoubleType, false));
                }
            }
            default -> throw new IllegalStateException(kind.name());
        }
        return f;
    }

    /**
     * @return the type of a row job's cell of a column of this kind: a categorical column's label as
     *     a string, else (INTEGER included, as the core's model-space values) a double
     */
    static DataType jobCellType(ColumnKind kind) {
        return kind == ColumnKind.CATEGORICAL ? DataTypes.StringType : DataTypes.DoubleType;
    }

    /**
     * The input schema with the job's fields appended.
     *
     * @throws IllegalArgumentException naming an added column that the input already has
     */
    static StructType outputSchema(StructType input, List<StructField> added) {
        StructType out = input;
        List<String> names = List.of(input.fieldNames());
        for (StructField f : added) {
            if (names.contains(f.name())) {
                throw new IllegalArgumentException("the DataFrame already has a column '" + f.name()
                        + "', which this job would add; rename it or choose another output column");
            }
            out = out.add(f);
        }
        return out;
    }

    /**
     * Checks the settings of the chosen job.
     *
     * @param modelColumns the model's column count
     * @param p the settings
     * @return the job
     * @throws IllegalArgumentException naming the Param, its value and what was expected
     */
    static Kind check(BackstepParams<?> p, int modelColumns) {
        String name = p.getOrDefault(p.job());
        Kind kind;
        try {
            kind = Kind.valueOf(name.toUpperCase(Locale.ROOT));
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("job is '" + name + "'; expected score, attribute, impute or denoise", e);
        }
        if (kind == Kind.COMMON) {
            throw new IllegalArgumentException("job is '" + name + "'; expected score, attribute, impute or denoise");
        }
        int sd = (Integer) p.getOrDefault(p.scoreDraws());
        if (sd < 0) {
            throw new IllegalArgumentException("scoreDraws is " + sd + "; expected 0 (exact bound) or a count of at least 1");
        }
        int d = (Integer) p.getOrDefault(p.draws());
        if (d < 1) {
            throw new IllegalArgumentException("draws is " + d + "; expected at least 1");
        }
        double lv = (Double) p.getOrDefault(p.level());
        if (!(lv > 0 && lv < 1)) {
            throw new IllegalArgumentException("level is " + lv + "; expected a number in (0, 1)");
        }
        int b = (Integer) p.getOrDefault(p.batchRows());
        if (b < 1) {
            throw new IllegalArgumentException("batchRows is " + b + "; expected at least 1");
        }
        if (kind == Kind.ATTRIBUTE) {
            int c = (Integer) p.getOrDefault(p.culprits());
            if (c < 1) {
                throw new IllegalArgumentException("culprits is " + c + "; expected at least 1");
            }
            int sd2 = (Integer) p.getOrDefault(p.surprisalDraws());
            if (sd2 < CoreCalls.fewestSurprisalDraws()) {
                throw new IllegalArgumentException("surprisalDraws is " + sd2 + "; expected at least "
                        + CoreCalls.fewestSurprisalDraws());
            }
            int st = (Integer) p.getOrDefault(p.surprisalSteps());
            if (st < 1) {
                throw new IllegalArgumentException("surprisalSteps is " + st + "; expected at least 1");
            }
            int ro = (Integer) p.getOrDefault(p.surprisalRounds());
            if (ro < 1) {
                throw new IllegalArgumentException("surprisalRounds is " + ro + "; expected at least 1");
            }
        }
        if (kind == Kind.DENOISE && p.getOrDefault(p.noiseSd()).length != modelColumns) {
            throw new IllegalArgumentException("noiseSd has " + p.getOrDefault(p.noiseSd()).length
                    + " entries; the denoise job needs one per model column, " + modelColumns);
        }
        return kind;
    }

    @Override
    public Iterator<Row> call(Iterator<Row> rows) {
        int cpus = TaskThreads.taskCpus();
        DiffusionModel model = ExecutorModels.get(sha256, modelBytes::value, cpus);
        List<String> names = CoreCalls.names(model);
        List<ColumnKind> kinds = CoreCalls.kinds(model);
        int partition = TaskContext.get() == null ? 0 : TaskContext.getPartitionId();
        return new Iterator<>() {
            private final List<Row> out = new ArrayList<>();
            private int next;
            private long position;

            @Override
            public boolean hasNext() {
                if (next < out.size()) {
                    return true;
                }
                out.clear();
                next = 0;
                List<Row> batch = new ArrayList<>(batchRows);
                while (batch.size() < batchRows && rows.hasNext()) {
                    batch.add(rows.next());
                }
                if (batch.isEmpty()) {
                    return false;
                }
                Row[] done = new Row[batch.size()];
                long first = position;
                position += batch.size();
                runBatch(model, names, kinds, batch, partition, first, cpus, done);
                out.addAll(List.of(done));
                return true;
            }

            @Override
            public Row next() {
                if (!hasNext()) {
                    throw new NoSuchElementException();
                }
                return out.get(next++);
            }
        };
    }

    /**
     * The job's output rows of one batch, into {@code done}: the batch's rows are read, checked and
     * seeded, then sent to the core in slices of at most {@value #SLICE_ROWS} rows (one slice per
     * task core at least), each record drawing from its own seed, and the results appended.
     * Scoring and attribution give a row with a label the model does not know +infinity (the
     * model gives it probability zero; the core's screen does the same) without a core call;
     * imputation and denoising refuse it, naming the row, column and label.
     */
    private void runBatch(DiffusionModel model, List<String> names, List<ColumnKind> kinds, List<Row> batch,
                          int partition, long first, int cpus, Row[] done) {
        int b = batch.size();
        IntFunction<ColumnMatch.RowName> where = i -> new ColumnMatch.RowName(partition, first + i);
        double[][] cells = new double[b][];
        long[] seeds = new long[b];
        boolean[] unseen = new boolean[b];
        String job = switch (kind) {
            case COMMON -> "drift";
            case IMPUTE -> "imputation";
            case DENOISE -> "denoising";
            default -> "scoring";
        };
        for (int i = 0; i < b; i++) {
            Row row = batch.get(i);
            ColumnMatch.RowName at = where.apply(i);
            cells[i] = match.cells(row, at);
            int u = match.unseenColumn(cells[i]);
            if (u >= 0 && (kind == Kind.IMPUTE || kind == Kind.DENOISE)) {
                throw match.unseen(row, at, u, job);
            }
            unseen[i] = u >= 0;
            if (kind != Kind.IMPUTE) {
                requireComplete(cells[i], row, at, job);
            }
            seeds[i] = match.rowSeed(seed, row, cells[i], at);
        }
        // the rows sent to the core: all, but for scoring those whose labels the model knows
        int[] sent = IntStream.range(0, b).filter(i -> kind == Kind.COMMON || !unseen[i]).toArray();
        if (sent.length < b && kind != Kind.COMMON) {
            int i = IntStream.range(0, b).filter(r -> unseen[r]).findFirst().orElseThrow();
            LOG.warn("{} row(s) of this batch score +infinity: a categorical label the model does not know; first: {}",
                    b - sent.length, match.unseen(batch.get(i), where.apply(i), match.unseenColumn(cells[i]), job).getMessage());
        }
        int m = sent.length;
        double[] nats = new double[b];
        Arrays.fill(nats, Double.POSITIVE_INFINITY);
        Object[][] values = new Object[b][];
        int slices = m == 0 ? 0 : Math.max(Math.min(cpus, m), (m + SLICE_ROWS - 1) / SLICE_ROWS);
        TaskThreads.forEach(slices, cpus, k -> {
            int[] idx = Arrays.copyOfRange(sent, (int) ((long) m * k / slices), (int) ((long) m * (k + 1) / slices));
            List<Row> rows = new ArrayList<>(idx.length);
            double[][] c = new double[idx.length][];
            long[] s = new long[idx.length];
            for (int i = 0; i < idx.length; i++) {
                rows.add(batch.get(idx[i]));
                c[i] = cells[idx[i]];
                s[i] = seeds[idx[i]];
            }
            Table t = match.table(names, rows, c, i -> where.apply(idx[i]));
            switch (kind) {
                case COMMON -> copyTo(CoreCalls.commonScores(model, t, scoreDraws, seed), idx, nats);
                case SCORE, ATTRIBUTE -> copyTo(CoreCalls.score(model, t, scoreDraws, s), idx, nats);
                case IMPUTE -> {
                    Imputation imp = CoreCalls.impute(model, t, draws, level, s);
                    for (int i = 0; i < idx.length; i++) {
                        values[idx[i]] = imputed(imp, i);
                    }
                }
                case DENOISE -> {
                    Denoising den = CoreCalls.denoise(model, t, noiseSd, draws, s);
                    for (int i = 0; i < idx.length; i++) {
                        values[idx[i]] = denoised(den, i);
                    }
                }
                default -> throw new IllegalStateException(kind.name());
            }
        });
        switch (kind) {
            case IMPUTE, DENOISE -> {
                for (int i = 0; i < b; i++) {
                    done[i] = append(batch.get(i), values[i]);
                }
            }
            case COMMON -> {
                for (int i = 0; i < b; i++) {
                    Object[] v = new Object[cells[i].length + 1];
                    for (int j = 0; j < cells[i].length; j++) {
                        v[j] = match.kind(j) != ColumnKind.CATEGORICAL ? (Object) cells[i][j]
                                : cells[i][j] == ColumnMatch.UNSEEN ? match.raw(batch.get(i), j)
                                : match.label(j, (int) cells[i][j]);
                    }
                    v[cells[i].length] = nats[i];
                    done[i] = RowFactory.create(v);
                }
            }
            case SCORE -> {
                for (int i = 0; i < b; i++) {
                    done[i] = append(batch.get(i), Double.isNaN(threshold) ? new Object[] {nats[i]}
                            : new Object[] {nats[i], !(nats[i] <= threshold)});
                }
            }
            case ATTRIBUTE -> TaskThreads.forEach(b, cpus, i -> {
                boolean flagged = !(nats[i] <= threshold);
                Object[] v = {nats[i], flagged, new String[0], new double[0]};
                if (flagged) {
                    // a label the model does not know: that cell missing for the surprisal of the others, and +infinity
                    double[] x = cells[i].clone();
                    for (int j = 0; j < x.length; j++) {
                        if (match.kind(j) == ColumnKind.CATEGORICAL && x[j] == ColumnMatch.UNSEEN) {
                            x[j] = Double.NaN;
                        }
                    }
                    Surprisal sp = CoreCalls.surprisal(model, match.table(names, List.of(batch.get(i)), new double[][] {x},
                            r -> where.apply(i)), surprisal[0], surprisal[1], surprisal[2], seeds[i]);
                    double[] nat = sp.nats()[0].clone();
                    List<String> ranked = new ArrayList<>();
                    for (int j = 0; j < x.length; j++) {
                        if (Double.isNaN(x[j]) && !Double.isNaN(cells[i][j])) {
                            nat[j] = Double.POSITIVE_INFINITY;
                            ranked.add(match.inputCol(j));
                        }
                    }
                    sp.ranked(0).stream().map(c -> match.inputCol(names.indexOf(c.column()))).forEach(ranked::add);
                    v[3] = nat;
                    v[2] = ranked.stream().limit(culprits).toArray(String[]::new);
                }
                done[i] = append(batch.get(i), v);
            });
            default -> throw new IllegalStateException(kind.name());
        }
    }

    private static void copyTo(double[] part, int[] idx, double[] into) {
        for (int i = 0; i < idx.length; i++) {
            into[idx[i]] = part[i];
        }
    }

    /** A model cell of column j as the DataFrame gets it: a categorical column's label, else the number. */
    private Object cellOut(int j, double v) {
        return match.kind(j) == ColumnKind.CATEGORICAL ? match.label(j, (int) Math.rint(v)) : (Object) v;
    }

    /**
     * Mean, lower and upper (and with {@link #keepDraws} the draws) of each column of record i of an
     * imputation (observed cells repeat their value).
     */
    private Object[] imputed(Imputation imp, int i) {
        int d = match.columns();
        int w = keepDraws ? 4 : 3;
        Object[] v = new Object[w * d];
        for (int j = 0; j < d; j++) {
            v[w * j] = cellOut(j, imp.mean().get(i, j));
            v[w * j + 1] = cellOut(j, imp.lower().get(i, j));
            v[w * j + 2] = cellOut(j, imp.upper().get(i, j));
            if (keepDraws) {
                int k = imp.draws().size();
                if (match.kind(j) == ColumnKind.CATEGORICAL) {
                    String[] labels = new String[k];
                    for (int n = 0; n < k; n++) {
                        labels[n] = (String) cellOut(j, imp.draws().get(n).get(i, j));
                    }
                    v[w * j + 3] = labels;
                } else {
                    double[] x = new double[k];
                    for (int n = 0; n < k; n++) {
                        x[n] = imp.draws().get(n).get(i, j);
                    }
                    v[w * j + 3] = x;
                }
            }
        }
        return v;
    }

    /** Denoised mean and spread of each column of record i. */
    private Object[] denoised(Denoising den, int i) {
        int d = match.columns();
        Object[] v = new Object[2 * d];
        for (int j = 0; j < d; j++) {
            v[2 * j] = cellOut(j, den.mean().get(i, j));
            v[2 * j + 1] = den.standardDeviation().get(i, j);
        }
        return v;
    }

    /** The schema of {@link Kind#COMMON}'s rows: the model's columns (doubles; a categorical column's labels), then the score. */
    static StructType commonSchema(List<String> names, List<ColumnKind> kinds, String scoreCol) {
        StructType s = new StructType();
        for (int j = 0; j < names.size(); j++) {
            s = s.add(DataTypes.createStructField(names.get(j), jobCellType(kinds.get(j)), false));
        }
        return s.add(DataTypes.createStructField(scoreCol, DataTypes.DoubleType, false));
    }

    private static Row append(Row row, Object[] added) {
        Object[] v = new Object[row.size() + added.length];
        for (int i = 0; i < row.size(); i++) {
            v[i] = row.get(i);
        }
        System.arraycopy(added, 0, v, row.size(), added.length);
        return RowFactory.create(v);
    }

    private void requireComplete(double[] cells, Row row, ColumnMatch.RowName where, String job) {
        for (int j = 0; j < cells.length; j++) {
            if (Double.isNaN(cells[j])) {
                throw new IllegalArgumentException(where.describe(match, row) + ", column '" + match.inputCol(j)
                        + "' is missing; " + job + " needs complete rows (impute them first)");
            }
        }
    }
}
