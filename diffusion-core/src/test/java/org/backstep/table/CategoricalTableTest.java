package org.backstep.table;

import static org.backstep.table.ColumnKind.BINARY;
import static org.backstep.table.ColumnKind.CATEGORICAL;
import static org.backstep.table.ColumnKind.CONTINUOUS;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.StringReader;
import java.io.StringWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Categorical columns in tables and CSV (issue 12, part 3). Common practice, no source. */
class CategoricalTableTest {

    private static final String CSV = "temp,site,door\n1.5,north,0\n2.5,south,1\n,north,\n3.0,,1\n4.0,east,0\n";

    @Test
    void declaredColumnKeepsLabelsInFirstSeenOrder() throws Exception {
        Table t = CsvTables.reader().categorical("site").read(new StringReader(CSV), "t.csv");
        assertEquals(List.of(CONTINUOUS, CATEGORICAL, BINARY), t.kinds());
        assertEquals(List.of("north", "south", "east"), t.categories(1));
        assertEquals(0.0, t.get(0, 1));
        assertEquals(1.0, t.get(1, 1));
        assertEquals(0.0, t.get(2, 1));
        assertTrue(Double.isNaN(t.get(3, 1)));
        assertEquals(2.0, t.get(4, 1));
        assertEquals("east", t.label(4, 1));
        assertTrue(t.toText(5).contains("site [cat]"));
        assertTrue(t.toString().contains("1 categorical"));
    }

    @Test
    void writerWritesLabelsThatReadBackEqual() throws Exception {
        Table t = CsvTables.reader().categorical("site").read(new StringReader(CSV), "t.csv");
        StringWriter out = new StringWriter();
        CsvTables.writer().write(t, out);
        assertTrue(out.toString().contains("north"));
        Table back = CsvTables.reader().categorical("site").read(new StringReader(out.toString()), "back.csv");
        assertEquals(t, back);
        assertEquals(t.sha256(), back.sha256());
    }

    @Test
    void textIsRefusedUnlessDeclaredOrInferredFromAFile(@TempDir Path dir) throws Exception {
        TableFormatException e = assertThrows(TableFormatException.class,
                () -> CsvTables.reader().read(new StringReader(CSV), "t.csv"));
        assertTrue(e.getMessage().contains("'north' is not a number"), e.getMessage());
        Path file = dir.resolve("t.csv");
        Files.writeString(file, CSV);
        Table inferred = CsvTables.reader().inferCategories(true).read(file);
        assertEquals(CsvTables.reader().categorical("site").read(file), inferred);
        TableFormatException stream = assertThrows(TableFormatException.class,
                () -> CsvTables.reader().inferCategories(true).read(new StringReader(CSV), "t.csv"));
        assertTrue(stream.getMessage().contains("categorical(\"site\")"), stream.getMessage());
    }

    @Test
    void twoLabelsDeclaredBinaryStayBinary() throws Exception {
        Table t = CsvTables.reader().binary("door").categorical("site").read(new StringReader(CSV), "t.csv");
        assertEquals(BINARY, t.kind(2));
        Table c = CsvTables.reader().categorical("door", "site").read(new StringReader(CSV), "t.csv");
        assertEquals(CATEGORICAL, c.kind(2));
        assertEquals(List.of("0", "1"), c.categories(2));
    }

    @Test
    void recodeMatchesByLabelAndNamesAnUnseenOne() {
        Table t = Table.of(List.of("site"), List.of(CATEGORICAL), Map.of("site", List.of("b", "a")),
                new double[][] {{0}, {1}, {Double.NaN}});
        Table r = t.recode("site", List.of("a", "b", "c"));
        assertEquals("b", r.label(0, 0));
        assertEquals(1.0, r.get(0, 0));
        assertEquals(0.0, r.get(1, 0));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> t.recode("site", List.of("a", "c")));
        assertTrue(e.getMessage().contains("row 0, column 'site' has the category 'b'"), e.getMessage());
    }

    @Test
    void factoriesCheckIndicesAndLabels() {
        Map<String, List<String>> cats = Map.of("s", List.of("x", "y"));
        assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("s"), List.of(CATEGORICAL), cats, new double[][] {{2}}));
        assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("s"), List.of(CATEGORICAL), cats, new double[][] {{0.5}}));
        IllegalArgumentException noLabels = assertThrows(IllegalArgumentException.class,
                () -> Table.of(List.of("s"), List.of(CATEGORICAL), new double[][] {{0}}));
        assertTrue(noLabels.getMessage().contains("'s' is CATEGORICAL"), noLabels.getMessage());
        assertThrows(IllegalArgumentException.class, () -> Table.of(List.of("s"), List.of(CATEGORICAL),
                Map.of("s", List.of("x", "x")), new double[][] {{0}}));
        Table a = Table.of(List.of("s"), List.of(CATEGORICAL), cats, new double[][] {{0}});
        Table b = Table.of(List.of("s"), List.of(CATEGORICAL), Map.of("s", List.of("y", "x")), new double[][] {{0}});
        assertNotEquals(a, b);
        assertNotEquals(a.sha256(), b.sha256());
    }

    @Test
    void integerColumnsAreDeclaredOrInferredAndHoldWholeNumbers() throws Exception {
        String csv = "count,temp,flag\n3,1.5,0\n0,2.5,1\n12,,0\n";
        Table declared = CsvTables.reader().integer("count").read(new StringReader(csv), "c.csv");
        assertEquals(List.of(ColumnKind.INTEGER, CONTINUOUS, BINARY), declared.kinds());
        assertEquals(CONTINUOUS, CsvTables.reader().read(new StringReader(csv), "c.csv").kind(0));
        assertEquals(declared, CsvTables.reader().inferIntegers(true).read(new StringReader(csv), "c.csv"));
        StringWriter out = new StringWriter();
        CsvTables.writer().write(declared, out);
        assertTrue(out.toString().contains("\n12,"), out.toString());
        TableFormatException e = assertThrows(TableFormatException.class,
                () -> CsvTables.reader().integer("temp").read(new StringReader(csv), "c.csv"));
        assertTrue(e.getMessage().contains("'1.5' in a column declared integer"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> Table.of(List.of("n"), List.of(ColumnKind.INTEGER),
                new double[][] {{0.5}}));
        assertTrue(declared.toText(3).contains("count [int]"));
    }

    @Test
    void aThousandCategoriesReadInOrder() throws Exception {
        StringBuilder csv = new StringBuilder("code,v\n");
        List<String> expected = new ArrayList<>();
        for (int i = 0; i < 1000; i++) {
            String label = "A" + (999 - i);
            expected.add(label);
            csv.append(label).append(',').append(i).append('\n');
        }
        Table t = CsvTables.reader().categorical("code").read(new StringReader(csv.toString()), "k.csv");
        assertEquals(expected, t.categories(0));
        assertEquals(999.0, t.get(999, 0));
        assertEquals(t.categories(0), t.selectColumns("code").categories(0));
    }
}
