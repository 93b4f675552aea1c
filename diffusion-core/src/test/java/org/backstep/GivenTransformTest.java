package org.backstep;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import java.util.Set;
import org.backstep.option.BoundOptions;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnStatistics;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

/**
 * {@link Backstep.Builder#fit(Table, TableTransform)}: a fit with transforms given, as a
 * distributed fit computes them over a whole table and trains on a sample.
 */
class GivenTransformTest {

    private static Table rows() {
        // common practice, no source: 60 rows of two related columns and a binary one
        double[][] x = new double[60][];
        for (int i = 0; i < x.length; i++) {
            double a = Math.sin(0.7 * i) * 3 + 10;
            x[i] = new double[] {a, 0.5 * a + Math.cos(1.3 * i), i % 3 == 0 ? 1 : 0};
        }
        return Table.of(List.of("a", "b", "door"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.BINARY), x);
    }

    /** Standardized maps: the fitted transforms these tests compare the given ones with (no choice of maps). */
    private static Backstep.Builder small() {
        return Backstep.builder().steps(10).hidden(8).epochs(3).seed(5).threads(1)
                .marginals(org.backstep.option.Marginals.STANDARDIZED);
    }

    @Test
    void theTransformsTheFitWouldComputeGiveTheSameModel() {
        Table t = rows();
        DiffusionModel own = small().fit(t);
        DiffusionModel given = small().fit(t, TableTransform.fit(t, Set.of()));
        // determinism (project rule): the same transforms, seed and rows give the same weights, so the same bound
        assertEquals(own.transform(), given.transform());
        assertArrayEquals(own.bound(t, BoundOptions.exact(), 9L).nats(), given.bound(t, BoundOptions.exact(), 9L).nats());
        assertTrue(given.provenance().notes().stream().anyMatch(n -> n.startsWith("column transforms given by the caller")),
                given.provenance().notes().toString());
    }

    @Test
    void theModelKeepsTheTransformsGiven() {
        Table t = rows();
        TableTransform wide = TableTransform.fromStatistics(t.names(), t.kinds(), Map.of(), Set.of(), Map.of(
                "a", new ColumnStatistics(1000, 0, 0.0, 20.0, 10.0, 4.0),
                "b", new ColumnStatistics(1000, 0, -1.0, 8.0, 5.0, 2.0)));
        DiffusionModel m = small().fit(t, wide);
        // common practice, no source: the caller's transforms are kept, not recomputed from the rows; the
        // given ones differ from those the rows give, so a fit that recomputed them would fail the second check
        assertNotEquals(TableTransform.fit(t, Set.of()), wide);
        assertEquals(wide, m.transform());
    }

    @Test
    void categoriesAreMatchedToTheTransformsLabelsByText() {
        // common practice, no source: the table lists its labels as first seen, the transform sorted
        double[][] x = new double[40][];
        for (int i = 0; i < x.length; i++) {
            x[i] = new double[] {Math.sin(0.9 * i), i % 3};
        }
        List<String> names = List.of("a", "code");
        List<ColumnKind> kinds = List.of(ColumnKind.CONTINUOUS, ColumnKind.CATEGORICAL);
        Table t = Table.of(names, kinds, Map.of("code", List.of("R2", "E1", "OK")), x);
        TableTransform sorted = TableTransform.fromStatistics(names, kinds, Map.of("code", List.of("E1", "OK", "R2")),
                Set.of(), Map.of("a", new ColumnStatistics(40, 0, -1.0, 1.0, 0.0, 0.7)));
        DiffusionModel m = small().fit(t, sorted);
        assertEquals(List.of("E1", "OK", "R2"), m.transform().categories().get("code"));
        TableTransform unknown = TableTransform.fromStatistics(names, kinds, Map.of("code", List.of("E1", "OK")),
                Set.of(), Map.of("a", new ColumnStatistics(40, 0, -1.0, 1.0, 0.0, 0.7)));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> small().fit(t, unknown));
        assertTrue(e.getMessage().contains("R2"), e.getMessage());
    }

    @Test
    void refusesATransformOfOtherColumnsOrOtherLogColumns() {
        Table t = rows();
        // common practice, no source (the project's rule: a refusal names the parameter and the columns)
        TableTransform other = TableTransform.fit(t.selectColumns("a", "b"), Set.of());
        IllegalArgumentException columns = assertThrows(IllegalArgumentException.class, () -> small().fit(t, other));
        assertTrue(columns.getMessage().contains("the transform has [a, b]"), columns.getMessage());
        TableTransform logA = TableTransform.fit(t, Set.of("a"));
        IllegalArgumentException log = assertThrows(IllegalArgumentException.class, () -> small().fit(t, logA));
        assertTrue(log.getMessage().contains("logColumns is [] but the transform models [a] on the log scale"),
                log.getMessage());
        assertEquals(logA, small().logColumns("a").fit(t, logA).transform());
    }
}
