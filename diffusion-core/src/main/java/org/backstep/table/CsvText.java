package org.backstep.table;

import java.io.IOException;
import java.io.InputStream;
import java.io.Reader;
import java.nio.ByteBuffer;
import java.nio.CharBuffer;
import java.nio.charset.CharsetDecoder;
import java.nio.charset.CoderResult;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.Locale;

/**
 * The text of a CSV source as the parser reads it, a chunk at a time: bytes decoded strictly as
 * UTF-8 (or characters passed through from a caller's reader), with the checks that need the raw
 * text and the line numbers that messages need.
 *
 * <p>What it refuses, by throwing {@link Refusal} (an {@link IOException}, so that it passes
 * through the parser): a byte that is not part of valid UTF-8 (RFC 3629, section 3: overlong forms,
 * surrogates, values past U+10FFFF and truncated sequences included; the JDK's decoder with
 * {@link CodingErrorAction#REPORT}); a NUL character, which UTF-8 text does not hold but UTF-16 text
 * and binary data do; a byte order mark (U+FEFF) anywhere but at the very start (the Unicode
 * Standard, section 23.8, allows it only there; inside, it usually means two files were joined); a
 * record longer than {@link #MAX_RECORD_CHARS}, which only an unclosed quote or a file that is not a
 * table produces, and which would otherwise grow one cell to the size of the file. Each refusal
 * names the 1-based line and column (characters, counting a supplementary character once) and, for
 * bytes, the 0-based byte offset in the file.
 *
 * <p>Lines end at "\n", "\r\n" or a lone "\r", as in Commons CSV. The start of every line not yet
 * claimed by a record is kept in a small window, so that {@link #recordLine(long)} turns a record's
 * character position into its line without keeping the text.
 */
final class CsvText extends Reader {

    /** The longest record, in characters; about 16 MB of text in memory while it is parsed. */
    static final int MAX_RECORD_CHARS = 1 << 23;

    private static final char BOM = '\uFEFF';
    private static final int BYTES = 1 << 16;
    private static final int CHARS = 1 << 15;
    /** Marks an empty line in {@link #lineStarts}: the sign bit of an offset that is never negative. */
    private static final long EMPTY = Long.MIN_VALUE;

    /** A problem of the text itself; reading stops at it. */
    static final class Refusal extends IOException {
        private static final long serialVersionUID = 1L;
        final long line;

        Refusal(long line, String message) {
            super(message);
            this.line = line;
        }
    }

    private final InputStream bytes;
    private final Reader chars;
    private final CharsetDecoder decoder;
    private final ByteBuffer in;
    private final CharBuffer out = CharBuffer.allocate(CHARS);
    private final char[] passThrough;
    private long inBase;          // file offset of in.array()[0]
    private boolean endOfInput;   // the byte source is exhausted
    private boolean finished;     // every character has been decoded and scanned
    private boolean first = true; // nothing scanned yet (for the leading byte order mark)
    private boolean openedWithBom;

    private long delivered;       // characters scanned so far, after a leading BOM
    private long line = 1;        // the line of the next character
    private long column;          // characters of that line before it
    private boolean pendingCr;    // the last character was '\r': the next decides where the line ends
    private boolean flagPending;  // the newest line start waits for its first character
    private long recordStart;     // character position where the record being read starts, about
    private long recordStartLine = 1;

    private long[] lineStarts = new long[64]; // [head, lines): starts of lines not yet claimed, EMPTY-flagged
    private int head;
    private int lines;
    private long headLine = 1;    // the line number of lineStarts[head]

    private CsvText(InputStream bytes, Reader chars) {
        this.bytes = bytes;
        this.chars = chars;
        this.decoder = bytes == null ? null : StandardCharsets.UTF_8.newDecoder()
                .onMalformedInput(CodingErrorAction.REPORT).onUnmappableCharacter(CodingErrorAction.REPORT);
        this.in = bytes == null ? null : ByteBuffer.allocate(BYTES).flip();
        this.passThrough = bytes == null ? new char[CHARS] : null;
        out.flip();
        lineStarts[lines++] = 0;
        flagPending = true;
    }

    /** @return the text of a byte source, decoded strictly as UTF-8 (the stream is not closed) */
    static CsvText ofBytes(InputStream in) {
        return new CsvText(in, null);
    }

    /** @return the text of a character source (not closed); byte offsets are unknown */
    static CsvText ofChars(Reader in) {
        return new CsvText(null, in);
    }

