package org.backstep.table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Set;
import java.util.stream.IntStream;
import org.backstep.schedule.Require;

/**
 * The {@link ColumnTransform}s of every column of a table, fitted on training rows; immutable. It
 * maps a {@link Table} to the model's space and back, and converts densities between the two.
 *
 * <p><b>Fitting</b> ({@link #fit(Table, Set)}), per column over its non-missing training cells:
 * <ul>
 *   <li>binary: IDENTITY;</li>
 *   <li>continuous with fewer than two distinct values, or a standard deviation of 0: CONSTANT at
 *       that value, carried exactly and not diffused;</li>
 *   <li>continuous: STANDARDIZE with the mean m = (1/n) sum x_i and the population standard deviation
 *       s = sqrt((1/n) sum (x_i - m)^2), computed in two passes with the correction of Chan, Golub &amp;
 *       LeVeque 1983 ("Algorithms for computing the sample variance", eq. 1.7); or LOG_STANDARDIZE
 *       with the same statistics of log x for the columns asked for, which must then be strictly
 *       positive; or, by {@link #fitNormalScores(Table, double)}, NORMAL_SCORES (the normal scores of
 *       a kernel-smoothed empirical distribution function of the column's training values).</li>
 * </ul>
 * The population (divide by n) standard deviation matches the project's fixed data split
 * (test resources {@code data/SOURCES.md}).
 * {@link #fromStatistics} builds the same transforms by the same rule from {@link ColumnStatistics}
 * computed elsewhere (over a table too large for one JVM), without the rows.
 *
 * <p><b>Model space</b> has the modelled continuous columns (not CONSTANT) first, transformed, then
 * the binary columns unchanged, then the categorical columns with two or more categories as their
 * category index (IDENTITY; a categorical column of one category is CONSTANT at index 0), each group
 * in table order; a row of n_c + n_b + n_k values. Missing cells stay NaN. The categories and their
 * order are those of the training table; a table with other labels is matched by label text
 * ({@link Table#recode}), and a label the model does not know is refused by name.
 *
 * <p><b>Densities.</b> With z = f(x) column by column, the change of variables formula gives
 * log p_x(x) = log p_z(z) + sum_j log |dz_j/dx_j| (Dinh, Sohl-Dickstein &amp; Bengio 2017, "Density
 * estimation using Real NVP", section 3.1), the sum over the modelled continuous, non-missing cells
 * ({@link #logJacobian(double[])}). For STANDARDIZE log |dz/dx| = -log s, so a negative
 * log-likelihood in model space becomes one in original units by adding sum_j log s_j; for
 * LOG_STANDARDIZE and NORMAL_SCORES it depends on x (see {@link ColumnTransform}). INTEGER
 * columns are standardized like continuous ones, but their decoder gives the probability of the
 * integer's unit-wide bin, a mass that needs no change of variables: they are left out of the
 * log-Jacobian, and their model values are rounded back to integers. Densities are
 * in nats; constant columns contribute nothing (they are a point mass, left out of both sides).
 *
 * <p>One file of more than 400 lines: fitting, applying and inverting the column transforms and their log-Jacobian must agree column by column.
 */
public final class TableTransform {

    private final List<String> names;
    private final List<ColumnKind> kinds;
    private final List<ColumnTransform> transforms;
    private final int[] modelledContinuous;
    private final int[] modelledBinary;
    private final int[] modelledCategorical;
    private final Table.Layout layout;
    /** The lowest integer of each INTEGER column that has one (counts: 0), by name. */
    private final java.util.Map<String, Long> lowest;
    private final int[] constants;
    private final List<String> notes;

