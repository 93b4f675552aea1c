package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.junit.jupiter.api.Test;

/**
 * {@link MarginalCriterion}: the cross-validated likelihood of the zero-network Gaussian under a
 * fixed family of maps, against commons-math3's multivariate normal density plus the maps' exact
 * log-Jacobian, and the choice it makes on data of known shape.
 */
class MarginalCriterionTest {

    /** Two double computations of the same density along different paths (common practice, no source). */
    private static final double SAME_DENSITY_TOL = 1e-9;

    /** Rows of a correlated lognormal (columns 0, 1: exp of a bivariate normal with correlation 0.6) and a normal column 2. */
    static Table lognormalRows(int n, long seed) {
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed),
                new double[] {0, 0, 0}, new double[][] {{1, 0.6, 0.3}, {0.6, 1, 0.2}, {0.3, 0.2, 1}});
        double[][] rows = new double[n][];
        for (int i = 0; i < n; i++) {
            double[] u = g.sample();
            rows[i] = new double[] {Math.exp(u[0]), Math.exp(u[1]), u[2]};
        }
        return Table.of(List.of("a", "b", "c"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.CONTINUOUS), rows);
    }

    static Table gaussianRows(int n, int d, long seed) {
        double[][] cov = new double[d][d];
        for (int a = 0; a < d; a++) {
            for (int b = 0; b < d; b++) {
                cov[a][b] = a == b ? 1.0 + 0.1 * a : 0.4 * Math.pow(0.7, Math.abs(a - b));
            }
        }
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(seed), new double[d], cov);
        double[][] rows = new double[n][];
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            rows[i] = g.sample();
        }
        for (int j = 0; j < d; j++) {
            names.add("x" + j);
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(names, kinds, rows);
    }

    /** The criterion written out with commons-math3's density: folds i mod K, maps and the shrunk Gaussian per fold. */
    private static double reference(Table rows, double multiple, int folds) {
        double total = 0;
        for (int k = 0; k < folds; k++) {
            final int fold = k;
            Table fit = rows.filterRows(r -> r % folds != fold);
            Table held = rows.filterRows(r -> r % folds == fold);
            TableTransform maps = Double.isNaN(multiple) ? TableTransform.fit(fit, Set.of())
                    : TableTransform.fitNormalScores(fit, multiple);
            Whitening w = Whitening.fitShrunk(maps.toModelSpace(fit));
            MultivariateNormalDistribution gaussian = new MultivariateNormalDistribution(w.mean(), w.covariance());
            double[][] y = maps.toModelSpace(held);
            double[] jacobian = maps.logJacobian(held);
            for (int r = 0; r < y.length; r++) {
                // change of variables: -log p_x(x) = -log p_y(f(x)) - log |f'(x)| (Dinh et al. 2017, section 3.1)
                total += -Math.log(gaussian.density(y[r])) - jacobian[r];
            }
        }
        return total / rows.rows();
    }

    @Test
    void criterionOfAFixedFamilyIsTheHeldOutGaussianDensityPlusTheJacobian() {
        Table rows = lognormalRows(103, 1);     // 103: folds of unequal size
        for (double multiple : new double[] {Double.NaN, 0.5, 2.0}) {
            double expected = reference(rows, multiple, 5);
            // commons-math3 MultivariateNormalDistribution.logDensity, the Jacobian from TableTransform.logJacobian
            assertEquals(expected, MarginalCriterion.heldOutNats(rows, Set.of(), multiple, 5),
                    SAME_DENSITY_TOL * Math.max(1, Math.abs(expected)), "multiple " + multiple);
        }
    }

    @Test
    void skewedColumnsChooseNormalScoresAndGaussianColumnsDoNotGainFromThem() {
        MarginalCriterion.Figures skewed = MarginalCriterion.figures(lognormalRows(400, 2), Set.of());
        // lognormal marginals: the standardized Gaussian misses their skew, so the copula's held-out
        // likelihood is far better. Source, the difference of differential entropies: the best Gaussian for
        // lognormal(0, 1) is the moment-matched one, variance v = (e - 1) e, and it costs
        // KL = h(N(m, v)) - h(LN(0, 1)) = 0.5 ln(2 pi e v) - 0.5 ln(2 pi e) = 0.5 ln((e - 1) e) = 0.77 nats
        // per column (h(LN(mu, s^2)) = mu + 0.5 ln(2 pi e s^2)); two such columns here, 1.54 nats per record
        // at most, of which the kernel-smoothed scores on 400 rows must recover more than 0.5
        assertTrue(skewed.scoresWin(), skewed.toString());
        assertTrue(skewed.standardized() - skewed.scores().get(skewed.best()) > 0.5, skewed.toString());
        MarginalCriterion.Figures gaussian = MarginalCriterion.figures(gaussianRows(1424, 13, 5), Set.of());
        // Gaussian columns: no kernel-smoothed marginal can beat the normal one by more than its
        // estimation noise (Silverman 1986, section 3.3: the kernel estimate's variance); 0.02 nats per
        // record over 13 columns (common practice, no source)
        assertTrue(gaussian.scores().get(gaussian.best()) > gaussian.standardized() - 0.02, gaussian.toString());
    }

    @Test
    void logColumnsStayLogStandardizedInEveryCandidate() {
        Table rows = lognormalRows(200, 3);
        TableTransform t = TableTransform.fitNormalScores(rows, Set.of("a"), 2.0);
        assertEquals(ColumnTransform.Kind.LOG_STANDARDIZE, t.transform(0).kind());
        assertEquals(ColumnTransform.Kind.NORMAL_SCORES, t.transform(1).kind());
        // the exact lognormal column log-standardized: the criterion is finite and the log map's Jacobian is in it
        assertTrue(Double.isFinite(MarginalCriterion.heldOutNats(rows, Set.of("a"), 2.0, 5)));
    }

    @Test
    void badArgumentsAreRefusedByName() {
        Table rows = lognormalRows(40, 4);
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(rows, Set.of(), 0.0, 5)).getMessage().contains("bandwidthMultiple"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(rows, Set.of(), Double.POSITIVE_INFINITY, 5)).getMessage()
                .contains("bandwidthMultiple"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(rows, Set.of(), 1.0, 1)).getMessage().contains("folds"));
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(rows.selectRows(new int[] {0, 1, 2}), Set.of(), 1.0, 2))
                .getMessage().contains("rows"));
        double[][] gap = rows.toArray();
        gap[7][1] = Double.NaN;
        Table withGap = Table.of(rows.names(), rows.kinds(), gap);
        String message = assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(withGap, Set.of(), 1.0, 5)).getMessage();
        assertTrue(message.contains("row 7") && message.contains("'b'"), message);
        Table binary = Table.of(List.of("f"), List.of(ColumnKind.BINARY), new double[][] {{0}, {1}, {0}, {1}, {1}});
        assertTrue(assertThrows(IllegalArgumentException.class,
                () -> MarginalCriterion.heldOutNats(binary, Set.of(), 1.0, 2)).getMessage().contains("continuous"));
        assertThrows(IllegalArgumentException.class, () -> MarginalCriterion.heldOutNats(null, Set.of(), 1.0, 5));
    }
}
