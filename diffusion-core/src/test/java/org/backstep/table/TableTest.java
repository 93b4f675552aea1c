package org.backstep.table;

import static org.backstep.table.ColumnKind.BINARY;
import static org.backstep.table.ColumnKind.CONTINUOUS;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

class TableTest {

    private static final double NAN = Double.NaN;

    /** A small mixed table: a continuous column, a binary column with a missing cell, a continuous one. */
    private static Table small() {
        return Table.of(List.of("temp_c", "door_open", "power_kw"), List.of(CONTINUOUS, BINARY, CONTINUOUS),
                new double[][] {{-18.5, 0, 3.2}, {-17.0, NAN, 3.4}, {-2.0, 1, NAN}});
    }

    private static void assertMessageHas(IllegalArgumentException e, String... parts) {
        for (String p : parts) {
            assertTrue(e.getMessage().contains(p), () -> "message '" + e.getMessage() + "' lacks '" + p + "'");
        }
    }

    @Test
    void shapeKindsAndCells() {
        Table t = small();
        // common practice, no source: the accessors return what was given
        assertEquals(3, t.rows());
        assertEquals(3, t.columns());
        assertEquals(List.of("temp_c", "door_open", "power_kw"), t.names());
        assertEquals(BINARY, t.kind(1));
        assertEquals("power_kw", t.name(2));
        assertEquals(2, t.indexOf("power_kw"));
        assertEquals(-17.0, t.get(1, 0));
        assertArrayEquals(new int[] {0, 2}, t.continuousColumns());
        assertArrayEquals(new int[] {1}, t.binaryColumns());
        assertTrue(t.hasMissing());
        assertEquals(2, t.missingCount());
        assertArrayEquals(new double[] {-17.0, NAN, 3.4}, t.row(1));
        assertArrayEquals(new double[] {0, NAN, 1}, t.column(1));
    }

    @Test
    void generatedNames() {
        Table t = Table.of(new double[][] {{1, 0}}, CONTINUOUS, BINARY);
        // common practice, no source: the documented naming "c0", "c1", ...
        assertEquals(List.of("c0", "c1"), t.names());
        assertEquals(List.of(CONTINUOUS, BINARY), t.kinds());
    }

    @Test
    void arraysAreCopiedInAndOut() {
        double[][] rows = {{1.0, 0.0}, {2.0, 1.0}};
        Table t = Table.of(rows, CONTINUOUS, BINARY);
        rows[0][0] = 99;
        // common practice, no source: an immutable value copies what comes in and what goes out
        assertEquals(1.0, t.get(0, 0));
        t.row(0)[0] = 99;
        t.column(0)[0] = 99;
        t.toArray()[0][0] = 99;
        t.continuousColumns()[0] = 5;
        assertEquals(1.0, t.get(0, 0));
        assertArrayEquals(new int[] {0}, t.continuousColumns());
        assertThrows(UnsupportedOperationException.class, () -> t.names().set(0, "x"));
    }