    private TableTransform(Table.Layout layout, List<ColumnTransform> transforms, List<String> fitNotes,
            java.util.Map<String, Long> lowest) {
        this.lowest = java.util.Collections.unmodifiableMap(new java.util.LinkedHashMap<>(lowest));
        this.names = layout.names;
        this.kinds = layout.kinds;
        this.layout = layout;
        this.transforms = List.copyOf(transforms);
        int n = names.size();
        this.modelledContinuous = IntStream.range(0, n).filter(c -> (kinds.get(c) == ColumnKind.CONTINUOUS
                || kinds.get(c) == ColumnKind.INTEGER)
                && this.transforms.get(c).kind() != ColumnTransform.Kind.CONSTANT).toArray();
        this.modelledBinary = IntStream.range(0, n).filter(c -> kinds.get(c) == ColumnKind.BINARY).toArray();
        this.modelledCategorical = IntStream.range(0, n).filter(c -> kinds.get(c) == ColumnKind.CATEGORICAL
                && this.transforms.get(c).kind() != ColumnTransform.Kind.CONSTANT).toArray();
        this.constants = IntStream.range(0, n)
                .filter(c -> this.transforms.get(c).kind() == ColumnTransform.Kind.CONSTANT).toArray();
        List<String> all = new ArrayList<>();
        for (int c = 0; c < n; c++) {
            ColumnTransform t = this.transforms.get(c);
            if (t.kind() == ColumnTransform.Kind.CONSTANT && kinds.get(c) == ColumnKind.CATEGORICAL) {
                all.add("column '" + names.get(c) + "' has one category ('" + layout.categories.get(c).get(0)
                        + "') and is carried exactly, not diffused");
            } else if (t.kind() == ColumnTransform.Kind.CONSTANT) {
                all.add("column '" + names.get(c) + "' is constant (" + t.shift()
                        + ") and is carried exactly, not diffused");
            } else if (kinds.get(c) == ColumnKind.INTEGER) {
                all.add("column '" + names.get(c) + "' holds integers: its decoder is a discretized Gaussian over"
                        + " unit-wide bins (Ho et al. 2020, eq. 13), " + (this.lowest.containsKey(names.get(c))
                        ? "counts from 0 (the bin of 0 reaches to -infinity)" : "with no lowest value")
                        + ", so its part of a score is a probability mass");
            } else if (t.kind() == ColumnTransform.Kind.LOG_STANDARDIZE) {
                all.add("column '" + names.get(c) + "' is modelled on the log scale: z = (log x - " + t.shift()
                        + ") / " + t.scale());
            } else if (t.kind() == ColumnTransform.Kind.NORMAL_SCORES) {
                all.add("column '" + names.get(c) + "' is modelled by its normal scores: z = Phi^-1(F(x)), F smoothed from "
                        + t.knots().length + " training values with bandwidth " + t.scale());
            }
        }
        all.addAll(fitNotes);
        this.notes = List.copyOf(all);
    }

    // ------------------------------------------------------------------ factories

    /**
     * Fits the transform of every column on the training rows, as described in {@link TableTransform}.
     *
     * @param training the training rows (not modified)
     * @param logColumns names of continuous columns to model on the log scale; may be empty (not modified)
     * @return the fitted transforms
     * @throws IllegalArgumentException naming the column: if a log column is unknown, binary, or has a
     *     training value &lt;= 0 (naming the row too); if a continuous column has no observed training cell
     */
    public static TableTransform fit(Table training, Set<String> logColumns) {
        Require.notNull("training", training);
        Require.notNull("logColumns", logColumns);
        return fit(training, logColumns, Double.NaN);
    }

    /**
     * Fits the NORMAL_SCORES map of {@link ColumnTransform} to every continuous column with two or
     * more distinct training values: z = Phi^-1(F(x)) with F the kernel-smoothed empirical
     * distribution function of the column's observed training values and the bandwidth
     * h = {@code bandwidthMultiple} x Silverman's rule ({@link ColumnTransform#silvermanBandwidth}).
     * Binary columns stay IDENTITY, one-valued continuous columns CONSTANT, as in
     * {@link #fit(Table, Set)}. Each modelled continuous column is then close to standard normal on
     * the training rows whatever its shape (skewed, heavy-tailed, bounded), and
     * {@link #logJacobian(Table)} is exact, so densities convert to original units as for the other
     * kinds (a Gaussian copula; Liu, Lafferty &amp; Wasserman 2009, "The Nonparanormal").
     *
     * @param training the training rows (not modified)
     * @param bandwidthMultiple the multiple of Silverman's rule, finite and above 0 (1 is the rule itself)
     * @return the fitted transforms
     * @throws IllegalArgumentException naming the column if a continuous column has no observed
     *     training cell, or naming {@code bandwidthMultiple}
     */
    public static TableTransform fitNormalScores(Table training, double bandwidthMultiple) {
        Require.notNull("training", training);
        if (!(bandwidthMultiple > 0) || !Double.isFinite(bandwidthMultiple)) {
            throw new IllegalArgumentException("bandwidthMultiple is " + bandwidthMultiple
                    + "; expected a finite multiple of Silverman's rule above 0");
        }
        return fitNormalScores(training, Set.of(), bandwidthMultiple);
    }

    /**
     * As {@link #fitNormalScores(Table, double)}, with the columns named in {@code logColumns}
     * log-standardized as {@link #fit(Table, Set)} does (they must then be strictly positive);
     * integer columns are standardized, binary and categorical ones untouched.
     *
     * @param training the training rows (not modified)
     * @param logColumns names of continuous columns to model on the log scale; may be empty (not modified)
     * @param bandwidthMultiple the multiple of Silverman's rule, finite and above 0
     * @return the fitted transforms
     * @throws IllegalArgumentException naming the column (as {@link #fit(Table, Set)}) or {@code bandwidthMultiple}
     */
    public static TableTransform fitNormalScores(Table training, Set<String> logColumns, double bandwidthMultiple) {
        Require.notNull("training", training);
        Require.notNull("logColumns", logColumns);
        if (!(bandwidthMultiple > 0) || !Double.isFinite(bandwidthMultiple)) {
            throw new IllegalArgumentException("bandwidthMultiple is " + bandwidthMultiple
                    + "; expected a finite multiple of Silverman's rule above 0");
        }
        return fit(training, logColumns, bandwidthMultiple);
    }

