package org.backstep.table;

import java.util.Collections;
import java.util.LinkedHashSet;
import java.util.Set;
import java.util.regex.Pattern;
import org.backstep.schedule.Require;

/**
 * Where CSV reading and writing start: {@link #reader()} and {@link #writer()} return immutable
 * options with their defaults; each wither returns new options, and the terminal {@code read} or
 * {@code write} does the work (RFC 4180 quoting through Apache Commons CSV; one header row of column
 * names, then one record per row; UTF-8).
 *
 * <pre>
 *   Table t = CsvTables.reader().missingToken("NA").binary("door_open").read(path);
 *   CsvTables.writer().write(t, path);
 * </pre>
 *
 * <p>Written numbers read back bit for bit: continuous cells are written by
 * {@link Double#toString(double)}, whose text parses back to the same double (Java SE API
 * specification of {@code Double.toString} and {@code Double.parseDouble}), binary cells as
 * {@code 0} or {@code 1}, categorical cells as their labels, missing cells as the missing token.
 * Categorical columns are read where declared ({@link CsvReader#categorical(String...)}) or, with
 * {@link CsvReader#inferCategories(boolean)}, where a column holds text; their labels are kept in
 * first-seen order.
 */
public final class CsvTables {

    /** Text for a non-finite number, refused by the reader. */
    static final Pattern NON_FINITE = Pattern.compile("[+-]?(nan|inf|infinity)", Pattern.CASE_INSENSITIVE);

    /** The longest cell text quoted in a problem message. */
    static final int QUOTED_CELL_LENGTH = 40;

    private CsvTables() {
    }

    /**
     * The reader with its defaults: missing token {@code ""} (an empty cell), kinds inferred, no
     * declared kinds, delimiter {@code ','}, columns with every cell missing refused.
     *
     * @return the default reader options
     */
    public static CsvReader reader() {
        return CsvReader.DEFAULT;
    }

    /**
     * The writer with its defaults: missing token {@code ""} (an empty cell), delimiter {@code ','}.
     *
     * @return the default writer options
     */
    public static CsvWriter writer() {
        return CsvWriter.DEFAULT;
    }

    // ------------------------------------------------------------------ shared by reader and writer

    /**
     * Whether the text is a decimal number as the reader accepts it (ASCII only):
     * {@code [+-]?(d+(.d*)?|.d+)([eE][+-]?d+)?}. Every such text is accepted by
     * {@link Double#parseDouble(String)}.
     */
    static boolean isDecimal(String s) {
        int n = s.length();
        int i = 0;
        if (i < n && (s.charAt(i) == '+' || s.charAt(i) == '-')) {
            i++;
        }
        int intDigits = 0;
        while (i < n && isDigit(s.charAt(i))) {
            i++;
            intDigits++;
        }
        int fracDigits = 0;
        if (i < n && s.charAt(i) == '.') {
            i++;
            while (i < n && isDigit(s.charAt(i))) {
                i++;
                fracDigits++;
            }
        }
        if (intDigits + fracDigits == 0) {
            return false;
        }
        if (i < n && (s.charAt(i) == 'e' || s.charAt(i) == 'E')) {
            i++;
            if (i < n && (s.charAt(i) == '+' || s.charAt(i) == '-')) {
                i++;
            }
            int expDigits = 0;
            while (i < n && isDigit(s.charAt(i))) {
                i++;
                expDigits++;
            }
            if (expDigits == 0) {
                return false;
            }
        }
        return i == n;
    }

    private static boolean isDigit(char c) {
        return c >= '0' && c <= '9';
    }

    static String checkToken(String token) {
        Require.notNull("missingToken", token);
        if (!token.equals(token.strip())) {
            throw new IllegalArgumentException("missingToken is '" + token
                    + "'; expected no leading or trailing white space (cells are compared after stripping)");
        }
        return token;
    }

    static char checkDelimiter(char d) {
        if (d == '\n' || d == '\r' || d == '"' || d == '.' || d == '+' || d == '-' || d == '\uFEFF' || d == 0
                || Character.isLetterOrDigit(d)) {
            throw new IllegalArgumentException("delimiter is '" + d
                    + "'; expected a separator that cannot be part of a number or a line break or a quote");
        }
        return d;
    }

    static Set<String> nameSet(String what, String... columns) {
        Require.notNull(what, columns);
        Set<String> set = new LinkedHashSet<>();
        for (int i = 0; i < columns.length; i++) {
            if (columns[i] == null) {
                throw new IllegalArgumentException(what + "[" + i + "] is null; expected a column name");
            }
            set.add(columns[i]);
        }
        return Collections.unmodifiableSet(set);
    }

    static void checkDisjoint(Set<String> set, Set<String> other, String otherKind) {
        for (String name : set) {
            if (other.contains(name)) {
                throw new IllegalArgumentException("column '" + name + "' is already declared " + otherKind
                        + "; expected each column declared at most one kind");
            }
        }
    }

    /** At most the first ten labels, quoted, then how many more: for messages. */
    static String preview(java.util.List<String> labels) {
        StringBuilder sb = new StringBuilder("[");
        for (int i = 0; i < Math.min(10, labels.size()); i++) {
            sb.append(i > 0 ? ", " : "").append(quote(labels.get(i)));
        }
        if (labels.size() > 10) {
            sb.append(", ... ").append(labels.size() - 10).append(" more");
        }
        return sb.append(']').toString();
    }

    static String quote(String text) {
        String t = text.length() > QUOTED_CELL_LENGTH ? text.substring(0, QUOTED_CELL_LENGTH) + "..." : text;
        return "'" + t + "'";
    }
}
