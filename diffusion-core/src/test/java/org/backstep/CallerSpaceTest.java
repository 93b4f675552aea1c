package org.backstep;

import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.backstep.report.BoundReport;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.List;
import java.util.SplittableRandom;

import static org.junit.jupiter.api.Assertions.assertEquals;

/**
 * Issue 11, item 5: a fit standardizes each column on every row given to it, the checkpoint rows
 * it splits off included, so that {@link BoundReport#nats()} is a density in the caller's
 * standardized space (each column less its mean over the table, over its population sd).
 */
class CallerSpaceTest {

    /** Identities of a few double operations: about 1e-12 (common practice, no source). */
    private static final double IDENTITY = 1e-12;

    @Test
    void standardizesOnEveryRowGivenCheckpointRowsIncluded() {
        SplittableRandom rng = new SplittableRandom(11);
        double[][] rows = new double[40][2];
        double[] a = new double[40];
        double[] b = new double[40];
        for (int r = 0; r < rows.length; r++) {
            rows[r][0] = a[r] = 5.0 + 2.0 * rng.nextGaussian();
            rows[r][1] = b[r] = -1.0 + 0.5 * rng.nextGaussian() + 0.3 * rows[r][0];
        }
        Table t = Table.of(List.of("a", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
        DiffusionModel m = Backstep.builder().steps(10).hidden(8).epochs(2).checkpointFraction(0.25).seed(3).fit(t);
        assertEquals(10, m.provenance().checkpointRows());
        // commons-math3: the mean and population sd of all 40 rows, the caller's standardization (SOURCES.md)
        double[][] columns = {a, b};
        for (int c = 0; c < 2; c++) {
            assertEquals(new Mean().evaluate(columns[c]), m.transform().transform(c).shift(), IDENTITY * 10);
            assertEquals(new StandardDeviation(false).evaluate(columns[c]), m.transform().transform(c).scale(),
                    IDENTITY * 10);
        }
        // change of variables (common practice, no source): nats() - natsOriginalUnits() = sum_j log s_j
        BoundReport report = m.bound(t.selectRows(new int[] {0, 1, 2}), 5);
        double logScales = Math.log(new StandardDeviation(false).evaluate(a))
                + Math.log(new StandardDeviation(false).evaluate(b));
        for (int i = 0; i < 3; i++) {
            assertEquals(logScales, report.natsOriginalUnits()[i] - report.nats()[i], 1e-9);
        }
    }
}
