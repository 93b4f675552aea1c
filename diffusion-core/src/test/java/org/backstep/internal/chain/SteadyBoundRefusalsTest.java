package org.backstep.internal.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Random;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.option.BoundOptions;
import org.backstep.option.Limits;
import org.backstep.option.StepInput;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

/**
 * The steady bound's two refusals that need a wide chain: more model-space columns than the Sobol
 * sequence's direction numbers cover, and replica buffers past {@link Limits#MAX_CELLS}. Both must be
 * refused with the option named, before anything large is allocated.
 */
class SteadyBoundRefusalsTest {

    @Test
    void sobolPointsStopAtTheDirectionNumbersCommonsMathShips() {
        // commons-math3's SobolSequenceGenerator ships direction numbers (Joe & Kuo) for at most 1,000
        // dimensions (value from memory; the first line checks that 1,000 works); 1,001 is refused by name
        assertEquals(1000, TermDraws.sobolPoints(2, 1000)[1].length);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> TermDraws.sobolPoints(2, 1001));
        assertTrue(e.getMessage().contains("termDraws is 2") && e.getMessage().contains("1001 model-space columns")
                && e.getMessage().contains("use termDraws 1"), e.getMessage());
    }

    @Test
    void replicaBuffersPastTheCellLimitAreRefusedBeforeTheyAreAllocated() {
        // 4,096 draws per term x 256 rows per chunk x 300 columns = 3.1e8 cells > Limits.MAX_CELLS (2^28):
        // common practice, no source (the limit is the library's own)
        int cols = 300;
        List<String> names = new ArrayList<>();
        for (int j = 0; j < cols; j++) {
            names.add("c" + j);
        }
        Random rng = new Random(5);
        double[][] rows = new double[256][cols];
        for (double[] r : rows) {
            for (int j = 0; j < cols; j++) {
                r[j] = rng.nextGaussian();
            }
        }
        Table t = Table.of(names, Collections.nCopies(cols, ColumnKind.CONTINUOUS), rows);
        DiffusionModel m = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED)
                .baseline(org.backstep.option.Baseline.NONE).steps(2).hidden(4).timeEmbedding(2, StepInput.INPUT)
                .epochs(1).checkpointFraction(0.0).threads(1).seed(3).fit(t);
        BoundOptions wide = new BoundOptions(false, 0, 0, BoundOptions.MAX_TERM_DRAWS, true, false);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> m.bound(t, wide, 1L));
        assertTrue(e.getMessage().contains("termDraws x chunk rows x model-space columns"), e.getMessage());
        assertTrue((long) BoundOptions.MAX_TERM_DRAWS * 256 * cols > Limits.MAX_CELLS, "the case must exceed the limit it tests");
    }
}