    /**
     * Refuses a log column that is not CONTINUOUS; {@code kind} null means no such column among
     * {@code names}.
     */
    private static void requireContinuousLog(String name, ColumnKind kind, List<String> names) {
        if (kind != ColumnKind.CONTINUOUS) {
            throw new IllegalArgumentException("log column '" + name + "' is "
                    + (kind == null ? "not a column of " + names : kind.toString())
                    + "; expected a CONTINUOUS column");
        }
    }

    /**
     * The transform of a BINARY column (identity) or a CATEGORICAL one of {@code categories} labels
     * (the constant 0 for a single label, else identity); null for CONTINUOUS and INTEGER columns.
     */
    private static ColumnTransform discreteTransform(ColumnKind kind, int categories) {
        if (kind == ColumnKind.BINARY) {
            return ColumnTransform.identity();
        }
        if (kind == ColumnKind.CATEGORICAL) {
            return categories == 1 ? ColumnTransform.constant(0.0) : ColumnTransform.identity();
        }
        return null;
    }

    /**
     * bandwidthMultiple NaN: STANDARDIZE and LOG_STANDARDIZE; else NORMAL_SCORES with that multiple
     * for the real continuous columns that are not log columns.
     */
    private static TableTransform fit(Table training, Set<String> logColumns, double bandwidthMultiple) {
        boolean scores = !Double.isNaN(bandwidthMultiple);
        for (String name : logColumns) {
            requireContinuousLog(name, training.kind(training.indexOf(name)), null);
        }
        List<ColumnTransform> transforms = new ArrayList<>(training.columns());
        List<String> fitNotes = new ArrayList<>();
        java.util.Map<String, Long> lowest = new java.util.LinkedHashMap<>();
        for (int c = 0; c < training.columns(); c++) {
            String name = training.name(c);
            ColumnTransform discrete = discreteTransform(training.kind(c),
                    training.kind(c) == ColumnKind.CATEGORICAL ? training.categories(c).size() : 0);
            if (discrete != null) {
                transforms.add(discrete);
                continue;
            }
            boolean whole = training.kind(c) == ColumnKind.INTEGER;
            boolean log = logColumns.contains(name);
            double[] col = training.column(c);
            double[] observed = new double[col.length];
            int n = 0;
            for (int r = 0; r < col.length; r++) {
                double v = col[r];
                if (Double.isNaN(v)) {
                    continue;
                }
                if (log && !(v > 0)) {
                    throw new IllegalArgumentException("column '" + name + "' at training row " + r + " is " + v
                            + "; a log column needs every training value above 0");
                }
                observed[n++] = v;
            }
            if (n == 0) {
                throw new IllegalArgumentException("column '" + name + "' has no observed cell in the "
                        + training.rows() + " training rows; expected at least one to fit its transform");
            }
            observed = Arrays.copyOf(observed, n);
            if (scores && !whole && !log && hasTwoDistinct(observed)) {
                fitNotes.addAll(missingNote(name, n, col.length - n));
                double h = bandwidthMultiple * ColumnTransform.silvermanBandwidth(observed);
                transforms.add(ColumnTransform.normalScores(observed, h));
                continue;
            }
            double min = observed[0];
            double max = observed[0];
            for (double v : observed) {
                min = Math.min(min, v);
                max = Math.max(max, v);
            }
            double[] y = observed;
            if (log) {
                y = new double[n];
                for (int i = 0; i < n; i++) {
                    y[i] = Math.log(observed[i]);
                }
            }
            double mean = mean(y);
            double sd = Math.sqrt(populationVariance(y, mean));
            transforms.add(columnOf(name, whole, log, new ColumnStatistics(n, col.length - n, min, max, mean, sd),
                    lowest, fitNotes));
        }
        return new TableTransform(Table.Layout.of(training.names(), training.kinds(), training.categories()), transforms,
                fitNotes, lowest);
    }

