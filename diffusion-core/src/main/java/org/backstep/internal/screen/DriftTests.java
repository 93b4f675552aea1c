package org.backstep.internal.screen;

import org.apache.commons.math3.stat.inference.ChiSquareTest;
import org.apache.commons.math3.stat.inference.KolmogorovSmirnovTest;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.ScoringRange;
import org.backstep.option.DriftOptions;
import org.backstep.report.CellNote;
import org.backstep.report.DriftReport;
import org.backstep.report.DriftTest;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * The drift tests of {@link DriftReport}: a two-sample Kolmogorov-Smirnov test on the two batches'
 * scores (scored with the same seed, so with common random numbers), one test per column
 * (Kolmogorov-Smirnov for continuous columns, Pearson's chi-squared for binary ones; both from
 * commons-math3), and Holm's adjustment over all of them.
 */
public final class DriftTests {

    /** Name of the Kolmogorov-Smirnov test in the report. */
    static final String KS = "Kolmogorov-Smirnov";
    /** Name of the chi-squared test in the report. */
    static final String CHI_SQUARED = "chi-squared";

    private DriftTests() {
    }

    /**
     * @param engine the model's engine
     * @param reference the reference batch (layout checked by the caller)
     * @param batch the new batch (layout checked by the caller)
     * @param how the bound and missing cells of the scores
     * @param seed the seed of the scores' shared draws
     * @return the report
     */
    public static DriftReport drift(Engine engine, Table reference, Table batch, DriftOptions how, long seed) {
        Scoring.Scored ref = Scoring.score(engine, reference, how.bound(), how.missing(), "reference", seed);
        Scoring.Scored now = Scoring.score(engine, batch, how.bound(), how.missing(), "batch", seed);
        return tests(reference, ref, batch, now);
    }

    /**
     * The tests of complete batches whose scores were computed elsewhere (with common random
     * numbers, e.g. in parts by {@link Scoring#score}): the notes are the unscorable cells of each
     * batch, as scoring them here would give.
     *
     * @param engine the model's engine
     * @param reference the reference batch (layout checked by the caller)
     * @param referenceScores its scores, one per row (checked by the caller)
     * @param batch the new batch (layout checked by the caller)
     * @param batchScores its scores, one per row (checked by the caller)
     * @return the report
     */
    public static DriftReport ofScores(Engine engine, Table reference, double[] referenceScores, Table batch,
                                       double[] batchScores) {
        double limit = ScoringRange.limit(engine.chain());
        return tests(reference, new Scoring.Scored(referenceScores.clone(),
                        ScoringRange.unscorable(reference, engine.transform(), limit)),
                batch, new Scoring.Scored(batchScores.clone(), ScoringRange.unscorable(batch, engine.transform(), limit)));
    }

    private static DriftReport tests(Table reference, Scoring.Scored ref, Table batch, Scoring.Scored now) {
        int cols = reference.columns();
        String[] subject = new String[cols + 1];
        String[] test = new String[cols + 1];
        double[] statistic = new double[cols + 1];
        double[] p = new double[cols + 1];
        int[] nRef = new int[cols + 1];
        int[] nNew = new int[cols + 1];
        subject[0] = DriftReport.SCORE;
        test[0] = KS;
        double[] a = finiteForRanks(ref.scores());
        double[] b = finiteForRanks(now.scores());
        statistic[0] = ksStatistic(a, b);
        p[0] = ksPValue(statistic[0], a.length, b.length);
        nRef[0] = a.length;
        nNew[0] = b.length;
        for (int c = 0; c < cols; c++) {
            int i = c + 1;
            subject[i] = reference.name(c);
            double[] x = observed(reference.column(c));
            double[] y = observed(batch.column(c));
            nRef[i] = x.length;
            nNew[i] = y.length;
            if (reference.kind(c) == ColumnKind.CATEGORICAL) {
                test[i] = CHI_SQUARED;
                double[] r = chiSquaredCategories(reference, batch, c);
                statistic[i] = r[0];
                p[i] = r[1];
            } else if (reference.kind(c) == ColumnKind.BINARY) {
                test[i] = CHI_SQUARED;
                double[] r = chiSquared(x, y);
                statistic[i] = r[0];
                p[i] = r[1];
            } else {
                test[i] = KS;
                if (x.length < 2 || y.length < 2) {
                    statistic[i] = 0.0;          // too few observed cells to test: no evidence
                    p[i] = 1.0;
                } else {
                    statistic[i] = ksStatistic(x, y);
                    p[i] = ksPValue(statistic[i], x.length, y.length);
                }
            }
        }
        double[] adjusted = DriftReport.holm(p);
        List<DriftTest> columns = new ArrayList<>();
        for (int i = 1; i <= cols; i++) {
            columns.add(new DriftTest(subject[i], test[i], statistic[i], p[i], adjusted[i], nRef[i], nNew[i]));
        }
        List<CellNote> notes = new ArrayList<>(ref.notes());
        for (CellNote n : now.notes()) {
            notes.add(new CellNote(n.row() + reference.rows(), n.column(), n.value(), n.kind(), "batch " + n.text()));
        }
        return new DriftReport(new DriftTest(subject[0], test[0], statistic[0], p[0], adjusted[0], nRef[0], nNew[0]),
                columns, reference.rows(), batch.rows(), notes);
    }

