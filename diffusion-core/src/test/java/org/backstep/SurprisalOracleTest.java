package org.backstep;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.backstep.option.BoundOptions;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.Surprisal;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.SplittableRandom;
import java.util.stream.IntStream;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Which columns to blame (issue 13, item 3): the estimated conditional surprisal -log p(x_j | x_-j)
 * against closed forms on exact-kernel models, so that no training noise enters: the Gaussian
 * conditional by the Schur complement (Bishop 2006, eq. 2.81-2.82) and, for a binary column and a
 * continuous one, Bayes' rule. Default settings ({@link Defaults#surprisal()}).
 */
class SurprisalOracleTest {

    /** Mean error over the cells of ordinary records, nats: measured 0.054 (the imputation's own lean, see Surprisal). */
    private static final double MEAN_ERROR_BOUND = 0.15;
    /** Cell-by-cell rms error over ordinary records, nats: measured 0.27 (mostly the density estimate's noise). */
    private static final double RMS_ERROR_BOUND = 0.4;
    /**
     * Rms relative error of the figure of a cell 4 conditional sd off (exact about 9 nats):
     * measured 0.17, on average -0.09 (the draws are a little too wide in the tails).
     */
    private static final double DISPLACED_RELATIVE_BOUND = 0.25;
    /**
     * Bayes' rule checks on the mixed oracle, nats rms: measured 0.39 for the continuous cell (the
     * imputation of a continuous cell given a binary one is too wide, see ConditionalOracleTest)
     * and 0.095 for the binary cell.
     */
    private static final double MIXED_RMS_BOUND = 0.5;
    /** The exact figures' lead of the first column over the second, nats, above which the ranking is checked. */
    private static final double CLEAR_LEAD = 1.0;
    /** Conditional standard deviations a displaced cell is moved by. */
    private static final double DISPLACEMENT = 4.0;

    static final double[] MU = {1.0, -1.0, 0.5};
    static final double[][] SIGMA = {{2.0, 0.8, 0.3}, {0.8, 1.0, -0.4}, {0.3, -0.4, 1.5}};
    private static final DiffusionModel GAUSS = ScreeningCases.gaussian(NoiseSchedule.linear(1000), MU, SIGMA);

    /** {mean, variance} of x_j given the other cells (Bishop 2006, eq. 2.81-2.82), commons-math3 matrices. */
    static double[] conditional(double[] x, int j) {
        int[] o = IntStream.range(0, MU.length).filter(i -> i != j).toArray();
        RealMatrix s22 = new Array2DRowRealMatrix(o.length, o.length);
        double[] s12 = new double[o.length];
        for (int a = 0; a < o.length; a++) {
            s12[a] = SIGMA[j][o[a]];
            for (int b = 0; b < o.length; b++) {
                s22.setEntry(a, b, SIGMA[o[a]][o[b]]);
            }
        }
        RealMatrix inv = new LUDecomposition(s22).getSolver().getInverse();
        double m = MU[j];
        double v = SIGMA[j][j];
        for (int a = 0; a < o.length; a++) {
            for (int b = 0; b < o.length; b++) {
                m += s12[a] * inv.getEntry(a, b) * (x[o[b]] - MU[o[b]]);
                v -= s12[a] * inv.getEntry(a, b) * s12[b];
            }
        }
        return new double[] {m, v};
    }

    /** -log N(x_j; conditional mean, conditional variance). */
    static double exact(double[] x, int j) {
        double[] mv = conditional(x, j);
        return -new NormalDistribution(null, mv[0], Math.sqrt(mv[1])).logDensity(x[j]);
    }

    @Test
    void ordinaryRecordsMatchTheSchurComplement() {
        Table records = ScreeningCases.gaussianRows(40, 3, MU, SIGMA, -1, 0.0);
        double[][] nats = GAUSS.surprisal(records, 5).nats();
        double sum = 0.0;
        double sq = 0.0;
        int n = 0;
        for (int i = 0; i < records.rows(); i++) {
            for (int j = 0; j < MU.length; j++) {
                double e = nats[i][j] - exact(records.row(i), j);
                sum += e;
                sq += e * e;
                n++;
            }
        }
        assertEquals(0.0, sum / n, MEAN_ERROR_BOUND, "mean error");
        assertTrue(Math.sqrt(sq / n) < RMS_ERROR_BOUND, "rms error " + Math.sqrt(sq / n));
    }