    /** @return the number of characters scanned so far, after a leading byte order mark */
    long delivered() {
        return delivered;
    }

    /** @return whether the text opened with a byte order mark, which was skipped */
    boolean openedWithBom() {
        return openedWithBom;
    }

    @Override
    public int read(char[] cbuf, int off, int len) throws IOException {
        if (len == 0) {
            return 0;
        }
        while (!out.hasRemaining()) {
            if (!fill()) {
                return -1;
            }
        }
        int n = Math.min(len, out.remaining());
        out.get(cbuf, off, n);
        return n;
    }

    @Override
    public void close() {
        // The caller owns the source and closes it.
    }

    /**
     * The line where the record at a character position starts: the line holding that position, or
     * the first non-empty line after it (the parser skips empty lines and reports the position before
     * them). Lines before it are forgotten, so positions must not decrease from call to call.
     *
     * @param position the record's character position as the parser reports it
     * @return the 1-based line
     */
    long recordLine(long position) {
        int k = head;
        while (k + 1 < lines && (lineStarts[k + 1] & ~EMPTY) <= position) {
            k++;
        }
        while (k + 1 < lines && (lineStarts[k] & EMPTY) != 0) {
            k++;
        }
        headLine += k - head;
        head = k;
        return headLine;
    }

    /**
     * Notes that the parser has finished a record: the next record's length is counted from the
     * first non-empty line after it.
     *
     * @param finishedLines lines wholly read so far (as the parser counts them)
     */
    void recordEnded(long finishedLines) {
        recordStartLine = lineAfter(finishedLines);
        recordStart = lineStarts[head + (int) (recordStartLine - headLine)] & ~EMPTY;
    }

    /**
     * The line where a record starts that follows a given count of finished lines: the next line, or
     * the first non-empty line after it.
     *
     * @param finishedLines lines wholly read before the record (as the parser counts them)
     * @return the 1-based line
     */
    long lineAfter(long finishedLines) {
        long wanted = Math.max(finishedLines + 1, headLine);
        int k = (int) Math.min(head + (wanted - headLine), lines - 1L);
        while (k + 1 < lines && (lineStarts[k] & EMPTY) != 0) {
            k++;
        }
        return headLine + (k - head);
    }

    // ------------------------------------------------------------------ decoding

    /** Decodes and scans the next chunk into {@code out}; false at the end of the text. */
    private boolean fill() throws IOException {
        if (finished) {
            return false;
        }
        out.clear();
        long chunkByte = -1;
        if (bytes == null) {
            int n;
            do {
                n = chars.read(passThrough, 0, passThrough.length);
            } while (n == 0);
            if (n < 0) {
                return end();
            }
            out.put(passThrough, 0, n);
        } else {
            chunkByte = inBase + in.position();
            while (out.position() == 0) {
                CoderResult r = decoder.decode(in, out, endOfInput);
                if (r.isError()) {
                    out.flip();
                    scan(chunkByte, out.limit());
                    throw badByte(inBase + in.position(), in.position());
                }
                if (r.isOverflow()) {
                    break;
                }
                if (endOfInput) {
                    decoder.flush(out);
                    if (out.position() == 0) {
                        return end();
                    }
                    finished = true; // the decoder is flushed; these are the last characters
                    break;
                }
                readBytes();
            }
        }
        out.flip();
        out.position(scan(chunkByte, out.limit()));
        if (finished) {
            finish();
        }
        if (delivered - recordStart > MAX_RECORD_CHARS) {
            throw new Refusal(recordStartLine, "reading stopped: the record starting here is longer than "
                    + String.format(Locale.ROOT, "%,d", MAX_RECORD_CHARS) + " characters (an unclosed quote, or a"
                    + " file that is not a table?); expected shorter records");
        }
        return true;
    }

    private void readBytes() throws IOException {
        inBase += in.position();
        in.compact();
        int n = bytes.read(in.array(), in.position(), in.remaining());
        if (n < 0) {
            endOfInput = true;
        } else {
            in.position(in.position() + n);
        }
        in.flip();
    }

    /** Marks the end of the text, with nothing left to hand out; returns false. */
    private boolean end() {
        out.position(0).limit(0);
        finish();
        return false;
    }

    private void finish() {
        finished = true;
        if (pendingCr) {
            pendingCr = false;
            newLine(delivered);
        }
    }

