package org.backstep.report;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Collections;
import java.util.List;

import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.descriptive.rank.Percentile;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The expected coverage of intervals made from k draws. */
class ImputationTest {

    /** Trials of the simulation. */
    private static final int TRIALS = 20_000;
    /** Four binomial standard errors of a coverage near 0.85 over TRIALS trials. */
    private static final double SIMULATION_TOLERANCE = 4 * Math.sqrt(0.85 * 0.15 / TRIALS);

    @ParameterizedTest
    @ValueSource(ints = {20, 21, 100, 101})
    void expectedCoverageMatchesSimulatedIntervalsOfExactDraws(int k) {
        Table one = Table.of(List.of("x"), List.of(ColumnKind.CONTINUOUS), new double[][] {{0.0}});
        Imputation imp = new Imputation(Collections.nCopies(k, one), one, one, one, 0.9);
        // the formula is exact when the interval's ends fall on draws (k = 21, 101) and a close
        // approximation between them (k = 20, 100; at k = 5 it is 0.600 against a simulated 0.616)
        // reference: simulation with commons-math3 (Well19937c normals; Percentile R_7 is Hyndman &
        // Fan 1996 type 7, the interpolation the library uses); a new draw from the same
        // distribution falls inside the [5%, 95%] interval of k draws
        Well19937c random = new Well19937c(k);
        Percentile lower = new Percentile(5.0).withEstimationType(Percentile.EstimationType.R_7);
        Percentile upper = new Percentile(95.0).withEstimationType(Percentile.EstimationType.R_7);
        double[] draws = new double[k];
        int covered = 0;
        for (int trial = 0; trial < TRIALS; trial++) {
            for (int i = 0; i < k; i++) {
                draws[i] = random.nextGaussian();
            }
            double fresh = random.nextGaussian();
            if (fresh >= lower.evaluate(draws) && fresh <= upper.evaluate(draws)) {
                covered++;
            }
        }
        assertEquals((double) covered / TRIALS, imp.expectedCoverage(), SIMULATION_TOLERANCE);
        // the formula itself: level (k - 1) / (k + 1), e.g. 0.9 x 19 / 21 = 0.814 for k = 20
        assertEquals(0.9 * (k - 1) / (k + 1), imp.expectedCoverage(), 1e-12);
    }
}
