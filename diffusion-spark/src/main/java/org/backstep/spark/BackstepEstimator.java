package org.backstep.spark;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

import org.apache.commons.math3.stat.descriptive.rank.Percentile;
import org.apache.spark.api.java.function.FilterFunction;
import org.apache.spark.ml.Estimator;
import org.apache.spark.ml.param.DoubleParam;
import org.apache.spark.ml.param.IntArrayParam;
import org.apache.spark.ml.param.IntParam;
import org.apache.spark.ml.param.ParamMap;
import org.apache.spark.ml.param.StringArrayParam;
import org.apache.spark.ml.util.DefaultParamsReader;
import org.apache.spark.ml.util.DefaultParamsWritable;
import org.apache.spark.ml.util.Identifiable;
import org.apache.spark.ml.util.MLReader;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.types.BooleanType;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.DiffusionModel;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Fits a Backstep model to a DataFrame, as a Spark ML Estimator whose {@link #fit(Dataset)} returns
 * a {@link BackstepModel} (a Transformer), with the job Params of {@link BackstepParams} passed on.
 *
 * <p>How it fits: the column transforms (means and population standard deviations of the
 * continuous columns, or of their logarithms for {@link #logCols()}; constant columns; the
 * binary columns' 0/1 check) are computed over every row of the DataFrame on the executors, by
 * exact sums that do not depend on the partitioning ({@link WholeTableStatistics}). Then a uniform
 * sample of at most {@link #sampleRows()} rows is collected to the driver, and the core trains the
 * network there with those transforms ({@code Backstep.builder()...fit(Table, TableTransform)}).
 * So the continuous columns are always standardized (or log-standardized): the core's default of
 * maps chosen at fit time ({@code Marginals.CHOSEN}, which may take normal scores) is not used,
 * because a normal-scores map keeps every training value as a knot, which a table too large for
 * one JVM cannot hold, and the given transforms make no choice.
 * Training on the driver, not by data-parallel training over the executors, is measured in
 * {@code diffusion-bench/results/spark-fitting.txt} (README, "On Apache Spark"). Which rows: row i is
 * taken when its sampling key (its seed from {@link RowSeeds}, from {@link #seed()} and the row key
 * or cells, mixed once more by SplitMix64) falls below {@code 2^64 * min(1, 1.2 * sampleRows / rows)}
 * as an unsigned number, and the taken rows are ordered by that key and cut at {@code sampleRows}. Every row is taken or not by its own key, so
 * the sample and the fitted model do not depend on the partitioning.
 *
 * <p>Column kinds, by the first rule that applies: a column named in {@link #binaryCols()} is
 * binary, one named in {@link #integerCols()} integer, one named in {@link #categoricalCols()}
 * categorical (a column named in two of these lists is refused); else a boolean column is binary,
 * a string column categorical, and any other numeric column (integral types included) continuous.
 * Integral Spark types are continuous unless named, as in the core's CSV reader: whole numbers are
 * often measurements stored in fixed units (tenths of a degree), and an integer column's decoder
 * puts its mass on unit-wide bins, right only for counts and codes; an integer column may also be
 * a double, float or decimal column holding whole numbers (counts with gaps, as files written by
 * tools without a nullable integer type hold them), a fractional value refused naming its row and
 * column. Without {@link BackstepParams#inputCols()}, the inputs are every numeric or boolean
 * column but the row key, and the string columns named in {@link #categoricalCols()}; a string
 * column is not an input unless named, since an identifier or free-text column would become a
 * category per value. With {@code inputCols} set, each string column among them is categorical.
 *
 * <p>Categorical columns: the labels are the column's distinct non-null strings over the whole
 * DataFrame, in ascending {@link String#compareTo} order ("first seen", the order of the core's
 * CSV reader, is not defined on a distributed table; rows are matched to labels by text, so the
 * order only numbers the categories), at most {@code Table.MAX_CATEGORIES} per column (more are
 * refused naming the column, after collecting at most one more label to the driver). Integer
 * columns: the mean and population standard deviation of the whole DataFrame's values, as for a
 * continuous column; a column whose smallest value is at least 0 counts from 0
 * ({@code TableTransform.lowest}).
 *
 * <p>Screening: with {@link #screenQuantile()} q set, every fifth sampled row (0-based index
 * i % 5 == 0) is held out of fitting and scored as the model will score rows; the model's
 * threshold is the q-quantile of those scores (Hyndman &amp; Fan 1996, type 7, commons-math3).
 *
 * <p>Cautions: a likelihood score ranks records and is not a calibrated probability of a fault;
 * for safety-, health- or compliance-critical decisions, defer to local regulations and qualified
 * review.
 */
public final class BackstepEstimator extends Estimator<BackstepModel>
        implements BackstepParams<BackstepEstimator>, DefaultParamsWritable {

    private static final long serialVersionUID = 1L;

    /** Fewest held-out rows for a screening threshold. */
    public static final int MIN_HELD_OUT = 10;

    private final String uid;
    private final Defs defs;
    private final IntParam sampleRows;
    private final IntParam steps;
    private final IntArrayParam hidden;
    private final IntParam epochs;
    private final StringArrayParam binaryCols;
    private final DoubleParam screenQuantile;
    private final StringArrayParam logCols;
    private final StringArrayParam integerCols;
    private final StringArrayParam categoricalCols;

    /** An estimator with default Params. */
    public BackstepEstimator() {
        this(Identifiable.randomUID("backstepEstimator"));
    }

    /** @param uid the stage's unique id (Spark ML's reader calls this constructor) */
    public BackstepEstimator(String uid) {
        this.uid = uid;
        this.defs = new Defs(this);
        sampleRows = new IntParam(this, "sampleRows", "the most rows collected to the driver to fit on");
        steps = new IntParam(this, "steps", "T, the diffusion steps; 0: the core's default");
        hidden = new IntArrayParam(this, "hidden", "widths of the network's hidden layers; empty: the core's default");
        epochs = new IntParam(this, "epochs", "passes over the sample; 0: the core's default");
        binaryCols = new StringArrayParam(this, "binaryCols", "numeric input columns holding 0 and 1, modelled as binary");
        screenQuantile = new DoubleParam(this, "screenQuantile",
                "q in (0, 1): hold out every fifth sampled row and set the threshold at the q-quantile of their scores; NaN: no threshold");
        logCols = new StringArrayParam(this, "logCols",
                "continuous input columns modelled on the log scale (every value above 0)");
        integerCols = new StringArrayParam(this, "integerCols",
                "input columns of whole numbers (counts, ordinal codes) modelled as integers: an integral type, or a"
                + " numeric type whose every value is whole; integral columns not named here are continuous");
        categoricalCols = new StringArrayParam(this, "categoricalCols",
                "string input columns modelled as categorical, their labels sorted; a string column among inputCols is"
                + " categorical anyway, and without inputCols only the string columns named here are inputs");
        setDefault(logCols, new String[0]);
        setDefault(integerCols, new String[0]);
        setDefault(categoricalCols, new String[0]);
        setDefault(sampleRows, (Object) 100_000);
        setDefault(steps, (Object) 0);
        setDefault(hidden, new int[0]);
        setDefault(epochs, (Object) 0);
        setDefault(binaryCols, new String[0]);
        setDefault(screenQuantile, (Object) Double.NaN);
        setDefault(inputCols(), new String[0]);
    }

    @Override
    public String uid() {
        return uid;
    }

    @Override
    public Defs paramDefs() {
        return defs;
    }

    /** @return the Param: the most rows collected to the driver */
    public IntParam sampleRows() {
        return sampleRows;
    }

    /** @return the Param: T (0 for the core's default) */
    public IntParam steps() {
        return steps;
    }

    /** @return the Param: hidden layer widths (empty for the core's default) */
    public IntArrayParam hidden() {
        return hidden;
    }

    /** @return the Param: epochs (0 for the core's default) */
    public IntParam epochs() {
        return epochs;
    }

    /** @return the Param: numeric columns modelled as binary */
    public StringArrayParam binaryCols() {
        return binaryCols;
    }

    /** @return the Param: the screening quantile, NaN for none */
    public DoubleParam screenQuantile() {
        return screenQuantile;
    }

    /** @return the Param: continuous columns modelled on the log scale */
    public StringArrayParam logCols() {
        return logCols;
    }

    /** @return the Param: columns of whole numbers modelled as integers */
    public StringArrayParam integerCols() {
        return integerCols;
    }

    /** @return the Param: string columns modelled as categorical */
    public StringArrayParam categoricalCols() {
        return categoricalCols;
    }

    /**
     * @param cols input columns of whole numbers (counts, codes), of an integral type or holding whole
     *     numbers @return this
     */
    public BackstepEstimator setIntegerCols(String... cols) {
        set(integerCols, cols.clone());
        return this;
    }

    /** @param cols string input columns modelled as categorical (inputs even without inputCols) @return this */
    public BackstepEstimator setCategoricalCols(String... cols) {
        set(categoricalCols, cols.clone());
        return this;
    }

    /** @param cols continuous input columns modelled on the log scale, each value above 0 @return this */
    public BackstepEstimator setLogCols(String... cols) {
        set(logCols, cols.clone());
        return this;
    }

    /** @param rows the most rows collected to the driver, at least 2 @return this */
    public BackstepEstimator setSampleRows(int rows) {
        set(sampleRows, (Object) rows);
        return this;
    }

    /** @param t the diffusion steps T; 0 for the core's default @return this */
    public BackstepEstimator setSteps(int t) {
        set(steps, (Object) t);
        return this;
    }

    /** @param widths hidden layer widths; none for the core's default @return this */
    public BackstepEstimator setHidden(int... widths) {
        set(hidden, widths.clone());
        return this;
    }

    /** @param n epochs; 0 for the core's default @return this */
    public BackstepEstimator setEpochs(int n) {
        set(epochs, (Object) n);
        return this;
    }

    /** @param cols numeric columns holding 0 and 1 @return this */
    public BackstepEstimator setBinaryCols(String... cols) {
        set(binaryCols, cols.clone());
        return this;
    }

    /** @param q the screening quantile in (0, 1), NaN for none @return this */
    public BackstepEstimator setScreenQuantile(double q) {
        set(screenQuantile, (Object) q);
        return this;
    }

    /**
     * The input columns: as set, else every numeric or boolean column but the row key, and the
     * columns named in {@link #categoricalCols()}, in the schema's order.
     */
    private String[] resolvedInputs(StructType schema) {
        String[] set = getOrDefault(inputCols());
        if (set.length > 0) {
            return set;
        }
        String key = getOrDefault(rowKeyCol());
        List<String> categorical = Arrays.asList(getOrDefault(categoricalCols));
        List<String> cols = new ArrayList<>();
        for (StructField f : schema.fields()) {
            boolean usable = f.dataType() instanceof BooleanType || f.dataType() instanceof org.apache.spark.sql.types.NumericType
                    || categorical.contains(f.name());
            if (usable && !f.name().equals(key)) {
                cols.add(f.name());
            }
        }
        if (cols.isEmpty()) {
            throw new IllegalArgumentException("the DataFrame has no numeric or boolean column to model, and categoricalCols"
                    + " names none of its string columns; it has " + Arrays.toString(schema.fieldNames()));
        }
        return cols.toArray(String[]::new);
    }

    /**
     * Each input column's kind, by the rules of the class comment.
     *
     * @throws IllegalArgumentException naming a column that binaryCols, integerCols or categoricalCols
     *     name but that is not an input, or that two of them name
     */
    private List<ColumnKind> kinds(StructType schema, String[] cols) {
        java.util.Map<String, String> declared = new java.util.HashMap<>();
        java.util.Map<String, ColumnKind> kindOf = new java.util.HashMap<>();
        List<String> inputs = Arrays.asList(cols);
        String[][] lists = {getOrDefault(binaryCols), getOrDefault(integerCols), getOrDefault(categoricalCols)};
        String[] listNames = {"binaryCols", "integerCols", "categoricalCols"};
        ColumnKind[] listKinds = {ColumnKind.BINARY, ColumnKind.INTEGER, ColumnKind.CATEGORICAL};
        for (int l = 0; l < lists.length; l++) {
            for (String c : lists[l]) {
                if (!inputs.contains(c)) {
                    throw new IllegalArgumentException(listNames[l] + " names '" + c + "', which is not an input column "
                            + inputs);
                }
                String before = declared.putIfAbsent(c, listNames[l]);
                if (before != null && !before.equals(listNames[l])) {
                    throw new IllegalArgumentException("column '" + c + "' is named in both " + before + " and "
                            + listNames[l] + "; expected one kind per column");
                }
                kindOf.put(c, listKinds[l]);
            }
        }
        List<String> present = Arrays.asList(schema.fieldNames());
        List<ColumnKind> kinds = new ArrayList<>();
        for (String c : cols) {
            ColumnKind k = kindOf.get(c);
            if (k == null) {
                org.apache.spark.sql.types.DataType t = present.contains(c) ? schema.apply(c).dataType() : null;
                k = t instanceof BooleanType ? ColumnKind.BINARY
                        : t instanceof org.apache.spark.sql.types.StringType ? ColumnKind.CATEGORICAL : ColumnKind.CONTINUOUS;
            }
            kinds.add(k);
        }
        return kinds;
    }

    /** A placeholder label list per categorical column, for checking the schema before the labels are known. */
    private static java.util.Map<String, List<String>> noLabels(String[] cols, List<ColumnKind> kinds) {
        java.util.Map<String, List<String>> none = new java.util.HashMap<>();
        for (int j = 0; j < cols.length; j++) {
            if (kinds.get(j) == ColumnKind.CATEGORICAL) {
                none.put(cols[j], List.of());
            }
        }
        return none;
    }

    @Override
    public StructType transformSchema(StructType schema) {
        String[] cols = resolvedInputs(schema);
        List<ColumnKind> kinds = kinds(schema, cols);
        ColumnMatch m = ColumnMatch.of(schema, cols, Arrays.asList(cols), kinds, noLabels(cols, kinds),
                getOrDefault(rowKeyCol()));
        RowJob.Kind kind = RowJob.check(this, cols.length);
        return RowJob.outputSchema(schema, RowJob.addedFields(kind, m, getOrDefault(outputCol()), getOrDefault(flagCol()),
                (Double) getOrDefault(screenQuantile), getOrDefault(culpritCol()), getOrDefault(surprisalCol()),
                (Boolean) getOrDefault(keepDraws())));
    }

    @Override
    public BackstepModel fit(Dataset<?> dataset) {
        StructType schema = dataset.schema();
        transformSchema(schema);
        int cap = (Integer) getOrDefault(sampleRows);
        if (cap < 2) {
            throw new IllegalArgumentException("sampleRows is " + cap + "; expected at least 2");
        }
        double q = (Double) getOrDefault(screenQuantile);
        if (!Double.isNaN(q) && !(q > 0 && q < 1)) {
            throw new IllegalArgumentException("screenQuantile is " + q + "; expected a number in (0, 1) or NaN");
        }
        String[] cols = resolvedInputs(schema);
        List<ColumnKind> kinds = kinds(schema, cols);
        List<String> names = Arrays.asList(cols);
        long seed = (Long) getOrDefault(seed());
        java.util.Set<String> logs = new java.util.LinkedHashSet<>(Arrays.asList(getOrDefault(logCols)));
        for (String l : logs) {
            int at = names.indexOf(l);
            if (at < 0 || kinds.get(at) != ColumnKind.CONTINUOUS) {
                throw new IllegalArgumentException("logCols names '" + l + "', which is not a continuous input column "
                        + names + (at < 0 ? "" : "; it is " + kinds.get(at).name().toLowerCase(java.util.Locale.ROOT)
                        + " (type " + schema.apply(l).dataType().simpleString() + ")"));
            }
        }

        WholeTableStatistics.Result whole = WholeTableStatistics.of(dataset.toDF(), cols, names, kinds, logs,
                getOrDefault(rowKeyCol()));
        java.util.Map<String, List<String>> labels = whole.transform().categories();
        ColumnMatch match = ColumnMatch.of(schema, cols, names, kinds, labels, getOrDefault(rowKeyCol()));
        long total = whole.rows();
        if (total < 2) {
            throw new IllegalArgumentException("the DataFrame has " + total + " rows; expected at least 2 to fit on");
        }
        double fraction = Math.min(1.0, 1.2 * cap / total);
        FilterFunction<Row> taken = row -> {
            ColumnMatch.RowName where = new ColumnMatch.RowName(org.apache.spark.TaskContext.getPartitionId(), -1);
            double[] cells = match.cells(row, where);
            return takes(sampleKey(match.rowSeed(seed, row, cells, where)), fraction);
        };
        List<Row> rows = new ArrayList<>(dataset.toDF().filter(taken).collectAsList());
        List<long[]> order = new ArrayList<>();
        List<double[]> cells = new ArrayList<>();
        for (int i = 0; i < rows.size(); i++) {
            ColumnMatch.RowName where = new ColumnMatch.RowName(-1, i);
            double[] c = match.cells(rows.get(i), where);
            int unseen = match.unseenColumn(c);
            if (unseen >= 0) {
                throw new IllegalStateException("sampled row " + i + ", column '" + match.inputCol(unseen) + "' holds the label '"
                        + match.raw(rows.get(i), unseen) + "', which the pass over the whole DataFrame did not see: the"
                        + " DataFrame gave other rows on its next read; cache it, or make it deterministic, before fitting");
            }
            cells.add(c);
            long rowSeed = match.rowSeed(seed, rows.get(i), c, where);
            order.add(new long[] {sampleKey(rowSeed), i, rowSeed});
        }
        order.sort((a, b) -> a[0] != b[0] ? Long.compareUnsigned(a[0], b[0]) : Long.compare(a[2], b[2]));
        int n = Math.min(cap, order.size());
        double[][] x = new double[n][];
        long[] rowSeeds = new long[n];
        for (int i = 0; i < n; i++) {
            x[i] = cells.get((int) order.get(i)[1]);
            rowSeeds[i] = order.get(i)[2];
        }
        Table sample = Table.of(names, kinds, labels, x);

        Table training = Double.isNaN(q) ? sample : sample.filterRows(i -> i % 5 != 0);
        DiffusionModel model = CoreCalls.fit(training, whole.transform(), (Integer) getOrDefault(steps),
                getOrDefault(hidden), (Integer) getOrDefault(epochs), logs, seed);
        BackstepModel fitted = new BackstepModel(uid, CoreCalls.toBytes(model));
        copyValues(fitted, ParamMap.empty());
        fitted.setInputCols(cols);
        if (!Double.isNaN(q)) {
            fitted.setThreshold(threshold(model, sample, rowSeeds, q));
        }
        return fitted.setParent(this);
    }

    /** The q-quantile of the held-out rows' scores, scored as the fitted model will score rows. */
    private double threshold(DiffusionModel model, Table sample, long[] rowSeeds, double q) {
        int draws = (Integer) getOrDefault(scoreDraws());
        List<Integer> held = new ArrayList<>();
        for (int i = 0; i < sample.rows(); i += 5) {
            if (!sample.selectRows(new int[] {i}).hasMissing()) {
                held.add(i);
            }
        }
        if (held.size() < MIN_HELD_OUT) {
            throw new IllegalArgumentException("screenQuantile needs at least " + MIN_HELD_OUT
                    + " complete held-out rows; the sample gave " + held.size() + " (raise sampleRows or add rows)");
        }
        int[] rows = held.stream().mapToInt(Integer::intValue).toArray();
        long[] seeds = java.util.stream.IntStream.of(rows).mapToLong(i -> rowSeeds[i]).toArray();
        double[] scores = CoreCalls.score(model, sample.selectRows(rows), draws, seeds);
        return new Percentile().withEstimationType(Percentile.EstimationType.R_7).evaluate(scores, 100.0 * q);
    }

    /** A row's sampling key, from its seed (mixed once more, so that sampling and the row's stream do not share bits). */
    static long sampleKey(long rowSeed) {
        return RowSeeds.mix(rowSeed ^ 0x5A17E5EED5A17E5EL);
    }

    /** Whether a row with this sampling key is in a sample of the given fraction: key / 2^64 (unsigned) below it. */
    static boolean takes(long sampleKey, double fraction) {
        if (fraction >= 1.0) {
            return true;
        }
        double u = (sampleKey >>> 11) * 0x1.0p-53;   // the top 53 bits as a uniform number in [0, 1)
        return u < fraction;
    }

    @Override
    public BackstepEstimator copy(ParamMap extra) {
        return defaultCopy(extra);
    }

    /** @return the reader of saved estimators, for {@code BackstepEstimator.read().load(path)} and Pipelines */
    public static MLReader<BackstepEstimator> read() {
        return new DefaultParamsReader<>();
    }
}