    /**
     * Checks and counts the characters out[0, limit): line starts, the leading byte order mark, NUL
     * and byte order marks inside. Returns the index of the first character to hand out (1 after a
     * leading byte order mark, else 0).
     *
     * @param chunkByte the file offset of out[0], or -1 for a character source
     */
    private int scan(long chunkByte, int limit) throws Refusal {
        char[] a = out.array();
        int start = 0;
        if (first && limit > 0) {
            first = false;
            if (a[0] == BOM) {
                start = 1;
                openedWithBom = true;
            }
        }
        for (int i = start; i < limit; i++) {
            char ch = a[i];
            if (pendingCr) {
                pendingCr = false;
                if (ch == '\n') {
                    delivered++;
                    newLine(delivered);
                    continue;
                }
                newLine(delivered);
            }
            if (flagPending) {
                flagPending = false;
                if (ch == '\n' || ch == '\r') {
                    lineStarts[lines - 1] |= EMPTY;
                }
            }
            if (ch < 0x20) {
                if (ch == '\n') {
                    delivered++;
                    newLine(delivered);
                    continue;
                }
                if (ch == '\r') {
                    delivered++;
                    pendingCr = true;
                    continue;
                }
                if (ch == 0) {
                    throw new Refusal(line, where(chunkByte, a, i) + "a NUL character (byte 0x00): the file"
                            + " looks like UTF-16 text or binary data; expected UTF-8 text");
                }
            } else if (ch >= Character.MIN_LOW_SURROGATE) {
                if (ch == BOM) {
                    throw new Refusal(line, where(chunkByte, a, i) + "a byte order mark (U+FEFF) inside the text;"
                            + " it may only open the file, once (were two files joined?)");
                }
                if (ch <= Character.MAX_LOW_SURROGATE) {
                    delivered++; // the second half of a supplementary character: no new column
                    continue;
                }
            }
            column++;
            delivered++;
        }
        return start;
    }

    /** Starts a new line at a character position; its first character will say whether it is empty. */
    private void newLine(long position) {
        line++;
        column = 0;
        if (lines == lineStarts.length) {
            if (head > 0) {
                System.arraycopy(lineStarts, head, lineStarts, 0, lines - head);
                lines -= head;
                head = 0;
            } else {
                lineStarts = Arrays.copyOf(lineStarts, 2 * lines);
            }
        }
        lineStarts[lines++] = position;
        flagPending = true;
    }

    /** "column C (byte offset B): " for the character a[i] of a chunk that starts at file offset chunkByte. */
    private String where(long chunkByte, char[] a, int i) {
        String s = "column " + (column + 1);
        if (chunkByte >= 0) {
            s += " (byte offset " + (chunkByte + utf8Length(a, 0, i)) + ")";
        }
        return s + ": ";
    }

    private Refusal badByte(long offset, int index) {
        if (pendingCr) { // the bad byte is not '\n', so a line ended at the '\r' before it
            pendingCr = false;
            newLine(delivered);
        }
        int b = in.get(index) & 0xff;
        String where = "column " + (column + 1) + " (byte offset " + offset + "): ";
        if (offset == 0 && in.limit() - index >= 2) {
            int b2 = in.get(index + 1) & 0xff;
            if ((b == 0xff && b2 == 0xfe) || (b == 0xfe && b2 == 0xff)) {
                return new Refusal(line, where + String.format(Locale.ROOT, "the file starts with the UTF-16 byte"
                        + " order mark 0x%02X 0x%02X; expected UTF-8 text (save the file as UTF-8)", b, b2));
            }
        }
        int need = b >= 0xf0 && b <= 0xf4 ? 4 : b >= 0xe0 && b <= 0xef ? 3 : b >= 0xc2 && b <= 0xdf ? 2 : 0;
        String what = endOfInput && need > in.limit() - index
                ? String.format(Locale.ROOT, "the file ends inside the UTF-8 sequence that byte 0x%02X starts", b)
                : String.format(Locale.ROOT, "byte 0x%02X is not valid UTF-8 here", b);
        return new Refusal(line, where + what + "; expected UTF-8 text (a Latin-1 or Windows-1252 export?"
                + " save the file as UTF-8)");
    }

    /** The UTF-8 length of valid text a[from, to) (RFC 3629, section 3). */
    private static long utf8Length(char[] a, int from, int to) {
        long n = 0;
        for (int i = from; i < to; i++) {
            char ch = a[i];
            n += ch < 0x80 ? 1 : ch < 0x800 ? 2 : Character.isSurrogate(ch) ? 2 : 3;
        }
        return n;
    }
}