    /**
     * Builds the transforms from statistics of the columns computed elsewhere (for instance by a
     * distributed engine's aggregates over every row of a table too large for one JVM), by the same
     * rule as {@link #fit(Table, Set)}: binary columns IDENTITY; a categorical column IDENTITY over
     * its labels, or CONSTANT at index 0 with one label; a continuous or integer column CONSTANT at
     * its value when {@code min == max}, else STANDARDIZE (LOG_STANDARDIZE for a log column) with
     * the statistics' mean and population standard deviation, or CONSTANT at the mean (exp of the
     * mean for a log column) when that deviation is 0. An integer column whose smallest value is at
     * least 0 counts from 0 ({@link #lowest()}). A column with missing cells gets a note.
     *
     * <p>The result equals {@code fit(table, logColumns)} when the statistics are those of
     * {@code table}'s observed cells exactly, categories and their order included; statistics
     * computed in another order of summation differ in the last bits.
     *
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @param categories the labels of each categorical column, in index order (not modified)
     * @param logColumns names of continuous columns modelled on the log scale; may be empty (not modified)
     * @param statistics the statistics of every continuous and integer column by name, and of no
     *     other column; for a log column, {@code mean} and {@code sd} are those of log x (not modified)
     * @return the transforms
     * @throws IllegalArgumentException naming the column: a missing or extra statistics entry, a
     *     log column that is not continuous or whose smallest value is not above 0, or a bad layout
     */
    public static TableTransform fromStatistics(List<String> names, List<ColumnKind> kinds,
            java.util.Map<String, List<String>> categories, Set<String> logColumns,
            java.util.Map<String, ColumnStatistics> statistics) {
        Require.notNull("categories", categories);
        Require.notNull("logColumns", logColumns);
        Require.notNull("statistics", statistics);
        Table.Layout layout = Table.Layout.of(names, kinds, categories);
        for (String name : logColumns) {
            Integer at = layout.index.get(name);
            requireContinuousLog(name, at == null ? null : layout.kinds.get(at), layout.names);
        }
        for (String name : statistics.keySet()) {
            Integer at = layout.index.get(name);
            if (at == null || (layout.kinds.get(at) != ColumnKind.CONTINUOUS && layout.kinds.get(at) != ColumnKind.INTEGER)) {
                throw new IllegalArgumentException("statistics has an entry for '" + name + "', which is "
                        + (at == null ? "not a column of " + layout.names : layout.kinds.get(at).toString())
                        + "; expected entries for the CONTINUOUS and INTEGER columns only");
            }
        }
        List<ColumnTransform> transforms = new ArrayList<>(layout.names.size());
        List<String> fitNotes = new ArrayList<>();
        java.util.Map<String, Long> lowest = new java.util.LinkedHashMap<>();
        for (int c = 0; c < layout.names.size(); c++) {
            String name = layout.names.get(c);
            ColumnKind kind = layout.kinds.get(c);
            ColumnTransform discrete = discreteTransform(kind,
                    kind == ColumnKind.CATEGORICAL ? layout.categories.get(c).size() : 0);
            if (discrete != null) {
                transforms.add(discrete);
            } else {
                ColumnStatistics s = statistics.get(name);
                if (s == null) {
                    throw new IllegalArgumentException("statistics has no entry for the " + kind + " column '" + name
                            + "'; expected one for every CONTINUOUS and INTEGER column");
                }
                boolean log = logColumns.contains(name);
                if (log && !(s.min() > 0)) {
                    throw new IllegalArgumentException("column '" + name + "' has the smallest value " + s.min()
                            + "; a log column needs every training value above 0");
                }
                transforms.add(columnOf(name, kind == ColumnKind.INTEGER, log, s, lowest, fitNotes));
            }
        }
        return new TableTransform(layout, transforms, fitNotes, lowest);
    }

    /**
     * The one rule from a continuous or integer column's statistics to its transform, shared by
     * {@link #fit(Table, Set)} and {@link #fromStatistics}; records the column's lowest value and
     * its note on missing cells.
     */
    private static ColumnTransform columnOf(String name, boolean whole, boolean log, ColumnStatistics s,
            java.util.Map<String, Long> lowest, List<String> fitNotes) {
        if (whole && s.min() >= 0.0) {
            lowest.put(name, 0L);      // counts: the support starts at 0
        }
        fitNotes.addAll(missingNote(name, s.observed(), s.missing()));
        if (s.min() == s.max()) {
            return ColumnTransform.constant(s.min());
        }
        if (s.sd() == 0.0) {
            return ColumnTransform.constant(log ? Math.exp(s.mean()) : s.mean());
        }
        return log ? ColumnTransform.logStandardize(s.mean(), s.sd()) : ColumnTransform.standardize(s.mean(), s.sd());
    }

    private static List<String> missingNote(String name, long observed, long missing) {
        return missing == 0 ? List.of() : List.of("column '" + name + "' has " + missing + " of " + (observed + missing)
                + " training cells missing; its transform was fitted on the other " + observed);
    }

