package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.Arrays;

import org.backstep.internal.chain.BoundEvaluator;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.Parallel;
import org.backstep.internal.chain.TermDraws;
import org.backstep.table.Table;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The screen's steady scores at the defaults ({@link Defaults#steadyBound()}, every record drawing
 * from the same seed) do not depend on the worker threads: the same bits on 1 and 3 threads, over
 * three chunks of rows (two full, one partial), the same bits as rows drawing their noise one by
 * one, and the screen's own scores are those bits. The
 * trained model is the golden format-3 file (a float32 network, T = 20, two continuous columns and
 * a binary one).
 */
class SteadyScreenThreadsTest {

    private static DiffusionModel model;

    @BeforeAll
    static void load() throws Exception {
        model = DiffusionModel.load(Path.of(SteadyScreenThreadsTest.class.getResource("/golden/model-v3.backstep")
                .toURI()));
    }

    @Test
    void theSameBitsOnOneAndThreeThreads() {
        // chunks are scored whole by one thread each, and every row draws from its own generator of
        // the one seed: the thread count moves no bit (common practice, no source)
        int rows = 2 * Parallel.CHUNK_ROWS + 37;
        Table records = GoldenModelTest.sensorTable(rows, 91);
        Engine engine = model.engine();
        Chain c = engine.chainOf(0);
        TermDraws plan = engine.drawPlan(Defaults.steadyBound(), c);
        assertTrue(plan.total() > model.steps(), "the default plan draws more than once per term: " + plan.total());
        float[] x = engine.modelSpace(records);
        long[] same = new long[rows];
        Arrays.fill(same, 5L);
        BoundEvaluator.Result one = BoundEvaluator.exact(c, x, rows, 0L, same, plan, 1);
        BoundEvaluator.Result three = BoundEvaluator.exact(c, x, rows, 0L, same, plan, 3);
        assertArrayEquals(one.continuous, three.continuous);
        assertArrayEquals(one.binary, three.binary);
        assertArrayEquals(one.perStepMean, three.perStepMean);
        // the chunk whose rows share a seed draws each step's noise once for all of them; a chunk with
        // one other seed draws it row by row: the rows of seed 5 get the same bits either way (each
        // row's generator is Parallel.random(5, 0) in both, and the chunks have the same shape;
        // common practice, no source)
        long[] mixed = same.clone();
        for (int end = Parallel.CHUNK_ROWS - 1; end < rows; end += Parallel.CHUNK_ROWS) {
            mixed[end] = 6L;
        }
        mixed[rows - 1] = 6L;
        BoundEvaluator.Result perRow = BoundEvaluator.exact(c, x, rows, 0L, mixed, plan, 3);
        for (int i = 0; i < rows; i++) {
            if (mixed[i] == 5L) {
                assertEquals(Double.doubleToLongBits(one.continuous[i]), Double.doubleToLongBits(perRow.continuous[i]),
                        "record " + i);
                assertEquals(Double.doubleToLongBits(one.binary[i]), Double.doubleToLongBits(perRow.binary[i]),
                        "record " + i);
            }
        }
        double[] screened = model.screeningScores(records, Defaults.steadyBound(), 5);
        for (int i = 0; i < rows; i++) {
            assertEquals(Double.doubleToLongBits(engine.standardizedNats(new double[] {one.continuous[i]
                    + one.binary[i]})[0]), Double.doubleToLongBits(screened[i]), "record " + i);
        }
    }
}
