package org.backstep.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Collections;
import java.util.List;

import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.descriptive.rank.Percentile;
import org.backstep.internal.chain.Imputer;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The expected coverage of intervals made from k draws. */
class ImputationTest {

    /** Trials of the simulation. */
    private static final int TRIALS = 20_000;
    /** Four binomial standard errors of a coverage of 0.85 over TRIALS trials (three at 0.67, five at 0.9). */
    private static final double SIMULATION_TOLERANCE = 4 * Math.sqrt(0.85 * 0.15 / TRIALS);

    @ParameterizedTest
    @ValueSource(ints = {5, 19, 20, 50, 100})
    void expectedCoverageMatchesSimulatedIntervalsOfExactDraws(int k) {
        Table one = Table.of(List.of("x"), List.of(ColumnKind.CONTINUOUS), new double[][] {{0.0}});
        Imputation imp = new Imputation(Collections.nCopies(k, one), one, one, one, 0.9);
        // reference: simulation with commons-math3 (Well19937c normals); a new draw from the same
        // distribution falls inside the interval the library draws from k draws (Imputer.intervalEnd)
        Well19937c random = new Well19937c(k);
        double[] draws = new double[k];
        int covered = 0;
        for (int trial = 0; trial < TRIALS; trial++) {
            for (int i = 0; i < k; i++) {
                draws[i] = random.nextGaussian();
            }
            double fresh = random.nextGaussian();
            if (fresh >= Imputer.intervalEnd(draws, 0.05) && fresh <= Imputer.intervalEnd(draws, 0.95)) {
                covered++;
            }
        }
        assertEquals((double) covered / TRIALS, imp.expectedCoverage(), SIMULATION_TOLERANCE);
        // the formula itself: (j - i)/(k + 1) with i, j = (k + 1)(1 -+ 0.9)/2 kept in [1, k]: the level
        // from k = 19 on, the range's (k - 1)/(k + 1) below (order statistics, value from memory)
        assertEquals(k >= 19 ? 0.9 : (k - 1.0) / (k + 1.0), imp.expectedCoverage(), 1e-12);
    }

    @ParameterizedTest
    @ValueSource(ints = {2, 5, 19, 20, 37, 100})
    void intervalEndsAreTheType6QuantilesOfCommonsMath(int k) {
        // reference: commons-math3's Percentile with R_6 (Hyndman & Fan 1996, type 6)
        Well19937c random = new Well19937c(100 + k);
        double[] draws = new double[k];
        for (int i = 0; i < k; i++) {
            draws[i] = random.nextGaussian();
        }
        for (double p : new double[] {0.01, 0.05, 0.25, 0.5, 0.95, 0.99}) {
            double expected = new Percentile(100 * p).withEstimationType(Percentile.EstimationType.R_6).evaluate(draws);
            assertEquals(expected, Imputer.intervalEnd(draws, p), 1e-12, "k " + k + ", p " + p);
        }
    }

    @Test
    void intervalEndRefusesNoDrawsAndProbabilitiesOutsideTheOpenUnitInterval() {
        // every public entry point names the bad parameter (the project's rule; common practice, no source)
        IllegalArgumentException empty = assertThrows(IllegalArgumentException.class, () -> Imputer.intervalEnd(new double[0], 0.5));
        assertTrue(empty.getMessage().contains("values"), empty.getMessage());
        for (double p : new double[] {0.0, 1.0, Double.NaN}) {
            IllegalArgumentException bad = assertThrows(IllegalArgumentException.class, () -> Imputer.intervalEnd(new double[] {1, 2}, p));
            assertTrue(bad.getMessage().contains("p"), bad.getMessage());
        }
    }
}