    /**
     * Rebuilds fitted transforms, e.g. from a model file.
     *
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @param transforms one transform per column: IDENTITY for each binary column, and STANDARDIZE,
     *     LOG_STANDARDIZE, NORMAL_SCORES or CONSTANT for each continuous one (not modified)
     * @return the transforms
     * @throws IllegalArgumentException naming the column if a size or a pairing of kind and transform is wrong
     */
    public static TableTransform of(List<String> names, List<ColumnKind> kinds, List<ColumnTransform> transforms) {
        return of(names, kinds, java.util.Map.of(), transforms);
    }

    /**
     * Rebuilds fitted transforms with categorical columns, e.g. from a model file.
     *
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @param categories the labels of each categorical column, in index order (not modified)
     * @param transforms one transform per column: IDENTITY for each binary column and each categorical
     *     column of two or more categories, CONSTANT at 0 for a categorical column of one, as
     *     {@link #of(List, List, List)} for continuous ones (not modified)
     * @return the transforms
     * @throws IllegalArgumentException naming the column if a size, label or pairing of kind and transform is wrong
     */
    public static TableTransform of(List<String> names, List<ColumnKind> kinds,
            java.util.Map<String, List<String>> categories, List<ColumnTransform> transforms) {
        return of(names, kinds, categories, java.util.Map.of(), transforms);
    }

    /**
     * Rebuilds fitted transforms with categorical and integer columns, e.g. from a model file.
     *
     * @param names the column names (not modified)
     * @param kinds one kind per column (not modified)
     * @param categories the labels of each categorical column, in index order (not modified)
     * @param lowest the lowest integer of each INTEGER column whose support has one: 0 (counts); no
     *     entry for integer columns without a lowest value (not modified)
     * @param transforms one transform per column, as {@link #of(List, List, java.util.Map, List)};
     *     STANDARDIZE or CONSTANT for an integer column (not modified)
     * @return the transforms
     * @throws IllegalArgumentException naming the column if a size, label, lowest value or pairing is wrong
     */
    public static TableTransform of(List<String> names, List<ColumnKind> kinds,
            java.util.Map<String, List<String>> categories, java.util.Map<String, Long> lowest,
            List<ColumnTransform> transforms) {
        Require.notNull("categories", categories);
        Require.notNull("lowest", lowest);
        Table.Layout layout = Table.Layout.of(names, kinds, categories);
        Require.notNull("transforms", transforms);
        if (transforms.size() != layout.names.size()) {
            throw new IllegalArgumentException("transforms has " + transforms.size() + " entries; expected "
                    + layout.names.size() + " (one per column)");
        }
        for (java.util.Map.Entry<String, Long> e : lowest.entrySet()) {
            Integer at = layout.index.get(e.getKey());
            if (at == null || layout.kinds.get(at) != ColumnKind.INTEGER || e.getValue() == null || e.getValue() != 0L) {
                throw new IllegalArgumentException("lowest names '" + e.getKey() + "' with " + e.getValue()
                        + "; expected an INTEGER column with the lowest value 0 (counts)");
            }
        }
        for (int c = 0; c < transforms.size(); c++) {
            ColumnTransform t = transforms.get(c);
            if (t == null) {
                throw new IllegalArgumentException("transforms[" + c + "] (column '" + layout.names.get(c)
                        + "') is null; expected a transform");
            }
            if (layout.kinds.get(c) == ColumnKind.CATEGORICAL) {
                boolean one = layout.categories.get(c).size() == 1;
                boolean ok = one ? t.kind() == ColumnTransform.Kind.CONSTANT && t.shift() == 0.0
                        : t.kind() == ColumnTransform.Kind.IDENTITY;
                if (!ok) {
                    throw new IllegalArgumentException("transforms[" + c + "] (column '" + layout.names.get(c)
                            + "', CATEGORICAL with " + layout.categories.get(c).size() + " categories) is " + t.kind()
                            + "; expected " + (one ? "CONSTANT at 0" : "IDENTITY"));
                }
                continue;
            }
            if (layout.kinds.get(c) == ColumnKind.INTEGER && t.kind() != ColumnTransform.Kind.STANDARDIZE
                    && t.kind() != ColumnTransform.Kind.CONSTANT) {
                throw new IllegalArgumentException("transforms[" + c + "] (column '" + layout.names.get(c)
                        + "', INTEGER) is " + t.kind() + "; expected STANDARDIZE or CONSTANT");
            }
            boolean binary = layout.kinds.get(c) == ColumnKind.BINARY;
            boolean identity = t.kind() == ColumnTransform.Kind.IDENTITY;
            if (binary != identity) {
                throw new IllegalArgumentException("transforms[" + c + "] (column '" + layout.names.get(c) + "', "
                        + layout.kinds.get(c) + ") is " + t.kind() + "; expected "
                        + (binary ? "IDENTITY for a binary column"
                                : "STANDARDIZE, LOG_STANDARDIZE, NORMAL_SCORES or CONSTANT for a continuous column"));
            }
        }
        return new TableTransform(layout, transforms, List.of(), lowest);
    }

