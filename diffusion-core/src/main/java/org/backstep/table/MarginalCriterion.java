package org.backstep.table;

import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import org.backstep.schedule.Require;

/**
 * The criterion that chooses the maps of the real continuous columns without a network: the K-fold
 * cross-validated negative log-likelihood, in the caller's units, of the Gaussian that a whitened
 * model with the N(0, I) part reproduces when its network adds nothing.
 *
 * <p>For a candidate family of per-column maps f (standardized, or normal scores at a bandwidth
 * multiple c; {@link TableTransform}), rows are dealt into K folds (row i into fold i mod K). For each
 * fold k the maps are fitted on the other folds' rows, their real continuous model cells y (the
 * columns a whitened chain whitens: CONTINUOUS, not constant; a log column's map is its
 * log-standardization in every candidate) give a mean m and a covariance shrunk by Ledoit &amp;
 * Wolf's intensity S* ({@link Whitening#fitShrunk}, the whitening of the model), and each held-out
 * row x of fold k scores
 * <pre>
 *   -log p(x) = -log N(f(x); m, S*) - sum_j log f_j'(x_j)
 *             = |W (f(x) - m)|^2 / 2 + (p / 2) log(2 pi) - log |det W| - sum_j log f_j'(x_j),
 * </pre>
 * W = S*^(-1/2), p the number of those columns; the criterion is the mean over all rows (each is
 * held out once). With normal scores this is the held-out likelihood of a Gaussian copula (Liu,
 * Lafferty &amp; Wasserman 2009, "The Nonparanormal", JMLR 10:2295-2328) whose marginals are kernel
 * density estimates of bandwidth c times Silverman's rule (Silverman 1986, "Density Estimation for
 * Statistics and Data Analysis", eq. 3.31); with the standardized maps it is the held-out likelihood
 * of the shrunk Gaussian itself. Both are in the same units, so they compare directly
 * ({@link Figures#scoresWin}: a lower mean, and better on more rows than a fair coin would give).
 * Deterministic: no random draw.
 *
 * <p>What it rewards: the log-likelihood cross-validation of a kernel estimate is ruled by the rows
 * in the tails (a held-out value beyond the other rows' range by several bandwidths gets a density
 * of the kernel's Gaussian tail), so on heavy-tailed columns it prefers wide bandwidths, where the
 * scores approach standardization; on lognormal columns (log-sd 1) the best multiple was 8.
 */
public final class MarginalCriterion {

    /**
     * The bandwidth multiples tried, times Silverman's rule: from undersmoothed (0.5) to nearly a
     * normal fit of the marginal (8; at c h_S much wider than the data's spread F_h is close to a
     * normal distribution function, and the scores close to standardization).
     */
    public static final List<Double> MULTIPLES = List.of(0.5, 1.0, 2.0, 4.0, 8.0);
    /** K, the folds of the cross-validation (common practice, no source: 5 or 10). */
    public static final int FOLDS = 5;
    /**
     * At most this many rows, evenly spaced (row floor(i n / M) for i = 0..M-1), feed
     * {@link #figures}: a normal-scores map costs one kernel per training value per cell, so the
     * criterion costs O(n^2 p) per candidate; 1,424 rows of 13 columns took 25 s of one core
     * where 300 take about 1 s. The candidates' figures then carry a standard error of about
     * sd / sqrt(300) per record, small against the gaps the criterion decides on skewed columns.
     */
    public static final int MAX_ROWS = 300;
    /**
     * The smallest mean gain, nats per record, for which normal scores are taken: issue 11's tolerance
     * for "as good as the fitted Gaussian" on Gaussian data. On Gaussian columns the widest bandwidth
     * came within 0.001 nats of standardization (sometimes below it, and on more than half the rows:
     * the sign test alone took it on 4-D Gaussian data); on the open tables the gains were 0.2 to 5.
     */
    public static final double MIN_GAIN = 0.05;
    /**
     * Normal scores are taken only when they beat the standardized maps on more rows than half by this
     * many standard errors of a fair coin's count: the one-sided sign test (Conover 1999, "Practical
     * Nonparametric Statistics", section 3.4) at about 2%; the rule is on {@link Figures#scoresWin}.
     */
    public static final double MARGIN = 2.0;

    private MarginalCriterion() {
    }