    /**
     * Records with a cell moved 4 conditional sd off: the estimate ranks first the column the exact
     * figures rank first (where they tell the first two apart by more than {@link #CLEAR_LEAD} nats;
     * a displaced cell also makes the cells tied to it improbable), which is the displaced one in
     * most records, and the displaced cell's figure is close to its exact one.
     */
    @Test
    void aDisplacedCellRanksAsTheExactFiguresRankIt() {
        Table base = ScreeningCases.gaussianRows(21, 7, MU, SIGMA, -1, 0.0);
        double[][] rows = base.toArray();
        for (int i = 0; i < rows.length; i++) {
            int j = i % MU.length;
            double[] mv = conditional(rows[i], j);
            rows[i][j] = mv[0] + (i % 2 == 0 ? 1 : -1) * DISPLACEMENT * Math.sqrt(mv[1]);
        }
        Table records = base.withRows(rows);
        Surprisal s = GAUSS.surprisal(records, 9);
        double worst = 0.0;
        double bias = 0.0;
        int clear = 0;
        int displacedFirst = 0;
        for (int i = 0; i < rows.length; i++) {
            int j = i % MU.length;
            double[] exact = new double[MU.length];
            for (int c = 0; c < MU.length; c++) {
                exact[c] = exact(rows[i], c);
            }
            int top = argMax(exact);
            double[] sorted = exact.clone();
            java.util.Arrays.sort(sorted);
            if (sorted[MU.length - 1] - sorted[MU.length - 2] > CLEAR_LEAD) {
                clear++;
                assertEquals("x" + top, s.ranked(i).get(0).column(), "record " + i);
            }
            displacedFirst += top == j ? 1 : 0;
            double rel = (s.nats()[i][j] - exact[j]) / exact[j];
            worst += rel * rel;
            bias += rel;
        }
        assertTrue(clear >= rows.length * 2 / 3, clear + " clear records");
        assertTrue(displacedFirst >= rows.length * 2 / 3, "the displaced column is first in " + displacedFirst);
        worst = Math.sqrt(worst / rows.length);
        assertTrue(worst < DISPLACED_RELATIVE_BOUND, "rms relative error " + worst);
    }

    private static int argMax(double[] v) {
        int best = 0;
        for (int i = 1; i < v.length; i++) {
            if (v[i] > v[best]) {
                best = i;
            }
        }
        return best;
    }

    /**
     * The mixed oracle (b ~ Bernoulli(0.3), x | b ~ N(m_b, 1)): the binary cell's figure against
     * -log P(b | x) by Bayes' rule, the continuous cell's against -log N(x; m_b, 1) (commons-math3
     * normal densities).
     */
    @Test
    void mixedColumnsMatchBayesRule() {
        DiffusionModel mixed = ImputationCases.mixedModel(NoiseSchedule.linear(1000));
        SplittableRandom rng = new SplittableRandom(11);
        int n = 40;
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            int b = rng.nextDouble() < ImputationCases.PI ? 1 : 0;
            rows[i] = new double[] {(b == 1 ? ImputationCases.M1 : ImputationCases.M0)
                    + ImputationCases.S * rng.nextGaussian(), b};
        }
        Table records = Table.of(java.util.List.of("x", "b"), mixed.transform().kinds(), rows);
        double[][] nats = mixed.surprisal(records, 13).nats();
        NormalDistribution[] given = {new NormalDistribution(null, ImputationCases.M0, ImputationCases.S),
                new NormalDistribution(null, ImputationCases.M1, ImputationCases.S)};
        double sqX = 0.0;
        double sqB = 0.0;
        for (int i = 0; i < n; i++) {
            double x = rows[i][0];
            int b = (int) rows[i][1];
            double one = ImputationCases.PI * given[1].density(x);
            double zero = (1 - ImputationCases.PI) * given[0].density(x);
            double exactB = -Math.log((b == 1 ? one : zero) / (one + zero));
            double exactX = -given[b].logDensity(x);
            sqX += Math.pow(nats[i][0] - exactX, 2);
            sqB += Math.pow(nats[i][1] - exactB, 2);
        }
        assertTrue(Math.sqrt(sqX / n) < MIXED_RMS_BOUND, "continuous rms " + Math.sqrt(sqX / n));
        assertTrue(Math.sqrt(sqB / n) < MIXED_RMS_BOUND, "binary rms " + Math.sqrt(sqB / n));
    }

    /** A screen gives its flagged records their figures, ranked; a cell beyond range ranks first at +infinity. */
    @Test
    void aScreenRanksTheColumnsOfItsFlaggedRecords() {
        Table held = ScreeningCases.gaussianRows(200, 15, MU, SIGMA, -1, 0.0);
        Table records = ScreeningCases.append(ScreeningCases.gaussianRows(30, 16, MU, SIGMA, -1, 0.0),
                new double[] {1.0, -1.0, 1e39}, new double[] {1.0 + 3.0 * 2.0, -1.0, 0.5});
        AnomalyScreen s = GAUSS.screen(held, records, Defaults.screening().withBound(BoundOptions.sampled(50))
                .withSurprisal(Defaults.surprisal().withDraws(64)), 17);
        assertTrue(s.flaggedList().contains(30) && s.flaggedList().contains(31), s.flaggedList().toString());
        assertEquals(s.flagged().length, s.surprisal().records());
        assertEquals("x2", s.surprisal().rankedForRow(30).get(0).column());
        assertEquals(Double.POSITIVE_INFINITY, s.surprisal().rankedForRow(30).get(0).nats());
        assertEquals("x0", s.surprisal().rankedForRow(31).get(0).column());
        assertTrue(SurprisalOptions.none().draws() == 0);
        // same seed, same screen, figures included (determinism, common practice)
        assertEquals(s, GAUSS.screen(held, records, Defaults.screening().withBound(BoundOptions.sampled(50))
                .withSurprisal(Defaults.surprisal().withDraws(64)), 17));
    }
}