    // ------------------------------------------------------------------ accessors

    /** @return the column names (unmodifiable) */
    public List<String> names() {
        return names;
    }

    /** @return the column kinds (unmodifiable) */
    public List<ColumnKind> kinds() {
        return kinds;
    }

    /** @return one transform per column (unmodifiable) */
    public List<ColumnTransform> transforms() {
        return transforms;
    }

    /**
     * @param column a column index, 0-based
     * @return that column's transform
     * @throws IllegalArgumentException if the index is out of range
     */
    public ColumnTransform transform(int column) {
        Require.inRange("column", column, 0, names.size() - 1);
        return transforms.get(column);
    }

    /** @return indices of the continuous columns that are diffused (not CONSTANT), in order (a copy) */
    public int[] modelledContinuous() {
        return modelledContinuous.clone();
    }

    /**
     * The real continuous model columns: the positions j in model-space order (0 .. Dc-1) of the
     * modelled continuous columns whose kind is CONTINUOUS, {@code kinds().get(modelledContinuous()[j])
     * == CONTINUOUS}. INTEGER columns, which keep their own axis for their decoder, are left out. These
     * are the columns a whitened chain whitens and the marginal criterion scores.
     *
     * @return those positions j, ascending (a new array)
     */
    public int[] realContinuousColumns() {
        return IntStream.range(0, modelledContinuous.length)
                .filter(j -> kinds.get(modelledContinuous[j]) == ColumnKind.CONTINUOUS).toArray();
    }

    /** @return indices of the binary columns, in order (a copy) */
    public int[] modelledBinary() {
        return modelledBinary.clone();
    }

    /** @return indices of the categorical columns with two or more categories, in order (a copy) */
    public int[] modelledCategorical() {
        return modelledCategorical.clone();
    }

    /** @return K of each modelled categorical column, in model-space order */
    public int[] modelledCategories() {
        int[] k = new int[modelledCategorical.length];
        for (int j = 0; j < k.length; j++) {
            k[j] = layout.categories.get(modelledCategorical[j]).size();
        }
        return k;
    }

    /** @return the lowest integer (0) of each INTEGER column that is a count, by name (unmodifiable) */
    public java.util.Map<String, Long> lowest() {
        return lowest;
    }

    /** @return the labels of every categorical column by name, in table order (unmodifiable) */
    public java.util.Map<String, List<String>> categories() {
        return layout.categoryMap();
    }

    /** @return indices of the CONSTANT columns, in order (a copy) */
    public int[] constantColumns() {
        return constants.clone();
    }

    /** @return the width of a model-space row: modelled continuous, binary and categorical columns */
    public int modelColumns() {
        return modelledContinuous.length + modelledBinary.length + modelledCategorical.length;
    }

    /** @return the names of the model-space columns, in model-space order */
    public List<String> modelColumnNames() {
        List<String> out = new ArrayList<>(modelColumns());
        for (int c : modelledContinuous) {
            out.add(names.get(c));
        }
        for (int c : modelledBinary) {
            out.add(names.get(c));
        }
        for (int c : modelledCategorical) {
            out.add(names.get(c));
        }
        return List.copyOf(out);
    }

    /**
     * Human-readable facts about the fit: constant columns, log columns, columns with missing
     * training cells.
     *
     * @return the notes (unmodifiable)
     */
    public List<String> notes() {
        return notes;
    }

    // ------------------------------------------------------------------ maps

    /**
     * The rows of {@code t} in model space: {@code out[r] = (f_c(x_rc) for c in modelledContinuous,
     * x_rc for c in modelledBinary)}. Missing cells stay NaN; CONSTANT columns are left out,
     * whatever their values in {@code t}.
     *
     * @param t a table with this transform's names and kinds (not modified)
     * @return a new array, t.rows() x {@link #modelColumns()}
     * @throws IllegalArgumentException naming the first column that differs, or a LOG_STANDARDIZE cell &lt;= 0
     */
    public double[][] toModelSpace(Table t) {
        t = aligned(t);
        int nc = modelledContinuous.length;
        double[][] out = new double[t.rows()][modelColumns()];
        for (int r = 0; r < t.rows(); r++) {
            for (int j = 0; j < nc; j++) {
                int c = modelledContinuous[j];
                double x = t.get(r, c);
                try {
                    out[r][j] = transforms.get(c).forward(x);
                } catch (IllegalArgumentException e) {
                    throw new IllegalArgumentException("row " + r + ", column '" + names.get(c) + "': " + e.getMessage(), e);
                }
            }
            for (int j = 0; j < modelledBinary.length; j++) {
                out[r][nc + j] = t.get(r, modelledBinary[j]);
            }
            int nd = nc + modelledBinary.length;
            for (int j = 0; j < modelledCategorical.length; j++) {
                out[r][nd + j] = t.get(r, modelledCategorical[j]);
            }
        }
        return out;
    }

