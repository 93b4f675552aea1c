package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.stream.Stream;

/**
 * Whether a new batch of records differs from a reference batch as a whole, though no single record
 * need stand out: one two-sample test on the records' scores and one per column, their p-values
 * adjusted together for the number of tests.
 *
 * <ul>
 *   <li>Scores: both batches are scored by the model with common random numbers (see
 *       {@link AnomalyScreen}), so that a score is a fixed function of the record; the two samples
 *       of scores are compared by the two-sample Kolmogorov-Smirnov test (Kolmogorov 1933, Smirnov
 *       1948; commons-math3: exact p-values while the two batches hold at most
 *       {@value #EXACT_KS_LIMIT} records together, the asymptotic distribution beyond). An
 *       unscorable record's score (+infinity) counts as the highest.</li>
 *   <li>Continuous columns: the same Kolmogorov-Smirnov test on the observed cells in original
 *       units (the test is unchanged by any increasing change of units). Ties, from rounded
 *       readings, make its p-values conservative.</li>
 *   <li>Binary columns: Pearson's chi-squared test of the 2 x 2 table of counts (commons-math3),
 *       1 degree of freedom, without continuity correction; with expected counts below 5 its
 *       p-values are approximate. A column with a single value in both batches has p = 1.</li>
 *   <li>The m p-values (the scores' and one per column) are adjusted by Holm's step-down method
 *       (Holm 1979, "A simple sequentially rejective multiple test procedure"): sorted ascending,
 *       p~_(i) = max_{k &lt;= i} min(1, (m - k + 1) p_(k)); rejecting every test with p~ &lt;= a keeps
 *       the chance of any false alarm at most a whatever the tests' dependence.</li>
 * </ul>
 *
 * <p>Caution: a drift alarm says the batches differ under these tests; it does not say the new
 * batch is faulty (a new season or a new fleet also drifts). For safety-, health- or
 * compliance-critical decisions, defer to local regulations and qualified review.
 *
 * @param score the test on the scores
 * @param columns one test per column, in table order
 * @param referenceRows the reference batch's rows
 * @param batchRows the new batch's rows
 * @param notes cells of either batch beyond range, outside the support, or imputed; their rows
 *     count the reference batch's rows first, then the new batch's (row referenceRows + i is row i
 *     of the new batch)
 */
public record DriftReport(DriftTest score, List<DriftTest> columns, int referenceRows, int batchRows,
                          List<CellNote> notes) {

    /** The subject of the test on the scores. */
    public static final String SCORE = "score";

    /**
     * Records in both batches together up to which the Kolmogorov-Smirnov p-values are exact
     * (commons-math3's exact distribution counts lattice paths in double, which overflows near
     * 1,000 records).
     */
    public static final int EXACT_KS_LIMIT = 800;

    /** Validates and copies. */
    public DriftReport {
        Require.notNull("score", score);
        columns = List.copyOf(Require.notNull("columns", columns));
        notes = List.copyOf(Require.notNull("notes", notes));
        Require.atLeast("referenceRows", referenceRows, 1);
        Require.atLeast("batchRows", batchRows, 1);
    }

    /** @return every test, the scores' first, then the columns' in table order */
    public List<DriftTest> tests() {
        return Stream.concat(Stream.of(score), columns.stream()).toList();
    }

    /**
     * @return the columns' tests, most significant first: by adjusted p-value, then by p-value, then
     *     by statistic (largest first)
     */
    public List<DriftTest> rankedColumns() {
        return columns.stream().sorted(Comparator.comparingDouble(DriftTest::adjustedPValue)
                .thenComparingDouble(DriftTest::pValue)
                .thenComparing(Comparator.comparingDouble(DriftTest::statistic).reversed())).toList();
    }

    /**
     * @param level the family-wise error rate, in (0, 1), e.g. 0.05
     * @return true if any test, the scores' or a column's, rejects at that level after Holm's adjustment
     */
    public boolean drifted(double level) {
        Require.inOpen("level", level, 0.0, 1.0);
        return tests().stream().anyMatch(t -> t.rejects(level));
    }

    /**
     * Holm's step-down adjustment (Holm 1979): with the p-values sorted ascending,
     * p~_(i) = max_{k &lt;= i} min(1, (m - k + 1) p_(k)).
     *
     * @param p the p-values, each in [0, 1] (not modified)
     * @return the adjusted p-values, in the order given
     */
    public static double[] holm(double[] p) {
        Require.notNull("p", p);
        int m = p.length;
        Integer[] order = new Integer[m];
        for (int i = 0; i < m; i++) {
            Require.inClosed("p[" + i + "]", p[i], 0.0, 1.0);
            order[i] = i;
        }
        java.util.Arrays.sort(order, Comparator.comparingDouble(i -> p[i]));
        double[] adjusted = new double[m];
        double running = 0.0;
        for (int k = 0; k < m; k++) {
            running = Math.max(running, Math.min(1.0, (m - k) * p[order[k]]));
            adjusted[order[k]] = running;
        }
        return adjusted;
    }

    @Override
    public String toString() {
        StringBuilder sb = new StringBuilder(String.format(Locale.ROOT,
                "DriftReport[%d reference rows, %d new rows; scores: %s p %.3g (adjusted %.3g)", referenceRows,
                batchRows, score.test(), score.pValue(), score.adjustedPValue()));
        List<DriftTest> ranked = rankedColumns();
        if (!ranked.isEmpty()) {
            DriftTest top = ranked.get(0);
            sb.append(String.format(Locale.ROOT, "; first column '%s': %s p %.3g (adjusted %.3g)", top.subject(),
                    top.test(), top.pValue(), top.adjustedPValue()));
        }
        return sb.append(']').toString();
    }
}
