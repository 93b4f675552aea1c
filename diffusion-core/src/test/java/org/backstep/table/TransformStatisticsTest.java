package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.apache.commons.math3.stat.StatUtils;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.junit.jupiter.api.Test;

/**
 * {@link TableTransform#fromStatistics}: the transforms built from column statistics computed
 * outside the core (here by commons-math3) are those {@link TableTransform#fit} computes from the
 * rows, and bad statistics are refused by name.
 */
class TransformStatisticsTest {

    /**
     * Means and standard deviations summed in another order (commons-math3's one-pass moments
     * against the core's corrected two-pass sums) agree to a few units of the last place for
     * these few hundred rows: n u = 150 x 1.1e-16 is below 1e-13; 1e-12 relative to the sd.
     */
    private static final double ORDER_OF_SUMMATION_TOL = 1e-12;

    private static final double NAN = Double.NaN;

    /** Statistics of every continuous and integer column by commons-math3 (log x for a log column). */
    private static Map<String, ColumnStatistics> statisticsOf(Table t, Set<String> logColumns) {
        Map<String, ColumnStatistics> out = new LinkedHashMap<>();
        for (int c = 0; c < t.columns(); c++) {
            if (t.kind(c) != ColumnKind.CONTINUOUS && t.kind(c) != ColumnKind.INTEGER) {
                continue;
            }
            double[] x = Arrays.stream(t.column(c)).filter(v -> !Double.isNaN(v)).toArray();
            boolean log = logColumns.contains(t.name(c));
            double[] y = log ? Arrays.stream(x).map(Math::log).toArray() : x;
            out.put(t.name(c), new ColumnStatistics(x.length, t.rows() - x.length, StatUtils.min(x), StatUtils.max(x),
                    StatUtils.mean(y), new StandardDeviation(false).evaluate(y)));
        }
        return out;
    }

    private static void assertSameTransforms(TableTransform expected, TableTransform actual) {
        assertEquals(expected.names(), actual.names());
        assertEquals(expected.kinds(), actual.kinds());
        assertEquals(expected.categories(), actual.categories());
        assertEquals(expected.lowest(), actual.lowest());
        assertEquals(expected.notes(), actual.notes());
        for (int c = 0; c < expected.names().size(); c++) {
            ColumnTransform e = expected.transform(c);
            ColumnTransform a = actual.transform(c);
            assertEquals(e.kind(), a.kind(), expected.names().get(c));
            double tol = ORDER_OF_SUMMATION_TOL * Math.max(1.0, Math.abs(e.scale()));
            assertEquals(e.shift(), a.shift(), tol, expected.names().get(c));
            assertEquals(e.scale(), a.scale(), tol, expected.names().get(c));
        }
    }

    @Test
    void irisFromStatisticsEqualsFitOnTheRows() {
        // data/SOURCES.md: iris (Fisher 1936, scikit-learn's copy, BSD-3-Clause), the fixed training split i % 5 != 0
        Table train = OpenData.read("iris.csv").filterRows(i -> i % 5 != 0);
        Set<String> log = Set.of("petal_length_cm");
        TableTransform fitted = TableTransform.fit(train, log);
        TableTransform built = TableTransform.fromStatistics(train.names(), train.kinds(), train.categories(), log,
                statisticsOf(train, log));
        assertSameTransforms(fitted, built);
    }

    @Test
    void everyKindOfColumnFromStatisticsEqualsFitOnTheRows() {
        // common practice, no source: one column of each kind, a constant one, a count, a gap
        List<String> names = List.of("temp", "flat", "door", "code", "count", "offset", "one");
        List<ColumnKind> kinds = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY,
                ColumnKind.CATEGORICAL, ColumnKind.INTEGER, ColumnKind.INTEGER, ColumnKind.CATEGORICAL);
        Map<String, List<String>> labels = new LinkedHashMap<>();
        labels.put("code", List.of("A", "B", "C"));
        labels.put("one", List.of("only"));
        double[][] rows = {
            {2.5, 4.0, 1, 0, 3, -2, 0},
            {NAN, 4.0, 0, 2, 0, 5, 0},
            {-1.25, 4.0, 1, 1, 7, 1, 0},
            {3.0, 4.0, 0, 2, 2, -1, 0},
            {0.5, NAN, 1, 0, 1, 0, 0},
        };
        Table t = Table.of(names, kinds, labels, rows);
        TableTransform fitted = TableTransform.fit(t, Set.of());
        TableTransform built = TableTransform.fromStatistics(names, kinds, labels, Set.of(), statisticsOf(t, Set.of()));
        assertSameTransforms(fitted, built);
        assertEquals(ColumnTransform.Kind.CONSTANT, built.transform(1).kind());
        assertEquals(Map.of("count", 0L), built.lowest());
        assertTrue(built.notes().stream().anyMatch(n -> n.contains("'temp' has 1 of 5 training cells missing")),
                () -> built.notes().toString());
    }

    @Test
    void refusesStatisticsThatDoNotFitTheColumns() {
        List<String> names = List.of("temp", "door");
        List<ColumnKind> kinds = List.of(ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        ColumnStatistics s = new ColumnStatistics(10, 0, -1.0, 2.0, 0.5, 1.0);
        IllegalArgumentException none = assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fromStatistics(names, kinds, Map.of(), Set.of(), Map.of()));
        assertTrue(none.getMessage().contains("no entry for the CONTINUOUS column 'temp'"), none.getMessage());
        IllegalArgumentException extra = assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fromStatistics(names, kinds, Map.of(), Set.of(), Map.of("temp", s, "door", s)));
        assertTrue(extra.getMessage().contains("entry for 'door', which is BINARY"), extra.getMessage());
        IllegalArgumentException log = assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fromStatistics(names, kinds, Map.of(), Set.of("temp"), Map.of("temp", s)));
        assertTrue(log.getMessage().contains("column 'temp' has the smallest value -1.0"), log.getMessage());
        IllegalArgumentException logBinary = assertThrows(IllegalArgumentException.class,
                () -> TableTransform.fromStatistics(names, kinds, Map.of(), Set.of("door"), Map.of("temp", s)));
        assertTrue(logBinary.getMessage().contains("log column 'door' is BINARY"), logBinary.getMessage());
        assertThrows(IllegalArgumentException.class, () -> new ColumnStatistics(0, 3, 0, 0, 0, 0));
        assertThrows(IllegalArgumentException.class, () -> new ColumnStatistics(5, 0, 2, 1, 1.5, 0.5));
        assertThrows(IllegalArgumentException.class, () -> new ColumnStatistics(5, 0, 1, 2, NAN, 0.5));
        IllegalArgumentException sd = assertThrows(IllegalArgumentException.class,
                () -> new ColumnStatistics(5, 0, 1, 2, 1.5, -0.5));
        assertTrue(sd.getMessage().startsWith("sd is -0.5"), sd.getMessage());
    }
}