    /**
     * The table with each categorical column's cells indexed by this transform's labels (matched by
     * label text, {@link Table#recode}); the table itself when the labels are the same.
     *
     * @param table a table with this transform's names and kinds (not modified)
     * @return the table in this transform's categories
     * @throws IllegalArgumentException naming the first column that differs, or the row, column and
     *     label of a category the transform does not know
     */
    public Table aligned(Table table) {
        checkLayout(table);
        Table t = table;
        for (int c = 0; c < names.size(); c++) {
            if (kinds.get(c) == ColumnKind.CATEGORICAL && !t.categories(c).equals(layout.categories.get(c))) {
                try {
                    t = t.recode(names.get(c), layout.categories.get(c));
                } catch (IllegalArgumentException e) {
                    throw new IllegalArgumentException(e.getMessage() + " (the categories of the training table)", e);
                }
            }
        }
        return t;
    }

    /**
     * The inverse of {@link #toModelSpace(Table)}: continuous cells by f^-1, binary cells rounded to
     * 1 when at least 0.5 and to 0 otherwise, NaN kept as missing, CONSTANT columns filled with their
     * value.
     *
     * @param model rows of {@link #modelColumns()} values each, in model-space order (not modified)
     * @return a new table with this transform's names and kinds
     * @throws IllegalArgumentException if a row has the wrong length (both lengths named) or a cell
     *     maps to an infinite value
     */
    public Table fromModelSpace(double[][] model) {
        Require.notNull("model", model);
        int nc = modelledContinuous.length;
        int width = modelColumns();
        double[][] rows = new double[model.length][names.size()];
        for (int r = 0; r < model.length; r++) {
            double[] z = model[r];
            if (z == null || z.length != width) {
                throw new IllegalArgumentException("model[" + r + "] has " + (z == null ? "no array (null)" : z.length
                        + " values") + "; expected " + width + " (" + nc + " continuous then "
                        + modelledBinary.length + " binary" + (modelledCategorical.length > 0 ? " then "
                        + modelledCategorical.length + " categorical" : "") + ")");
            }
            for (int j = 0; j < nc; j++) {
                int c = modelledContinuous[j];
                double x = transforms.get(c).inverse(z[j]);
                if (kinds.get(c) == ColumnKind.INTEGER && !Double.isNaN(x)) {
                    // the integer whose unit-wide bin holds x (Ho et al. 2020, eq. 13), within the support
                    x = Math.max(Math.rint(x), lowest.containsKey(names.get(c)) ? 0.0 : -0x1p52);
                    x = Math.min(x, 0x1p52);
                }
                rows[r][c] = x;
            }
            for (int j = 0; j < modelledBinary.length; j++) {
                double v = z[nc + j];
                rows[r][modelledBinary[j]] = Double.isNaN(v) ? Double.NaN : v >= 0.5 ? 1.0 : 0.0;
            }
            int nd = nc + modelledBinary.length;
            for (int j = 0; j < modelledCategorical.length; j++) {
                double v = z[nd + j];
                int k = layout.categories.get(modelledCategorical[j]).size();
                rows[r][modelledCategorical[j]] = Double.isNaN(v) ? Double.NaN : Math.max(0, Math.min(k - 1, Math.rint(v)));
            }
            for (int c : constants) {
                rows[r][c] = transforms.get(c).shift();
            }
        }
        return Table.of(names, kinds, layout.categoryMap(), rows);
    }

    /**
     * Per row r, sum over the modelled continuous columns c with an observed cell of
     * log |dz/dx| at x_rc (see {@link TableTransform}, "Densities"): log p_x = log p_z + this.
     *
     * @param t a table with this transform's names and kinds (not modified)
     * @return one log-Jacobian per row, in nats
     * @throws IllegalArgumentException naming the first column that differs, or a LOG_STANDARDIZE cell &lt;= 0
     */
    public double[] logJacobian(Table t) {
        checkLayout(t);
        double[] out = new double[t.rows()];
        for (int r = 0; r < t.rows(); r++) {
            out[r] = sumLogJacobian(t.row(r), r);
        }
        return out;
    }

    /**
     * The log-Jacobian of one row in original units, as {@link #logJacobian(Table)}.
     *
     * @param row one value per column, NaN for missing (not modified)
     * @return sum_c log |dz_c/dx_c| over modelled continuous, observed cells, in nats
     * @throws IllegalArgumentException if the length differs from the column count, or a
     *     LOG_STANDARDIZE cell is &lt;= 0
     */
    public double logJacobian(double[] row) {
        Require.notNull("row", row);
        if (row.length != names.size()) {
            throw new IllegalArgumentException("row has " + row.length + " values; expected " + names.size()
                    + " (one per column)");
        }
        return sumLogJacobian(row, -1);
    }

