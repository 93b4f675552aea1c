package org.backstep.table;

import static org.backstep.table.ColumnKind.BINARY;
import static org.backstep.table.ColumnKind.CONTINUOUS;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.StringReader;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.stream.Collectors;
import org.backstep.table.TableFormatException.Problem;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class CsvTablesTest {

    private static final double NAN = Double.NaN;

    private static Table read(CsvReader reader, String csv) throws Exception {
        return reader.read(new StringReader(csv), "test.csv");
    }

    private static String write(CsvWriter writer, Table t) throws IOException {
        StringWriter out = new StringWriter();
        writer.write(t, out);
        return out.toString();
    }

    private static TableFormatException refused(CsvReader reader, String csv) {
        return assertThrows(TableFormatException.class, () -> read(reader, csv));
    }

    /** "line:column" of each problem, in order. */
    private static List<String> where(TableFormatException e) {
        return e.problems().stream().map(p -> p.line() + ":" + p.column()).collect(Collectors.toList());
    }

    /** Doubles that are hard to print: extremes, subnormals, signed zero, random bit patterns. */
    private static double[][] awkwardRows(int n, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[] special = {0.0, -0.0, Double.MIN_VALUE, -Double.MIN_VALUE, Double.MIN_NORMAL, Double.MAX_VALUE,
            -Double.MAX_VALUE, 0.1 + 0.2, 1.0 / 3.0, 1e-300, 123456789012345678.0, Math.PI, Math.ulp(1.0), 5e-324};
        double[][] rows = new double[n][3];
        for (int r = 0; r < n; r++) {
            double v;
            if (r < special.length) {
                v = special[r];
            } else {
                do {
                    v = Double.longBitsToDouble(rng.nextLong());
                } while (!Double.isFinite(v));
            }
            rows[r][0] = v;
            rows[r][1] = r % 7 == 3 ? NAN : rng.nextInt(2);
            rows[r][2] = r % 5 == 1 ? NAN : rng.nextGaussian() * 40 - 20;
        }
        return rows;
    }

    // ------------------------------------------------------------------ round trips

    @Test
    void roundTripIsBitIdentical() throws Exception {
        Table t = Table.of(List.of("x", "door_open", "temp_c"), List.of(CONTINUOUS, BINARY, CONTINUOUS),
                awkwardRows(500, 20240611L));
        String csv = write(CsvTables.writer(), t);
        Table back = read(CsvTables.reader(), csv);
        // Java SE API, Double.toString: its text parses back by Double.parseDouble to the same double;
        // Table.equals compares every cell bit for bit
        assertEquals(t, back);
        assertEquals(t.sha256(), back.sha256());
        // common practice, no source: binary cells are written as 0/1, missing as an empty cell
        assertTrue(csv.startsWith("x,door_open,temp_c\n0.0,"), csv.substring(0, 40));
        assertTrue(csv.lines().skip(1).allMatch(l -> l.split(",", -1)[1].matches("[01]?")));
    }

    @Test
    void roundTripThroughAFile(@TempDir Path dir) throws Exception {
        Table iris = OpenData.read("iris.csv");
        Path file = dir.resolve("iris copy.csv");
        CsvTables.writer().write(iris, file);
        // common practice, no source: what is written reads back equal, and the text of the
        // original (shortest decimal numbers) reads to the same doubles as our own output
        assertEquals(iris, CsvTables.reader().read(file));
        assertEquals(List.of("iris copy.csv"), listNames(dir));
    }

    @Test
    void customMissingTokenAndDelimiter() throws Exception {
        Table t = Table.of(List.of("a", "b"), List.of(CONTINUOUS, BINARY),
                new double[][] {{1.5, NAN}, {NAN, 1}, {-2.0, 0}});
        String csv = write(CsvTables.writer().missingToken("NA").delimiter(';'), t);
        // common practice, no source: the token and the delimiter are used as given
        assertEquals("a;b\n1.5;NA\nNA;1\n-2.0;0\n", csv);
        assertEquals(t, read(CsvTables.reader().missingToken("NA").delimiter(';'), csv));
        // a numeric sentinel may mark missing cells on reading
        Table sentinel = read(CsvTables.reader().missingToken("-999"), "a,b\n-999,1\n2,-999\n");
        assertTrue(Double.isNaN(sentinel.get(0, 0)) && Double.isNaN(sentinel.get(1, 1)));
        // read with the default token, "NA" is text in a number column
        TableFormatException e = refused(CsvTables.reader().delimiter(';'), csv);
        assertEquals(List.of("2:b", "3:a"), where(e));
    }

    @Test
    void oneColumnWithMissingCellsRoundTrips() throws Exception {
        Table t = Table.of(List.of("only"), List.of(CONTINUOUS), new double[][] {{1.0}, {NAN}, {2.0}});
        String csv = write(CsvTables.writer(), t);
        // Commons CSV quotes an empty first field, so the row is not an empty (skipped) line
        assertEquals("only\n1.0\n\"\"\n2.0\n", csv);
        assertEquals(t, read(CsvTables.reader(), csv));
    }

    @Test
    void namesNeedingQuotesRoundTrip() throws Exception {
        Table t = Table.of(List.of("temp, \u00b0C", "say \"hi\""), List.of(CONTINUOUS, CONTINUOUS),
                new double[][] {{1.5, 2}});
        // RFC 4180 section 2: fields with commas or quotes are quoted, quotes doubled
        String csv = write(CsvTables.writer(), t);
        assertTrue(csv.startsWith("\"temp, \u00b0C\",\"say \"\"hi\"\"\"\n"), csv);
        assertEquals(t, read(CsvTables.reader(), csv));
    }

    // ------------------------------------------------------------------ kinds

    @Test
    void kindsAreInferredOrDeclared() throws Exception {
        String csv = "zero_one,as_decimals,counts,all_missing,only_zero\n0,1.0,0,,0\n1,0.0,2,,0\n,1,1,,0\n";
        Table inferred = read(CsvTables.reader().allowEmptyColumns(true), csv);
        // the inference rule documented on CsvReader (common practice, no source)
        assertEquals(List.of(BINARY, BINARY, CONTINUOUS, CONTINUOUS, BINARY), inferred.kinds());
        assertEquals(4, inferred.missingCount()); // 1 in zero_one, 3 in all_missing
        Table off = read(CsvTables.reader().inferKinds(false).allowEmptyColumns(true), csv);
        assertEquals(List.of(CONTINUOUS, CONTINUOUS, CONTINUOUS, CONTINUOUS, CONTINUOUS), off.kinds());
        Table declared = read(CsvTables.reader().continuous("zero_one").binary("all_missing", "counts")
                .inferKinds(true).allowEmptyColumns(true), "zero_one,all_missing,counts\n0,,1\n1,,0\n");
        assertEquals(List.of(CONTINUOUS, BINARY, BINARY), declared.kinds());
    }

    @Test
    void missingCellsAreNaN() throws Exception {
        Table t = read(CsvTables.reader(), "a,b\n1, \n,\"\"\n 3 ,4\n");
        // common practice, no source: empty, blank and quoted-empty cells are missing; cells are stripped
        assertEquals(3, t.missingCount());
        assertEquals(3.0, t.get(2, 0));
        assertEquals(4.0, t.get(2, 1));
    }

    @Test
    void declarationsMustNotOverlap() {
        // common practice, no source: a column cannot be declared both kinds
        assertThrows(IllegalArgumentException.class, () -> CsvTables.reader().binary("a").continuous("b", "a"));
        assertThrows(IllegalArgumentException.class, () -> CsvTables.reader().continuous("a").binary("a"));
        assertThrows(IllegalArgumentException.class, () -> CsvTables.reader().missingToken(" NA"));
        assertThrows(IllegalArgumentException.class, () -> CsvTables.writer().missingToken("-999"));
        assertThrows(IllegalArgumentException.class, () -> CsvTables.writer().delimiter('\n'));
        assertThrows(IllegalArgumentException.class, () -> CsvTables.reader().delimiter('.'));
        // withers leave the original untouched
        CsvReader r = CsvTables.reader();
        r.missingToken("NA");
        assertEquals("", r.missingToken());
    }

    // ------------------------------------------------------------------ refusals

    @Test
    void everyBadCellIsReportedWithLineAndColumn() {
        String csv = String.join("\n",
                "temp_c,door_open,power_kw",   // line 1
                "1.5,0,2",                     // line 2: fine
                "warm,1,2",                    // line 3: text in a number column
                "1.5,2,2",                     // line 4: 2 in a column declared binary
                "1.5,0",                       // line 5: too few cells
                "NaN,0,Infinity",              // line 6: two non-finite cells
                "",                            // line 7: empty, skipped
                "1.5,0,2,9",                   // line 8: too many cells
                "\"1.5\",1,1e999",             // line 9: overflows to infinity
                "\"multi",                     // line 10: a quoted cell over two lines...
                "line\",1,2",                  // line 11: ...is text
                "-,0.5,3",                     // line 12: two bad cells
                "");
        TableFormatException e = refused(CsvTables.reader().binary("door_open"), csv);
        // common practice, no source: every problem, in line order, at the line where its record starts
        assertEquals(List.of("3:temp_c", "4:door_open", "5:power_kw", "6:temp_c", "6:power_kw", "8:(column 4)",
                "9:power_kw", "10:temp_c", "12:temp_c", "12:door_open"), where(e));
        assertTrue(e.problems().get(0).message().contains("'warm' is not a number"), e.problems().get(0).message());
        assertTrue(e.problems().get(1).message().contains("declared binary"));
        assertTrue(e.problems().get(2).message().contains("2 cells; expected 3"));
        assertTrue(e.problems().get(3).message().contains("not a finite number"));
        assertTrue(e.problems().get(6).message().contains("too large"));
        assertEquals(10, e.total());
        assertEquals("test.csv", e.source());
        assertTrue(e.getMessage().startsWith("10 problems in test.csv:\n  line 3, column 'temp_c': "), e.getMessage());
    }

    @Test
    void lineNumbersFollowCrLfAndBlankLines() {
        String csv = "\r\n\r\na,b\r\n1,2\r\n\r\n\r\nx,2\r\n3,y\r";
        TableFormatException e = refused(CsvTables.reader(), csv);
        // common practice, no source: lines counted as an editor shows them, CRLF or CR ends a line
        assertEquals(List.of("7:a", "8:b"), where(e));
    }

    @Test
    void eachRowKeepsTheLineItStartsOn(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("lines.csv");
        // header line 1; a row on 2; empty line 3; a row on 4 whose quoted cell runs to line 5; CRLF; an
        // empty line 6; a row on 7; the last with a text cell, so that the categorical column is found
        // by the first pass and the file read again (the lines must survive that)
        Files.writeString(file, "\uFEFFa,b,c\n1,2,x\n\n\"3\n\",4,y\r\n\r\n5,6,z", StandardCharsets.UTF_8);
        CsvReader.TableWithLines read = CsvTables.reader().inferCategories(true).readWithLines(file);
        // hand-counted from the text above (common practice, no source): lines as an editor shows them
        assertEquals(List.of(2L, 4L, 7L), java.util.Arrays.stream(read.lines()).boxed().toList());
        assertEquals(7L, read.line(2));
        assertEquals(CsvTables.reader().inferCategories(true).read(file), read.table());
        assertEquals(ColumnKind.CATEGORICAL, read.table().kind(2));
    }

    @Test
    void aPipeKeepsItsRowsLinesInOnePass(@TempDir Path dir) throws Exception {
        Path pipe = dir.resolve("rows.pipe");
        org.junit.jupiter.api.Assumptions.assumeTrue(new ProcessBuilder("mkfifo", pipe.toString()).start().waitFor() == 0,
                "mkfifo is not available");
        StringBuilder csv = new StringBuilder("a\n");
        for (int i = 0; i < 40; i++) {
            csv.append(i % 3 == 0 ? "\n" : "").append(i).append('\n');    // an empty line before every third row
        }
        Thread writer = new Thread(() -> {
            try {
                Files.writeString(pipe, csv, StandardCharsets.UTF_8);
            } catch (IOException e) {
                throw new java.io.UncheckedIOException(e);
            }
        });
        writer.start();
        long[] lines = CsvTables.reader().readWithLines(pipe).lines();
        writer.join();
        // common practice, no source: row i follows the header (line 1), i rows and ceil((i + 1) / 3) empty lines
        for (int i = 0; i < 40; i++) {
            assertEquals(2 + i + (i / 3 + 1), lines[i], "row " + i);
        }
    }

    @Test
    void linesThatDoNotFitTheTableAreRefused() throws Exception {
        Table t = read(CsvTables.reader(), "a\n1\n2\n");
        assertTrue(assertThrows(IllegalArgumentException.class, () -> new CsvReader.TableWithLines(t, new long[] {2}))
                .getMessage().contains("one per row"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> new CsvReader.TableWithLines(t, new long[] {3, 3}))
                .getMessage().contains("the line of row 1 is 3"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> new CsvReader.TableWithLines(t, new long[] {1, 3}))
                .getMessage().contains("the line of row 0 is 1"));
        long[] given = {2, 3};
        CsvReader.TableWithLines kept = new CsvReader.TableWithLines(t, given);
        given[0] = 99;
        // common practice, no source: arrays in are copied, arrays out are copies
        assertEquals(2L, kept.lines()[0]);
        kept.lines()[1] = 99;
        assertEquals(3L, kept.line(1));
    }

    @Test
    void headerProblemsAreReported() {
        TableFormatException e = refused(CsvTables.reader().binary("valve"), "a,,a, b \n1,2,3,4\n");
        // common practice, no source: blank and repeated names, and a declared column the header lacks
        assertEquals(List.of("1:(column 2)", "1:a", "1:valve"), where(e));
        assertTrue(e.problems().get(1).message().contains("columns 1 and 3"));
        TableFormatException empty = refused(CsvTables.reader(), "\n\n");
        assertEquals(List.of("1:"), where(empty));
    }

    @Test
    void brokenQuotingStopsWithAProblem() {
        TableFormatException e = refused(CsvTables.reader(), "a,b\nx,2\n\"1,2\n3,4\n");
        // common practice, no source: the text error is kept, then the unterminated quote (RFC 4180,
        // section 2, rule 5), reported at the line where its record starts
        assertEquals(List.of("2:a", "3:"), where(e));
        assertTrue(e.problems().get(1).message().contains("never closed"), e.problems().get(1).message());
    }

    @Test
    void problemsAreCappedAndCounted() {
        StringBuilder csv = new StringBuilder("a,b\n");
        for (int i = 0; i < 75; i++) {
            csv.append("x,y\n");
        }
        TableFormatException e = refused(CsvTables.reader(), csv.toString());
        // common practice, no source: 150 bad cells, 100 kept, 50 counted
        assertEquals(TableFormatException.MAX_PROBLEMS, e.problems().size());
        assertEquals(50, e.omitted());
        assertEquals(150, e.total());
        assertTrue(e.getMessage().contains("and 140 more (only the first 100 are kept"), e.getMessage());
        assertEquals(new Problem(51, "b", e.problems().get(99).message()), e.problems().get(99));
    }

    @Test
    void byteOrderMarkIsIgnored(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("bom.csv");
        Files.write(file, "\uFEFFa,b\n1,0\n".getBytes(StandardCharsets.UTF_8));
        Table t = CsvTables.reader().read(file);
        // Unicode Standard, section 23.8: U+FEFF at the start of a text is a byte order mark, not content
        assertEquals(List.of("a", "b"), t.names());
    }

    // ------------------------------------------------------------------ streaming

    /** A reader that hands out at most a few characters per call, so that every chunk boundary is met. */
    private static java.io.Reader trickle(String text) {
        return new java.io.FilterReader(new StringReader(text)) {
            private int call;

            @Override
            public int read(char[] buf, int off, int len) throws IOException {
                return super.read(buf, off, Math.min(len, 1 + call++ % 3));
            }
        };
    }

    /** A stream that hands out one byte per call. */
    private static java.io.InputStream oneByteAtATime(byte[] bytes) {
        return new java.io.FilterInputStream(new java.io.ByteArrayInputStream(bytes)) {
            @Override
            public int read(byte[] buf, int off, int len) throws IOException {
                return super.read(buf, off, Math.min(len, 1));
            }
        };
    }

    @Test
    void chunkBoundariesChangeNothing(@TempDir Path dir) throws Exception {
        // lone CR, CRLF, empty lines, a quoted line break, multi-byte and supplementary characters
        String csv = "\uFEFFtemp \u00b0C,\"say \uD83D\uDE00\"\r\n1.5,0\r\r\n-2,\"1\"\r\n\n3e2,0\n";
        byte[] bytes = csv.getBytes(StandardCharsets.UTF_8);
        Path file = dir.resolve("t.csv");
        Files.write(file, bytes);
        Table whole = CsvTables.reader().read(file);
        // common practice, no source: how the text is cut into reads does not change the table
        assertEquals(whole, CsvTables.reader().read(trickle(csv.substring(1)), "t.csv"));
        assertEquals(whole, CsvTables.reader().read(oneByteAtATime(bytes), "t.csv"));
        assertEquals(List.of("temp \u00b0C", "say \uD83D\uDE00"), whole.names());
        assertEquals(3, whole.rows());
        String bad = "a,b\r1,2\r\n\rx,\"multi\nline\"\r\n3,y\n";
        TableFormatException e = refused(CsvTables.reader(), bad);
        assertEquals(List.of("4:a", "4:b", "6:b"), where(e));
        TableFormatException trickled = assertThrows(TableFormatException.class,
                () -> CsvTables.reader().read(trickle(bad), "test.csv"));
        assertEquals(e.problems(), trickled.problems());
        byte[] latin1 = "a,b\r\n1,2\r\n3,\u00e9\n".getBytes(StandardCharsets.ISO_8859_1);
        TableFormatException encoding = assertThrows(TableFormatException.class,
                () -> CsvTables.reader().read(oneByteAtATime(latin1), "latin1.csv"));
        String first = encoding.problems().get(0).toString();
        assertTrue(first.startsWith("line 3: column 3 (byte offset 12): byte 0xE9 is not valid UTF-8"), first);
    }

    @Test
    void aLargeTableReadsAlikeFromAFileAndAStream(@TempDir Path dir) throws Exception {
        // three columns: three blocks of the one-pass store, the last one part full, and far more lines
        // than the line window holds
        int rows = 2 * (CsvReader.BLOCK_CELLS / 3) + 17;
        double[][] cells = new double[rows][];
        for (int r = 0; r < rows; r++) {
            cells[r] = new double[] {(r % 1000) * 0.5 - 100, r % 2, r % 5 == 0 ? NAN : r * 0.01};
        }
        Table t = Table.of(List.of("x", "door_open", "temp_c"), List.of(CONTINUOUS, BINARY, CONTINUOUS), cells);
        Path file = dir.resolve("large.csv");
        CsvTables.writer().write(t, file);
        // common practice, no source: the two-pass file read and the one-pass stream read agree
        assertEquals(t, CsvTables.reader().read(file));
        try (var in = Files.newInputStream(file)) {
            assertEquals(t, CsvTables.reader().read(in, file.toString()));
        }
    }

    @Test
    void emptyColumnsAreKeptOnRequest() throws Exception {
        String csv = "a,b\n1,\n2,\n";
        // common practice, no source: refused by default (naming the column), kept when allowed
        assertEquals(List.of("1:b"), where(refused(CsvTables.reader(), csv)));
        Table kept = read(CsvTables.reader().allowEmptyColumns(true), csv);
        assertEquals(2, kept.missingCount());
        assertEquals(CONTINUOUS, kept.kind(1));
        assertTrue(CsvTables.reader().allowEmptyColumns(true).toString().contains("allowEmptyColumns=true"));
    }

    private static List<String> listNames(Path dir) throws IOException {
        List<String> names = new ArrayList<>();
        try (var s = Files.list(dir)) {
            s.forEach(p -> names.add(p.getFileName().toString()));
        }
        names.sort(null);
        return names;
    }
}