    /**
     * The figures of the criterion for the standardized maps and the normal scores at each multiple.
     * The rule that compares them, with its formula, is {@link #scoresWin}.
     *
     * @param standardized the criterion of the standardized maps, nats per record
     * @param multiples the bandwidth multiples tried (a copy of {@link #MULTIPLES})
     * @param scores the criterion of the normal scores at each multiple, nats per record
     * @param standardError the standard error of the mean per-row difference between the best normal
     *     scores and the standardized maps (sd of the differences / sqrt(rows)), for the record
     * @param better the rows on which the best normal scores score fewer nats than the standardized maps
     * @param rows the rows the criterion ran on
     */
    public record Figures(double standardized, List<Double> multiples, List<Double> scores, double standardError,
                          int better, int rows) {

        /** Checks and copies. */
        public Figures {
            Require.inRange("better", better, 0, rows);
            Require.notNull("multiples", multiples);
            Require.notNull("scores", scores);
            if (multiples.size() != scores.size() || multiples.isEmpty()) {
                throw new IllegalArgumentException("multiples has " + multiples.size() + " entries and scores "
                        + scores.size() + "; expected the same number, at least one");
            }
            multiples = List.copyOf(multiples);
            scores = List.copyOf(scores);
        }

        /** @return the index of the lowest normal-scores figure (the first of equal ones) */
        public int best() {
            return argmin(scores);
        }

        /** @return the multiple with the lowest normal-scores figure */
        public double bestMultiple() {
            return multiples.get(best());
        }

        /**
         * @return whether the best normal scores beat the standardized maps: a mean lower by more than
         *     {@link #MIN_GAIN}, and more
         *     rows scored better than half of them by {@link #MARGIN} standard errors of a fair coin's
         *     count, better &gt; n / 2 + MARGIN sqrt(n) / 2 (the sign test, one-sided at about 2%;
         *     Conover 1999, "Practical Nonparametric Statistics", section 3.4). The sign test, not the
         *     mean's standard error: the per-row differences are ruled by a few tail rows (on
         *     breast_cancer a mean gain of 2.9 nats per record came with a standard error of 2.8),
         *     and on Gaussian columns the widest bandwidth comes within 0.001 nats of
         *     standardization (either side; see {@link #MIN_GAIN}), which the mean alone would take by noise.
         */
        public boolean scoresWin() {
            return scores.get(best()) < standardized - MIN_GAIN && better > rows / 2.0 + MARGIN * Math.sqrt(rows) / 2.0;
        }

        /** @return one line: every figure, nats per record */
        @Override
        public String toString() {
            StringBuilder sb = new StringBuilder(String.format(java.util.Locale.ROOT, "standardized %.4f", standardized));
            for (int i = 0; i < scores.size(); i++) {
                sb.append(String.format(java.util.Locale.ROOT, ", normal scores x%s %.4f", trim(multiples.get(i)),
                        scores.get(i)));
            }
            return sb.append(String.format(java.util.Locale.ROOT, " (standard error of the best's difference %.4f;"
                    + " better on %d of %d rows)", standardError, better, rows)).toString();
        }

        private static String trim(double v) {
            return v == Math.rint(v) ? Long.toString((long) v) : Double.toString(v);
        }
    }

    /**
     * The criterion of the standardized maps and of the normal scores at each of {@link #MULTIPLES},
     * with {@link #FOLDS} folds, on at most {@link #MAX_ROWS} of the rows (evenly spaced).
     *
     * @param rows complete rows (not modified), at least {@link #FOLDS} x 2
     * @param logColumns the columns log-standardized in every candidate (not modified)
     * @return the figures
     * @throws IllegalArgumentException as {@link #heldOutNats}
     */
    public static Figures figures(Table rows, Set<String> logColumns) {
        Require.notNull("rows", rows);
        if (rows.rows() > MAX_ROWS) {
            int[] keep = new int[MAX_ROWS];
            for (int i = 0; i < MAX_ROWS; i++) {
                keep[i] = (int) ((long) i * rows.rows() / MAX_ROWS);
            }
            rows = rows.selectRows(keep);
        }
        double[] standardized = perRow(rows, logColumns, Double.NaN, FOLDS);
        List<Double> scores = new ArrayList<>();
        List<double[]> rowsOf = new ArrayList<>();
        for (double c : MULTIPLES) {
            double[] each = perRow(rows, logColumns, c, FOLDS);
            rowsOf.add(each);
            scores.add(mean(each));
        }
        int best = argmin(scores);
        double[] diff = new double[standardized.length];
        for (int r = 0; r < diff.length; r++) {
            diff[r] = rowsOf.get(best)[r] - standardized[r];
        }
        double m = mean(diff);
        double ss = 0.0;
        for (double v : diff) {
            ss += (v - m) * (v - m);
        }
        double se = Math.sqrt(ss / (diff.length - 1) / diff.length);
        int better = 0;
        for (double v : diff) {
            if (v < 0) {
                better++;
            }
        }
        return new Figures(mean(standardized), MULTIPLES, scores, Double.isFinite(se) ? se : Double.POSITIVE_INFINITY,
                better, diff.length);
    }