    private double sumLogJacobian(double[] row, int r) {
        double sum = 0.0;
        for (int c : modelledContinuous) {
            if (kinds.get(c) == ColumnKind.INTEGER) {
                continue;      // a probability mass: no change of variables
            }
            double x = row[c];
            if (Double.isNaN(x)) {
                continue;
            }
            if (Double.isInfinite(x)) {
                throw new IllegalArgumentException((r >= 0 ? "row " + r + ", " : "") + "column '" + names.get(c)
                        + "' is " + x + "; expected a finite value");
            }
            try {
                sum += transforms.get(c).logJacobian(x);
            } catch (IllegalArgumentException e) {
                throw new IllegalArgumentException((r >= 0 ? "row " + r + ", " : "") + "column '" + names.get(c)
                        + "': " + e.getMessage(), e);
            }
        }
        return sum;
    }

    private void checkLayout(Table t) {
        Require.notNull("table", t);
        if (t.columns() != names.size()) {
            throw new IllegalArgumentException("the table has " + t.columns() + " columns " + t.names()
                    + "; the transform expects " + names.size() + " " + names);
        }
        for (int c = 0; c < names.size(); c++) {
            if (!t.name(c).equals(names.get(c)) || t.kind(c) != kinds.get(c)) {
                throw new IllegalArgumentException("table column " + c + " is '" + t.name(c) + "' (" + t.kind(c)
                        + "); the transform expects '" + names.get(c) + "' (" + kinds.get(c) + ")");
            }
        }
    }

    // ------------------------------------------------------------------ statistics

    private static boolean hasTwoDistinct(double[] values) {
        for (double v : values) {
            if (v != values[0]) {
                return true;
            }
        }
        return false;
    }

    /** m = (1/n) sum x_i, refined by the mean of the residuals (one correction pass). */
    static double mean(double[] x) {
        double sum = 0.0;
        for (double v : x) {
            sum += v;
        }
        double m = sum / x.length;
        double correction = 0.0;
        for (double v : x) {
            correction += v - m;
        }
        return m + correction / x.length;
    }

    /**
     * (1/n) [sum (x_i - m)^2 - (sum (x_i - m))^2 / n], the corrected two-pass algorithm (Chan, Golub
     * &amp; LeVeque 1983, eq. 1.7).
     */
    static double populationVariance(double[] x, double m) {
        double squares = 0.0;
        double sum = 0.0;
        for (double v : x) {
            double d = v - m;
            squares += d * d;
            sum += d;
        }
        return Math.max(0.0, (squares - sum * sum / x.length) / x.length);
    }

    // ------------------------------------------------------------------ object

    /**
     * Equal when names, kinds and transforms are equal (exactly); notes are not compared.
     *
     * @param o another object
     * @return true if equal
     */
    @Override
    public boolean equals(Object o) {
        if (this == o) {
            return true;
        }
        if (!(o instanceof TableTransform)) {
            return false;
        }
        TableTransform t = (TableTransform) o;
        return names.equals(t.names) && kinds.equals(t.kinds) && transforms.equals(t.transforms)
                && layout.categories.equals(t.layout.categories) && lowest.equals(t.lowest);
    }

    /** @return a hash consistent with {@link #equals(Object)} */
    @Override
    public int hashCode() {
        return 31 * (31 * names.hashCode() + kinds.hashCode()) + transforms.hashCode();
    }

    /** @return one line per column: name, kind and transform */
    @Override
    public String toString() {
        StringBuilder sb = new StringBuilder("TableTransform (").append(modelledContinuous.length)
                .append(" continuous and ").append(modelledBinary.length).append(" binary modelled, ")
                .append(constants.length).append(" constant)\n");
        for (int c = 0; c < names.size(); c++) {
            ColumnTransform t = transforms.get(c);
            sb.append("  ").append(names.get(c)).append(": ").append(kinds.get(c)).append(' ').append(t.kind());
            if (t.kind() == ColumnTransform.Kind.STANDARDIZE || t.kind() == ColumnTransform.Kind.LOG_STANDARDIZE) {
                sb.append(" shift=").append(t.shift()).append(" scale=").append(t.scale());
            } else if (t.kind() == ColumnTransform.Kind.NORMAL_SCORES) {
                sb.append(" knots=").append(t.knots().length).append(" bandwidth=").append(t.scale());
            } else if (t.kind() == ColumnTransform.Kind.CONSTANT) {
                sb.append(" value=").append(t.shift());
            }
            if (kinds.get(c) == ColumnKind.CATEGORICAL) {
                sb.append(" categories=").append(layout.categories.get(c).size());
            }
            sb.append('\n');
        }
        return sb.toString();
    }
}
