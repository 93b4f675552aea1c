package org.backstep.table;

import java.util.List;

/**
 * A CSV source could not be read as a {@link Table}. It carries every problem found in one pass over
 * the whole source (up to {@link #MAX_PROBLEMS}; the rest are counted by {@link #omitted()}), each
 * with its 1-based line and its column name, so that all of them can be fixed at once; a problem of
 * the text itself (not UTF-8, a NUL character, a byte order mark inside, an unclosed quote) ends the
 * pass, and its message gives the column in characters and the byte offset. The reader that throws
 * it returns no partial table.
 */
public final class TableFormatException extends Exception {

    /** The most problems kept in {@link #problems()}; further ones are only counted. */
    public static final int MAX_PROBLEMS = 100;

    /** How many problems the message lists. */
    static final int PROBLEMS_IN_MESSAGE = 10;

    private static final long serialVersionUID = 1L;

    /**
     * One problem of a source.
     *
     * @param line the 1-based line where the offending record starts (line 1 is the header)
     * @param column the name of the column concerned as the header gives it; for a header cell
     *     without a name, or a cell beyond the header's columns, a description in parentheses such as
     *     {@code "(column 3)"}; empty when no column is concerned
     * @param message what is wrong and what was expected
     */
    public record Problem(long line, String column, String message) {

        /**
         * Validates the parts.
         *
         * @throws IllegalArgumentException if {@code line < 1} or a text is null
         */
        public Problem {
            if (line < 1) {
                throw new IllegalArgumentException("line is " + line + "; expected a 1-based line number");
            }
            if (column == null || message == null) {
                throw new IllegalArgumentException("column and message must not be null");
            }
        }

        /** @return e.g. {@code "line 4, column 'x': ..."} */
        @Override
        public String toString() {
            return "line " + line + (column.isEmpty() ? "" : ", column '" + column + "'") + ": " + message;
        }
    }

    private final String source;
    private final List<Problem> problems;
    private final long omitted;

    /**
     * @param source the name of the source, e.g. a file path
     * @param problems the problems kept, at least one, at most {@link #MAX_PROBLEMS} (copied)
     * @param omitted how many further problems were found but not kept
     */
    TableFormatException(String source, List<Problem> problems, long omitted) {
        super(message(source, problems, omitted));
        this.source = source;
        this.problems = List.copyOf(problems);
        this.omitted = omitted;
    }

    private static String message(String source, List<Problem> problems, long omitted) {
        long total = problems.size() + omitted;
        StringBuilder sb = new StringBuilder();
        sb.append(total).append(total == 1 ? " problem" : " problems").append(" in ").append(source).append(':');
        int n = Math.min(problems.size(), PROBLEMS_IN_MESSAGE);
        for (int i = 0; i < n; i++) {
            sb.append("\n  ").append(problems.get(i));
        }
        if (total > n) {
            sb.append("\n  ... and ").append(total - n).append(" more");
            if (omitted > 0) {
                sb.append(" (only the first ").append(MAX_PROBLEMS).append(" are kept in problems())");
            }
        }
        return sb.toString();
    }

    /** @return the name of the source that was read */
    public String source() {
        return source;
    }

    /** @return the problems, in line order, at most {@link #MAX_PROBLEMS} (unmodifiable) */
    public List<Problem> problems() {
        return problems;
    }

    /** @return how many problems were found beyond the {@link #MAX_PROBLEMS} kept (0 if none) */
    public long omitted() {
        return omitted;
    }

    /** @return {@code problems().size() + omitted()} */
    public long total() {
        return problems.size() + omitted;
    }
}