    /**
     * The K-fold cross-validated negative log-likelihood of the whitening's Gaussian under one family
     * of maps, in the caller's units (see the class comment).
     *
     * @param rows complete rows (not modified): at least 2 per fold's complement and 1 per fold
     * @param logColumns the columns log-standardized (not modified)
     * @param bandwidthMultiple c for normal scores (finite, above 0), or NaN for the standardized maps
     * @param folds K, at least 2 and at most the number of rows
     * @return mean nats per record over all rows; +infinity when a column is constant on some fold's
     *     other rows but not on its own (the fitted map then gives the held-out cell no density)
     * @throws IllegalArgumentException naming the argument: null, too few rows, a missing cell (row
     *     and column), a bad multiple or fold count, no real continuous column
     */
    public static double heldOutNats(Table rows, Set<String> logColumns, double bandwidthMultiple, int folds) {
        return mean(perRow(rows, logColumns, bandwidthMultiple, folds));
    }

    /** @return the index of the lowest entry of {@code v} (the first of equal ones) */
    private static int argmin(List<Double> v) {
        int b = 0;
        for (int i = 1; i < v.size(); i++) {
            if (v.get(i) < v.get(b)) {
                b = i;
            }
        }
        return b;
    }

    private static double mean(double[] x) {
        double s = 0.0;
        for (double v : x) {
            s += v;
        }
        return s / x.length;
    }

    /** Each row's held-out nats (row order), as {@link #heldOutNats}; every entry +infinity when a fold loses a column. */
    private static double[] perRow(Table rows, Set<String> logColumns, double bandwidthMultiple, int folds) {
        Require.notNull("rows", rows);
        Require.notNull("logColumns", logColumns);
        if (!Double.isNaN(bandwidthMultiple) && !(bandwidthMultiple > 0 && Double.isFinite(bandwidthMultiple))) {
            throw new IllegalArgumentException("bandwidthMultiple is " + bandwidthMultiple
                    + "; expected a finite multiple of Silverman's rule above 0, or NaN for the standardized maps");
        }
        Require.atLeast("folds", folds, 2);
        Require.atLeast("rows of rows", rows.rows(), 2 * folds);
        for (int r = 0; r < rows.rows(); r++) {
            for (int c = 0; c < rows.columns(); c++) {
                if (Double.isNaN(rows.get(r, c))) {
                    throw new IllegalArgumentException("rows: row " + r + ", column '" + rows.name(c)
                            + "' is missing; the criterion needs complete rows");
                }
            }
        }
        TableTransform all = fitMaps(rows, logColumns, bandwidthMultiple);
        int[] columns = all.realContinuousColumns();
        if (columns.length == 0) {
            throw new IllegalArgumentException("rows have no real continuous column that is not constant; expected"
                    + " at least one (columns " + rows.names() + ")");
        }
        double[] out = new double[rows.rows()];
        for (int k = 0; k < folds; k++) {
            final int fold = k;
            Table fit = rows.filterRows(r -> r % folds != fold);
            Table held = rows.filterRows(r -> r % folds == fold);
            TableTransform maps = fitMaps(fit, logColumns, bandwidthMultiple);
            if (!java.util.Arrays.equals(maps.modelledContinuous(), all.modelledContinuous())) {
                java.util.Arrays.fill(out, Double.POSITIVE_INFINITY);
                return out;
            }
            double[][] y = select(maps.toModelSpace(fit), columns);
            Whitening w = Whitening.fitShrunk(y);
            double[][] yh = select(maps.toModelSpace(held), columns);
            double[] jacobian = maps.logJacobian(held);
            double constant = 0.5 * columns.length * Math.log(2.0 * Math.PI) - w.logDeterminant();
            for (int r = 0; r < yh.length; r++) {
                double[] z = w.whiten(yh[r]);
                double sq = 0.0;
                for (double v : z) {
                    sq += v * v;
                }
                out[fold + r * folds] = 0.5 * sq + constant - jacobian[r];   // held row r of fold k is row k + r K
            }
        }
        return out;
    }

    private static TableTransform fitMaps(Table rows, Set<String> logColumns, double multiple) {
        return Double.isNaN(multiple) ? TableTransform.fit(rows, logColumns)
                : TableTransform.fitNormalScores(rows, logColumns, multiple);
    }

    private static double[][] select(double[][] rows, int[] columns) {
        double[][] out = new double[rows.length][columns.length];
        for (int r = 0; r < rows.length; r++) {
            for (int a = 0; a < columns.length; a++) {
                out[r][a] = rows[r][columns[a]];
            }
        }
        return out;
    }
}