    /** The largest distance between the two empirical distribution functions (commons-math3). */
    static double ksStatistic(double[] x, double[] y) {
        return new KolmogorovSmirnovTest().kolmogorovSmirnovStatistic(x, y);
    }

    /**
     * P(D &gt;= d) for the two-sample statistic of samples of n and m values with no ties:
     * commons-math3's exact distribution while n + m &lt;= {@link DriftReport#EXACT_KS_LIMIT}, its
     * asymptotic one (Kolmogorov's limit law) beyond. Ties make it conservative.
     */
    static double ksPValue(double d, int n, int m) {
        KolmogorovSmirnovTest ks = new KolmogorovSmirnovTest();
        if (n + m <= DriftReport.EXACT_KS_LIMIT) {
            double p = ks.exactP(d, n, m, false);
            if (Double.isFinite(p)) {
                return Math.max(0.0, Math.min(1.0, p));
            }
        }
        return Math.max(0.0, Math.min(1.0, ks.approximateP(d, n, m)));
    }

    /**
     * Pearson's X^2 of the 2 x 2 table (ones and zeros of each batch) and its p-value on 1 degree of
     * freedom (commons-math3); {0, 1} when either batch has no observed cell or both hold one value.
     */
    static double[] chiSquared(double[] x, double[] y) {
        long[] a = counts(x);
        long[] b = counts(y);
        if (x.length == 0 || y.length == 0 || a[0] + b[0] == 0 || a[1] + b[1] == 0) {
            return new double[] {0.0, 1.0};
        }
        ChiSquareTest test = new ChiSquareTest();
        return new double[] {test.chiSquareDataSetsComparison(a, b), test.chiSquareTestDataSetsComparison(a, b)};
    }

    /**
     * The chi-squared test of homogeneity of a categorical column's counts in the two tables
     * (commons-math3 ChiSquareTest, K - 1 degrees of freedom over the categories seen in either),
     * the categories matched by label, so that a label only one table has counts as such.
     */
    static double[] chiSquaredCategories(org.backstep.table.Table reference, org.backstep.table.Table batch, int c) {
        java.util.Map<String, Integer> at = new java.util.LinkedHashMap<>();
        reference.categories(c).forEach(l -> at.putIfAbsent(l, at.size()));
        batch.categories(c).forEach(l -> at.putIfAbsent(l, at.size()));
        long[] a = new long[at.size()];
        long[] b = new long[at.size()];
        for (int r = 0; r < reference.rows(); r++) {
            String l = reference.label(r, c);
            if (l != null) {
                a[at.get(l)]++;
            }
        }
        for (int r = 0; r < batch.rows(); r++) {
            String l = batch.label(r, c);
            if (l != null) {
                b[at.get(l)]++;
            }
        }
        int used = 0;
        for (int k = 0; k < a.length; k++) {
            if (a[k] + b[k] > 0) {
                a[used] = a[k];
                b[used] = b[k];
                used++;
            }
        }
        long na = Arrays.stream(a, 0, used).sum();
        long nb = Arrays.stream(b, 0, used).sum();
        if (used < 2 || na == 0 || nb == 0) {
            return new double[] {0.0, 1.0};
        }
        a = Arrays.copyOf(a, used);
        b = Arrays.copyOf(b, used);
        ChiSquareTest test = new ChiSquareTest();
        return new double[] {test.chiSquareDataSetsComparison(a, b), test.chiSquareTestDataSetsComparison(a, b)};
    }

    private static long[] counts(double[] v) {
        long ones = Arrays.stream(v).filter(x -> x == 1.0).count();
        return new long[] {ones, v.length - ones};
    }

    private static double[] observed(double[] column) {
        return Arrays.stream(column).filter(v -> !Double.isNaN(v)).toArray();
    }

    /** +infinity (an unscorable record) as the largest double, which ranks the same. */
    private static double[] finiteForRanks(double[] scores) {
        double[] s = scores.clone();
        for (int i = 0; i < s.length; i++) {
            if (s[i] == Double.POSITIVE_INFINITY) {
                s[i] = Double.MAX_VALUE;
            }
        }
        return s;
    }
}
