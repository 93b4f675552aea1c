package org.backstep.table;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.function.UnaryOperator;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The catalogue of bad CSV inputs: each case names what it checks, gives the bytes of a file and
 * the reader's options, and the problem the reader must report first (its line, column name and the
 * key part of its message, as {@link TableFormatException.Problem#toString()} prints it) and how many
 * problems in all. Each file is read from disk (the two-pass path, whose message must name the file)
 * and from a stream (the one-pass path), which must report the same problems.
 *
 * <p>Sources of the rules: UTF-8 validity from RFC 3629, section 3 (overlong forms, surrogates and
 * values past U+10FFFF are invalid); the byte order mark from the Unicode Standard, section 23.8
 * (U+FEFF opens a text; the UTF-16 marks are FF FE and FE FF); quoting from RFC 4180, section 2. The
 * messages are our own (common practice, no source).
 */
class CsvCatalogueTest {

    /** One bad input and what the reader must say about it. */
    record Case(String checks, byte[] bytes, UnaryOperator<CsvReader> options, String first, int problems) {
        @Override
        public String toString() {
            return checks;
        }
    }

    private static final String BOM = "\uFEFF";

    private static byte[] utf8(String s) {
        return s.getBytes(StandardCharsets.UTF_8);
    }

    /** UTF-8 text with raw bytes spliced in: each {@code int[]} part is written byte by byte. */
    private static byte[] mix(Object... parts) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        for (Object p : parts) {
            if (p instanceof String) {
                out.writeBytes(utf8((String) p));
            } else {
                for (int b : (int[]) p) {
                    out.write(b);
                }
            }
        }
        return out.toByteArray();
    }

    private static int[] raw(int... b) {
        return b;
    }

    private static Case bad(String checks, byte[] bytes, String first) {
        return new Case(checks, bytes, r -> r, first, 1);
    }

    private static Case bad(String checks, String text, String first) {
        return bad(checks, utf8(text), first);
    }

    private static Case bad(String checks, String text, UnaryOperator<CsvReader> options, String first, int n) {
        return new Case(checks, utf8(text), options, first, n);
    }

    static Stream<Case> catalogue() {
        List<Case> c = new ArrayList<>();
        String notUtf8 = "is not valid UTF-8 here; expected UTF-8 text";
        // ------------------------------------------------ encoding: the first bad byte, line and column
        c.add(bad("Latin-1 byte in a header name", mix("temp_c,r", raw(0xE9), "gime\n1,2\n"),
                "line 1: column 9 (byte offset 8): byte 0xE9 " + notUtf8));
        c.add(bad("Latin-1 degree sign in a later line", mix("a,b\n1,2\n3,4", raw(0xB0), "\n"),
                "line 3: column 4 (byte offset 11): byte 0xB0 " + notUtf8));
        c.add(bad("Windows-1252 curly quote", mix("a,", raw(0x93), "b", raw(0x94), "\n1,2\n"),
                "line 1: column 3 (byte offset 2): byte 0x93 " + notUtf8));
        c.add(bad("UTF-16LE file with its byte order mark", mix(raw(0xFF, 0xFE, 'a', 0, ',', 0, 'b', 0)),
                "line 1: column 1 (byte offset 0): the file starts with the UTF-16 byte order mark 0xFF 0xFE"));
        c.add(bad("UTF-16BE file with its byte order mark", mix(raw(0xFE, 0xFF, 0, 'a', 0, ',', 0, 'b')),
                "line 1: column 1 (byte offset 0): the file starts with the UTF-16 byte order mark 0xFE 0xFF"));
        c.add(bad("UTF-16LE file without a byte order mark", mix(raw('a', 0, ',', 0, 'b', 0, '\n', 0)),
                "line 1: column 2 (byte offset 1): a NUL character (byte 0x00): the file looks like UTF-16"));
        c.add(bad("UTF-16BE file without a byte order mark", mix(raw(0, 'a', 0, ',', 0, 'b', 0, '\n')),
                "line 1: column 1 (byte offset 0): a NUL character"));
        c.add(bad("binary file: PNG signature", mix(raw(0x89, 'P', 'N', 'G', '\r', '\n', 0x1A, '\n')),
                "line 1: column 1 (byte offset 0): byte 0x89 " + notUtf8));
        c.add(bad("binary file: gzip header", mix(raw(0x1F, 0x8B, 0x08, 0x00)),
                "line 1: column 2 (byte offset 1): byte 0x8B " + notUtf8));
        c.add(bad("file cut inside a multi-byte character", mix("a,b\n1,2\n3,4", raw(0xC3)),
                "line 3: column 4 (byte offset 11): the file ends inside the UTF-8 sequence that byte 0xC3 starts"));
        c.add(bad("overlong encoding of '/'", mix("a,b\n", raw(0xC0, 0xAF), ",2\n"),
                "line 2: column 1 (byte offset 4): byte 0xC0 " + notUtf8));
        c.add(bad("UTF-8 encoded surrogate (CESU-8)", mix("a,b\n1,", raw(0xED, 0xA0, 0x80), "\n"),
                "line 2: column 3 (byte offset 6): byte 0xED " + notUtf8));
        c.add(bad("code point past U+10FFFF", mix("a,b\n1,", raw(0xF4, 0x90, 0x80, 0x80), "\n"),
                "line 2: column 3 (byte offset 6): byte 0xF4 " + notUtf8));
        c.add(bad("stray continuation byte at a line start", mix("a,b\n1,2\n", raw(0x80), "3,4\n"),
                "line 3: column 1 (byte offset 8): byte 0x80 " + notUtf8));
        c.add(bad("bad byte after CRLF line ends", mix("a,b\r\n1,2\r\n", raw(0xE9), ",4\r\n"),
                "line 3: column 1 (byte offset 10): byte 0xE9 " + notUtf8));
        c.add(bad("bad byte after lone CR line ends", mix("a,b\r1,2\r", raw(0xE9), ",4\r"),
                "line 3: column 1 (byte offset 8): byte 0xE9 " + notUtf8));
        c.add(bad("column counts characters, offset counts bytes", mix("temp\u00e9ratur", raw(0xE9), ",b\n"),
                "line 1: column 11 (byte offset 11): byte 0xE9 " + notUtf8));
        c.add(bad("a supplementary character counts as one column", mix("\uD83D\uDE00", raw(0xFF), ",b\n"),
                "line 1: column 2 (byte offset 4): byte 0xFF " + notUtf8));
        c.add(bad("byte order mark opening a later header cell", "a," + BOM + "b\n1,2\n",
                "line 1: column 3 (byte offset 2): a byte order mark (U+FEFF) inside the text"));
        c.add(bad("byte order mark opening a later line (two files joined)", BOM + "a,b\n1,2\n" + BOM + "a,b\n3,4\n",
                "line 3: column 1 (byte offset 11): a byte order mark (U+FEFF) inside the text"));
        c.add(bad("two byte order marks at the start", BOM + BOM + "a,b\n1,2\n",
                "line 1: column 1 (byte offset 3): a byte order mark (U+FEFF) inside the text"));
        c.add(bad("byte order mark inside a cell", "a,b\n1,2" + BOM + "\n",
                "line 2: column 4 (byte offset 7): a byte order mark"));
        c.add(bad("NUL character in a cell", "a,b\n1,2\u0000\n",
                "line 2: column 4 (byte offset 7): a NUL character (byte 0x00)"));
        // ------------------------------------------------ structure
        c.add(bad("empty file", new byte[0], "line 1: the source is empty; expected a header row"));
        c.add(bad("only a byte order mark", BOM, "line 1: the source holds only a byte order mark"));
        c.add(bad("only empty lines", "\n\r\n\n", "line 1: the source has only empty lines"));
        c.add(bad("header only, no line break", "a,b", "line 1: the source has a header but no rows"));
        c.add(bad("header only, after and before empty lines", "\n\na,b\n\n\n",
                "line 3: the source has a header but no rows"));
        c.add(bad("file without a header row", "1.5,2.5\n3,4\n",
                "line 1: every column name in the header is a number ('1.5,2.5'); the file seems to have no header"));
        c.add(bad("blank column name in the middle", "a,,c\n1,2,3\n",
                "line 1, column '(column 2)': blank column name in the header; expected a name"));
        c.add(bad("delimiter at the end of the header", "a,b,\n1,2\n", r -> r,
                "line 1, column '(column 3)': blank column name in the header; expected a name (a delimiter at the end",
                2));
        c.add(bad("white-space column name", "a, \t ,c\n1,2,3\n", "line 1, column '(column 2)': blank column name"));
        c.add(bad("quoted empty column name", "a,\"\"\n1,2\n", "line 1, column '(column 2)': blank column name"));
        c.add(bad("repeated column name", "a,b,a\n1,2,3\n",
                "line 1, column 'a': column name repeated in the header (columns 1 and 3); expected unique names"));
        c.add(bad("column names equal once stripped", "a, a\n1,2\n",
                "line 1, column 'a': column name repeated in the header (columns 1 and 2)"));
        c.add(bad("row with too few cells", "a,b,c\n1,2,3\n1,2\n",
                "line 3, column 'c': the row has 2 cells; expected 3, one per header column"));
        c.add(bad("row with too many cells", "a,b\n1,2,3\n",
                "line 2, column '(column 3)': the row has 3 cells; expected 2, one per header column"));
        c.add(bad("white-space line in a two-column table", "a,b\n1,2\n   \n3,4\n",
                "line 3, column 'b': the row has 1 cell; expected 2"));
        c.add(bad("quote never closed", "a,b\n1,2\n3,\"4\n5,6\n",
                "line 3: a quoted cell opens in this record and is never closed"));
        c.add(bad("text after a closing quote", "a,b\n\"1\"x,2\n",
                "line 2: text follows the closing quote of a cell in this record"));
        c.add(bad("semicolon file read with the comma", "a;b\n1;2\n",
                "line 2, column 'a;b': cell '1;2' is not a number; expected a decimal number such as 1.5 or -2e-3,"
                        + " or the missing-value token '' (is ';' the file's delimiter?"));
        c.add(bad("tab-separated file read with the comma", "a\tb\n1\t2\n",
                "line 2, column 'a\tb': cell '1\t2' is not a number; expected a decimal number such as 1.5 or"
                        + " -2e-3, or the missing-value token '' (is the tab the file's delimiter?"));
        // ------------------------------------------------ cells
        c.add(bad("text in a numeric column", "temp_c,door_open\nwarm,0\n",
                "line 2, column 'temp_c': cell 'warm' is not a number"));
        c.add(bad("NaN text", "a,b\nNaN,1\n", "line 2, column 'a': cell 'NaN' is not a finite number"));
        c.add(bad("Infinity text", "a,b\n1,Infinity\n", "line 2, column 'b': cell 'Infinity' is not a finite number"));
        c.add(bad("negative infinity, short form", "a,b\n-inf,1\n", "line 2, column 'a': cell '-inf' is not a finite"));
        c.add(bad("number too large for a double", "a,b\n1e999,1\n",
                "line 2, column 'a': cell '1e999' is too large for a double (it would be infinite)"));
        c.add(bad("decimal comma in a quoted cell", "a,b\n\"1,5\",2\n",
                "line 2, column 'a': cell '1,5' is not a number; expected a decimal number such as 1.5 or -2e-3, or"
                        + " the missing-value token '' (a decimal comma? write the point: 1.5)"));
        c.add(bad("thousands separated by a space", "a,b\n1 000,2\n", "line 2, column 'a': cell '1 000' is not a"));
        c.add(bad("hexadecimal number", "a,b\n0x1F,2\n", "line 2, column 'a': cell '0x1F' is not a number"));
        c.add(bad("Java float suffix (parseDouble would take it)", "a,b\n1.5f,2\n",
                "line 2, column 'a': cell '1.5f' is not a number"));
        c.add(bad("percent sign", "a,b\n12%,2\n", "line 2, column 'a': cell '12%' is not a number"));
        c.add(bad("unit after the number", "power_kw\n4.5kW\n", "line 2, column 'power_kw': cell '4.5kW' is not a"));
        c.add(bad("full-width digits", "a,b\n\uFF11\uFF12,2\n", "line 2, column 'a': cell '\uFF11\uFF12' is not a"));
        c.add(bad("non-breaking space before a number", "a,b\n\u00A01.5,2\n",
                "line 2, column 'a': cell '\u00A01.5' is not a number"));
        c.add(bad("NA cells read with the default missing token", "a,b\n1,NA\n",
                "line 2, column 'b': cell 'NA' is not a number; expected a decimal number such as 1.5 or -2e-3, or"
                        + " the missing-value token '' (if it marks a missing cell, read with missingToken(\"NA\"))"));
        c.add(bad("2 in a column declared binary", "door_open,t\n2,1.5\n", r -> r.binary("door_open"),
                "line 2, column 'door_open': cell '2' in a column declared binary; expected 0, 1 or the missing-value"
                        + " token ''", 1));
        c.add(bad("0.5 in a column declared binary, missing token NA", "door_open,t\nNA,1\n0.5,2\n",
                r -> r.binary("door_open").missingToken("NA"),
                "line 3, column 'door_open': cell '0.5' in a column declared binary; expected 0, 1 or the"
                        + " missing-value token 'NA'", 1));
        c.add(bad("declared binary column not in the header", "a,b\n1,0\n", r -> r.binary("valve"),
                "line 1, column 'valve': declared binary, but the header has no such column; its columns are [a, b]",
                1));
        c.add(bad("declared continuous column not in the header", "a,b\n1,0\n", r -> r.continuous("A"),
                "line 1, column 'A': declared continuous, but the header has no such column", 1));
        c.add(bad("column with every cell missing", "a,b\n1,\n2,\n",
                "line 1, column 'b': every cell of the column is missing (2 rows); expected at least one value, or"
                        + " allowEmptyColumns(true)"));
        c.add(bad("declared binary column with every cell missing token", "a,valve\n1,NA\n",
                r -> r.binary("valve").missingToken("NA"),
                "line 1, column 'valve': every cell of the column is missing (1 row)", 1));
        c.add(bad("every problem of a file at once, in line order", "a,b\nx,1\n1,y\n1\n", r -> r,
                "line 2, column 'a': cell 'x' is not a number", 3));
        c.add(new Case("record longer than the limit (an unclosed quote)",
                mix("a,b\n1,\"", "x".repeat(CsvText.MAX_RECORD_CHARS + 1)), r -> r,
                "line 2: reading stopped: the record starting here is longer than 8,388,608"
                        + " characters (an unclosed quote", 1));
        return c.stream();
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("catalogue")
    void badInputGivesItsMessage(Case c, @TempDir Path dir) throws Exception {
        Path file = dir.resolve("bad.csv");
        Files.write(file, c.bytes());
        CsvReader reader = c.options().apply(CsvTables.reader());
        TableFormatException fromFile = assertThrows(TableFormatException.class, () -> reader.read(file));
        String first = fromFile.problems().get(0).toString();
        assertTrue(first.startsWith(c.first()), () -> "first problem\n  " + first + "\nexpected to start with\n  "
                + c.first());
        assertEquals(c.problems(), fromFile.total(), fromFile::getMessage);
        assertTrue(fromFile.getMessage().contains(" in " + file + ":\n  " + first), fromFile::getMessage);
        TableFormatException fromStream = assertThrows(TableFormatException.class,
                () -> reader.read(new ByteArrayInputStream(c.bytes()), file.toString()));
        assertEquals(fromFile.problems(), fromStream.problems());
    }

    @Test
    void catalogueIsLargeAndNamed() {
        // issue 15 asks for at least 40 bad inputs, each with its message; names must be unique
        List<String> names = catalogue().map(Case::checks).toList();
        assertTrue(names.size() >= 40, "only " + names.size() + " cases");
        assertEquals(names.size(), names.stream().distinct().count());
    }
}