    @Test
    void refusesBadLayoutsNamingTheCulprit() {
        List<ColumnKind> two = List.of(CONTINUOUS, CONTINUOUS);
        double[][] ok = {{1, 2}};
        // common practice, no source: each invariant of Table is checked, the message names the culprit
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "a"), two, ok)), "names[1]", "'a'");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", " "), two, ok)), "names[1]", "non-blank");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "b "), two, ok)), "names[1]", "white space");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "b"), List.of(CONTINUOUS), ok)), "kinds has 1", "expected 2");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "b"), two, new double[][] {{1, 2}, {1, 2, 3}})), "rows[1]", "3 values",
                "expected 2");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "b"), List.of(CONTINUOUS, BINARY), new double[][] {{1, 0}, {1, 0.5}})),
                "row 1", "column 'b'", "0.5", "BINARY");
        assertMessageHas(assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("a", "b"), two, new double[][] {{1, 2}, {Double.NEGATIVE_INFINITY, 2}})),
                "row 1", "column 'a'", "-Infinity");
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> small().indexOf("humidity")),
                "'humidity'");
        assertThrows(IllegalArgumentException.class, () -> Table.of(List.of(), List.of(), new double[0][]));
        assertThrows(IllegalArgumentException.class, () -> small().get(3, 0));
        assertThrows(IllegalArgumentException.class, () -> small().column(-1));
    }

    @Test
    void binaryNegativeZeroIsStoredAsZero() {
        Table t = Table.of(new double[][] {{-0.0, -0.0}}, BINARY, CONTINUOUS);
        // common practice, no source: a binary cell is 0 or 1; a continuous cell keeps its sign bit
        assertEquals(Double.doubleToRawLongBits(0.0), Double.doubleToRawLongBits(t.get(0, 0)));
        assertEquals(Double.doubleToRawLongBits(-0.0), Double.doubleToRawLongBits(t.get(0, 1)));
    }

    @Test
    void fixedSplitOfIrisHas30TestRows() {
        Table iris = OpenData.read("iris.csv");
        Table test = iris.filterRows(i -> i % 5 == 0);
        Table train = iris.filterRows(i -> i % 5 != 0);
        // data/SOURCES.md, "A fixed split": row i is a test row when i % 5 == 0, so 150 / 5 = 30
        assertEquals(30, test.rows());
        assertEquals(120, train.rows());
        // common practice, no source: the kept rows keep their order
        assertArrayEquals(iris.row(0), test.row(0));
        assertArrayEquals(iris.row(5), test.row(1));
        assertArrayEquals(iris.row(1), train.row(0));
        assertArrayEquals(iris.row(149), train.row(119));
    }

    @Test
    void selectRowsAndColumns() {
        Table t = small();
        Table picked = t.selectRows(new int[] {2, 0, 2});
        // common practice, no source: selections in the order given, repeats allowed for rows
        assertEquals(3, picked.rows());
        assertArrayEquals(t.row(2), picked.row(0));
        assertArrayEquals(t.row(0), picked.row(1));
        Table cols = t.selectColumns("power_kw", "door_open");
        assertEquals(List.of("power_kw", "door_open"), cols.names());
        assertEquals(List.of(CONTINUOUS, BINARY), cols.kinds());
        assertArrayEquals(t.column(2), cols.column(0));
        assertEquals(0, t.selectRows(new int[0]).rows());
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> t.selectRows(new int[] {0, 3})),
                "rowIndices[1]", "3");
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> t.selectColumns("temp_c", "x")), "'x'");
        assertThrows(IllegalArgumentException.class, () -> t.selectColumns("temp_c", "temp_c"));
    }

    @Test
    void withRowsKeepsLayoutAndValidates() {
        Table t = small();
        Table other = t.withRows(new double[][] {{1, 1, 1}});
        // common practice, no source: same layout, new cells, same checks as the factory
        assertEquals(t.names(), other.names());
        assertEquals(t.kinds(), other.kinds());
        assertEquals(1, other.rows());
        assertThrows(IllegalArgumentException.class, () -> t.withRows(new double[][] {{1, 2, 1}}));
        assertThrows(IllegalArgumentException.class, () -> t.withRows(new double[][] {{1, 1}}));
    }

    @Test
    void equalityIsExact() {
        // common practice, no source: equality bit for bit, NaN equal to NaN, 0.0 different from -0.0
        assertEquals(small(), small());
        assertEquals(small().hashCode(), small().hashCode());
        Table a = Table.of(new double[][] {{0.0}}, CONTINUOUS);
        Table b = Table.of(new double[][] {{-0.0}}, CONTINUOUS);
        assertNotEquals(a, b);
        assertNotEquals(Table.of(new double[][] {{1.0}}, CONTINUOUS), Table.of(new double[][] {{1.0}}, BINARY));
        assertNotEquals(Table.of(new double[][] {{1.0}}, CONTINUOUS),
                Table.of(new double[][] {{Math.nextUp(1.0)}}, CONTINUOUS));
    }

    @Test
    void sha256MatchesIndependentImplementation() {
        // Expected digests from src/test/resources/org/backstep/table/table_sha256.py (Python hashlib
        // and struct, written from the encoding documented on Table.sha256())
        assertEquals("d0f2aa2c4f7ea299a7e80f053817cd5be44e15f6933dd8006039344ed1a56592",
                OpenData.read("iris.csv").sha256());
        Table mixed = Table.of(List.of("temp_c", "door_open", "r\u00e9gime"), List.of(CONTINUOUS, BINARY, CONTINUOUS),
                new double[][] {{-18.5, 0, 1e-300}, {NAN, 1, -0.0}, {4.25, NAN, 123456789.0}});
        assertEquals("f8ee47c01a93e42e0e139b8558c8481876a9ae69b1c767d810c6996b843f574b", mixed.sha256());
        // common practice, no source: one changed bit changes the digest
        double[][] rows = mixed.toArray();
        rows[2][2] = Math.nextUp(rows[2][2]);
        assertNotEquals(mixed.sha256(), mixed.withRows(rows).sha256());
    }

    @Test
    void toStringIsTheOneLineSummary() {
        // common practice, no source: a short toString, the cells only on request
        assertEquals("Table: 150 rows x 4 columns (4 continuous, 0 binary), no missing cells",
                OpenData.read("iris.csv").toString());
        assertEquals("Table: 3 rows x 3 columns (2 continuous, 1 binary), 2 missing cells (shown as ?)",
                small().toString());
        assertEquals("Table: 1 row x 1 column (1 continuous, 0 binary), no missing cells",
                Table.of(new double[][] {{1.0}}, CONTINUOUS).toString());
    }

    @Test
    void toTextMatchesTheGoldenFile() throws Exception {
        Table iris = OpenData.read("iris.csv");
        Table digits = OpenData.read("digits_binary.csv");
        String text = String.join("\n",
                "small().toText(5)", small().toText(5),
                "small().toText(1)", small().toText(1),
                "iris.toText(3)", iris.toText(3),
                "digits.toText(2, 3)", digits.toText(2, 3),
                "digits.toText(150, 1)", digits.selectRows(new int[] {0}).toText(150, 1),
                "zero rows: toText(5)", Table.of(new double[0][], CONTINUOUS, BINARY).toText(5),
                "toText(0)", small().toText(0));
        // golden file (our own layout, documented on TableText), checked by eye when it was made
        java.net.URL golden = TableTest.class.getResource("table-text.txt");
        assertTrue(golden != null, "missing test resource org/backstep/table/table-text.txt");
        assertEquals(new String(golden.openStream().readAllBytes(), java.nio.charset.StandardCharsets.UTF_8), text);
    }

    @Test
    void toTextAlignsEveryLineOfTheGrid() {
        String[] lines = OpenData.read("iris.csv").toText(6).split("\n");
        // common practice, no source: summary, header, 6 rows, the rows left out
        assertEquals(1 + 1 + 6 + 1, lines.length);
        for (int i = 2; i < 8; i++) {
            assertEquals(lines[1].length(), lines[i].length(), "aligned line " + i);
        }
        assertEquals("(rows 6 to 149 not shown)", lines[8]);
    }

    @Test
    void toTextRefusesBadLimits() {
        // common practice, no source: the limits are validated
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> small().toText(-1)), "maxRows");
        assertMessageHas(assertThrows(IllegalArgumentException.class, () -> small().toText(2, 0)), "maxColumns");
    }

    @Test
    void matrixRoundTrip() {
        Table t = small();
        INDArray d = t.toMatrix(DataType.DOUBLE);
        // common practice, no source: shape [rows, columns], C order, NaN kept
        assertArrayEquals(new long[] {3, 3}, d.shape());
        assertEquals(DataType.DOUBLE, d.dataType());
        assertEquals(-17.0, d.getDouble(1, 0));
        assertTrue(Double.isNaN(d.getDouble(1, 1)));
        assertEquals(t, Table.fromArray(d, t.names(), t.kinds()));

        INDArray f = t.toMatrix(DataType.FLOAT);
        assertEquals(DataType.FLOAT, f.dataType());
        // Java Language Specification 5.1.3: a narrowed double rounds to the nearest float
        assertEquals((float) 3.4, f.getFloat(1, 2));
        Table back = Table.fromArray(f, t.names(), t.kinds());
        assertEquals((double) (float) 3.4, back.get(1, 2));

        INDArray empty = t.selectRows(new int[0]).toMatrix(DataType.FLOAT);
        assertArrayEquals(new long[] {0, 3}, empty.shape());
        assertEquals(0, Table.fromArray(empty, t.names(), t.kinds()).rows());

        // a strided view (a transposed matrix) reads in logical order
        INDArray transposed = Nd4j.create(new double[] {1, 2, 3, 4, 5, 6}, new long[] {2, 3}, DataType.DOUBLE)
                .transpose();
        Table tv = Table.fromArray(transposed, List.of("a", "b"), List.of(CONTINUOUS, CONTINUOUS));
        assertArrayEquals(new double[] {1, 4}, tv.row(0));
        assertArrayEquals(new double[] {3, 6}, tv.row(2));

        assertThrows(IllegalArgumentException.class, () -> t.toMatrix(DataType.INT32));
        assertThrows(IllegalArgumentException.class,
                () -> Table.fromArray(d, List.of("a", "b"), List.of(CONTINUOUS, CONTINUOUS)));
        assertThrows(IllegalArgumentException.class,
                () -> Table.fromArray(Nd4j.create(DataType.DOUBLE, 2, 3, 1), t.names(), t.kinds()));
    }

    @Test
    void emptyTable() {
        Table t = Table.of(new double[0][], CONTINUOUS, BINARY);
        // common practice, no source: zero rows are allowed
        assertEquals(0, t.rows());
        assertFalse(t.hasMissing());
        assertEquals(0, t.toArray().length);
        assertTrue(t.toString().startsWith("Table: 0 rows x 2 columns"));
        assertEquals(Arrays.asList("c0", "c1"), t.names());
    }

    @Test
    void completeRowsDropExactlyTheRowsWithAMissingCell() {
        Table t = Table.of(new double[][] {{1, 0}, {Double.NaN, 1}, {3, Double.NaN}, {4, 1}},
                ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        // by definition: a row is complete when none of its cells is NaN (common practice, no source)
        org.junit.jupiter.api.Assertions.assertArrayEquals(new int[] {0, 3}, t.completeRowIndices());
        org.junit.jupiter.api.Assertions.assertArrayEquals(new int[] {1, 2}, t.incompleteRowIndices());
        org.junit.jupiter.api.Assertions.assertArrayEquals(new double[][] {{1, 0}, {4, 1}}, t.completeRows().toArray());
        Table full = t.completeRows();
        org.junit.jupiter.api.Assertions.assertSame(full, full.completeRows());
    }
}
