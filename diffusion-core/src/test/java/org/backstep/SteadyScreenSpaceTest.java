package org.backstep;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.Collections;
import java.util.List;
import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.option.BoundOptions;
import org.backstep.option.Coordinates;
import org.backstep.option.StepInput;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.BoundReport;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * A screen by the steady bound reports its scores in the same space as {@link DiffusionModel#bound}:
 * the caller's standardized space, log|det W| added back for a whitened model (the change of
 * variables, -log p_y(y) = -log p_z(z) - log|det W|; Dinh et al. 2017, "Density estimation using
 * Real NVP", section 3.1). The screen gives every record the same seed, so its scores must equal
 * the bound with that seed for every row.
 */
class SteadyScreenSpaceTest {

    @Test
    void steadyScreenScoresAreTheBoundsOfTheSameSeeds() {
        double[][] sigma = {{1.0, 0.8, 0.3}, {0.8, 1.0, 0.5}, {0.3, 0.5, 1.0}};
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(new Well19937c(11), new double[3], sigma);
        double[][] rows = new double[80][];
        for (int i = 0; i < rows.length; i++) {
            rows[i] = g.sample();
        }
        Table all = Table.of(List.of("a", "b", "c"), Collections.nCopies(3, ColumnKind.CONTINUOUS), rows);
        DiffusionModel m = Backstep.builder().coordinates(Coordinates.WHITENED).steps(10).hidden(4)
                .timeEmbedding(2, StepInput.INPUT).epochs(1).checkpointFraction(0.0).threads(1).seed(4).fit(all);
        Table heldOut = all.selectRows(java.util.stream.IntStream.range(0, 20).toArray());
        Table records = all.selectRows(java.util.stream.IntStream.range(20, 30).toArray());
        BoundOptions steady = BoundOptions.steady(2);
        AnomalyScreen s = m.screen(heldOut, records,
                Defaults.screening().withBound(steady).withSurprisal(SurprisalOptions.none()), 9L);
        long[] same = new long[records.rows()];
        Arrays.fill(same, 9L);
        BoundReport b = m.bound(records, steady, same);
        double[] expected = b.nats();
        // meaningful only if the whitening moves the figures: correlated columns give log|det W| well away from 0
        assertTrue(Math.abs(m.engine().chain().logDeterminant()) > 0.1, "log|det W| " + m.engine().chain().logDeterminant());
        for (int i = 0; i < expected.length; i++) {
            // same draws, sums in another order: rounding only (common practice, no source)
            assertEquals(expected[i], s.scores()[i], 1e-9 * Math.max(1.0, Math.abs(expected[i])), "record " + i);
        }
    }
}
