package backstate.formats;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Streams records from RFC 4180 CSV text in UTF-8: comma separated, optional double quotes with
 * "" as an escaped quote, CRLF, LF or CR line ends. Holds one record at a time.
 *
 * <p>Works on bytes, read in blocks: the structural characters (comma, quote, CR, LF) are ASCII,
 * and no UTF-8 sequence contains an ASCII byte, so records split the same as over decoded text.
 * A field's bytes are kept as they are (after unquoting) and decoded only when asked for as text
 * ({@link #text}) — the numeric cells of a trace never become Strings. Malformed UTF-8 decodes to
 * U+FFFD, as the decoding reader this replaces did, and field lengths are counted in decoded
 * characters.
 *
 * <p>A record that lies whole in the block and has only plain fields (no quote, no blank or control
 * byte, no non-ASCII byte: nearly every record of a trace) is read in place: its fields are
 * ranges of the block, nothing copied. A field that starts with a plain decimal is read as a number
 * on the way ({@link PlainDecimal#readPrefix}, {@link #decimal}), so a numeric cell is passed over
 * once; the end of any other field is found eight bytes at a time ({@link PlainFieldScan}). Any
 * other record is read by the byte loop, which also words every refusal.
 */
final class CsvRecords {
    /** Longest field accepted; numbers and names are far shorter, so a longer one is hostile input. */
    static final int MAX_FIELD_LENGTH = 256;
    /** A UTF-8 sequence (well-formed or not) decodes to at least one char per 4 bytes, so more bytes than this are too long. */
    private static final int MAX_FIELD_BYTES = 4 * MAX_FIELD_LENGTH;
    static final int BLOCK_BYTES = 64 * 1024;
    private static final int EOF = -1;

    private final InputStream in;
    private final int maxFields;
    /** Fields the record being read may have: {@code headerFields} for the first, {@code maxFields} after. */
    private int fieldLimit;
    private final byte[] block;
    private int position;
    private int filled;
    private boolean ended;
    private long line;
    private long recordLine;

    /** The current record's fields, unquoted, back to back in {@code content}, unless read in place. */
    private byte[] content = new byte[256];
    /** Where the current record's fields are: {@code content}, or {@code block} for a record read in place. */
    private byte[] fieldBytes = content;
    private int contentLength;
    private final int[] starts;
    private final int[] ends;
    private final boolean[] ascii;
    private final double[] values;
    private final PlainDecimal decimals = new PlainDecimal();
    private int fields;

    /**
     * @param headerFields fields the first record (the header) may have; more than {@code maxFields}
     *                     lets the caller name a header's extra columns instead of only counting them
     * @param maxFields    fields every later record may have
     */
    CsvRecords(InputStream in, int headerFields, int maxFields) {
        this(in, headerFields, maxFields, 1);
    }

    /** Records from a stream whose first byte is on line {@code firstLine}, each with at most {@code maxFields} fields. */
    CsvRecords(InputStream in, int maxFields, long firstLine) {
        this(in, maxFields, maxFields, firstLine);
    }

    /**
     * Records from {@code bytes[from, to)}, read where they lie (nothing copied), each with at most
     * {@code maxFields} fields; the byte at {@code from} is on line {@code firstLine}.
     */
    CsvRecords(byte[] bytes, int from, int to, int maxFields, long firstLine) {
        this(null, maxFields, maxFields, firstLine, bytes);
        this.position = from;
        this.filled = to;
        this.ended = true;
    }

    private CsvRecords(InputStream in, int headerFields, int maxFields, long firstLine) {
        this(in, headerFields, maxFields, firstLine, new byte[BLOCK_BYTES]);
    }

    /** Records read through a block of {@code blockBytes} (tests cut tiny blocks, so records cross their edges everywhere). */
    static CsvRecords inBlocksOf(int blockBytes, InputStream in, int headerFields, int maxFields) {
        return new CsvRecords(in, headerFields, maxFields, 1, new byte[blockBytes]);
    }

    private CsvRecords(InputStream in, int headerFields, int maxFields, long firstLine, byte[] block) {
        this.in = in;
        this.block = block;
        this.line = firstLine;
        this.recordLine = firstLine;
        this.maxFields = maxFields;
        this.fieldLimit = headerFields;
        int capacity = Math.max(headerFields, maxFields);
        this.starts = new int[capacity];
        this.ends = new int[capacity];
        this.ascii = new boolean[capacity];
        this.values = new double[capacity];
    }

    /** Line number where the record last returned started. */
    long line() {
        return recordLine;
    }

    /** Line number of the next byte to be read: one more than the line ends passed so far. */
    long nextLine() {
        return line;
    }

    /**
     * True when every byte of the input is in hand: the block holds the rest of the input, read
     * to its end. The block is filled whole ({@link #fill}), so this depends on the input's length,
     * not on how a network stream delivers it.
     */
    boolean inputInHand() {
        return ended;
    }

    /** The bytes read from the input but not yet consumed; the input goes on after them. */
    byte[] unconsumed() {
        return Arrays.copyOfRange(block, position, filled);
    }

    /** Reads the next record; false at the end of input. A blank line ends nothing and is skipped. */
    boolean next() throws IOException {
        while (true) {
            int c = peek();
            if (c == EOF) {
                return false;
            }
            if (c != '\r' && c != '\n') {
                recordLine = line;
                record();
                fieldLimit = maxFields;
                return true;
            }
            position++;
            consumeLineEnd(c);
        }
    }

    /** Fields in the current record. */
    int size() {
        return fields;
    }

    /** Field i decoded (malformed UTF-8 as U+FFFD). */
    String text(int i) {
        return new String(fieldBytes, starts[i], ends[i] - starts[i], StandardCharsets.UTF_8);
    }

    /** Every field of the current record, decoded. */
    List<String> texts() {
        List<String> out = new ArrayList<>(fields);
        for (int i = 0; i < fields; i++) {
            out.add(text(i));
        }
        return out;
    }

    /**
     * Field i, blanks around it dropped, as a plain decimal in {@link PlainDecimal}'s exact case
     * (read with the record when it was read in place); NaN when it is not one, and the caller
     * reads the field's text itself.
     */
    double decimal(int i) {
        double v = values[i];
        if (!Double.isNaN(v) || !ascii[i]) {
            return v;
        }
        return decimals.read(fieldBytes, trimmedStart(i), trimmedEnd(i));
    }

    /** True when field i is empty or only characters up to U+0020. */
    boolean isBlank(int i) {
        return trimmedEnd(i) <= trimmedStart(i);
    }

    /** Where field i starts once characters up to U+0020 are dropped ({@link String#trim}'s rule; in UTF-8 they are single ASCII bytes). */
    private int trimmedStart(int i) {
        int from = starts[i];
        while (from < ends[i] && (fieldBytes[from] & 0xFF) <= ' ') {
            from++;
        }
        return from;
    }

    /** Where field i ends once trailing characters up to U+0020 are dropped; at or before {@link #trimmedStart} when it is blank. */
    private int trimmedEnd(int i) {
        int to = ends[i];
        while (to > starts[i] && (fieldBytes[to - 1] & 0xFF) <= ' ') {
            to--;
        }
        return to;
    }

    private void record() throws IOException {
        if (plainRecord()) {
            fieldBytes = block;
            return;
        }
        fields = 0;
        contentLength = 0;
        int fieldStart = 0;
        boolean fieldAscii = true;
        boolean quoted = false;
        boolean wasQuoted = false;
        while (true) {
            if (!quoted && !wasQuoted) {
                scanPlainRun(fieldStart, fieldAscii);
            }
            int c = read();
            if (quoted) {
                if (c == EOF) {
                    requireLength(fieldStart, fieldAscii);
                    throw new InputException("line " + line, "got end of input inside a quoted field, expected a closing quote");
                }
                if (c == '"') {
                    if (peek() == '"') {
                        position++;
                        fieldAscii = append(fieldStart, fieldAscii, '"');
                        continue;
                    }
                    quoted = false;
                    continue;
                }
                fieldAscii = append(fieldStart, fieldAscii, c);
                continue;
            }
            if (c == '"' && contentLength == fieldStart && !wasQuoted) {
                quoted = true;
                wasQuoted = true;
                continue;
            }
            if (c == ',' || c == '\r' || c == '\n' || c == EOF) {
                endField(fieldStart, fieldAscii);
                fieldStart = contentLength;
                fieldAscii = true;
                wasQuoted = false;
                if (c == ',') {
                    continue;
                }
                if (c != EOF) {
                    consumeLineEnd(c);
                }
                fieldBytes = content;
                return;
            }
            if (wasQuoted) {
                requireLength(fieldStart, fieldAscii);
                throw new InputException("line " + line, "got text after a closing quote, expected a comma or line end");
            }
            fieldAscii = append(fieldStart, fieldAscii, c);
        }
    }

    /**
     * Reads the record at the read position in place when it ends in the block with a line end and
     * its fields are plain, no longer than {@value #MAX_FIELD_LENGTH} and no more than the limit;
     * otherwise consumes nothing and returns false, and the byte loop reads (or refuses) it.
     */
    private boolean plainRecord() {
        byte[] b = block;
        int end = filled;
        int from = position;
        for (int n = 0; n < fieldLimit; n++) {
            double v = decimals.readPrefix(b, from, end);
            int at = decimals.stop(); // every byte before it is plain: a digit, sign, point or E
            if (at < end && !PlainFieldScan.isSpecial(b[at])) {
                v = Double.NaN; // the field goes on after a decimal's bytes: not a number
                at = PlainFieldScan.nextSpecial(b, at, end);
            }
            if (at == end || at - from > MAX_FIELD_LENGTH) {
                return false;
            }
            starts[n] = from;
            ends[n] = at;
            ascii[n] = true;
            values[n] = v;
            if (b[at] == ',') {
                from = at + 1;
                continue;
            }
            int next = lineEndAfter(b, at, end);
            if (next < 0) {
                return false;
            }
            position = next;
            fields = n + 1;
            line++;
            return true;
        }
        return false;
    }

    /** Where the record after a line end at {@code at} starts (past CRLF, CR or LF); -1 when b[at] is no line end or CR is the block's last byte. */
    private static int lineEndAfter(byte[] b, int at, int end) {
        if (b[at] == '\n') {
            return at + 1;
        }
        if (b[at] != '\r' || at + 1 == end) {
            return -1;
        }
        return b[at + 1] == '\n' ? at + 2 : at + 1;
    }

    /**
     * Takes the run of plain bytes at the read position in one copy: ASCII other than comma, quote,
     * CR and LF, up to the end of the block. The byte-by-byte loop then sees only what ends or
     * changes a field, and a run that would make the field too long is left to it, so it refuses
     * the field at the same byte and line as before.
     */
    private void scanPlainRun(int fieldStart, boolean fieldAscii) {
        int from = position;
        int to = from;
        byte[] b = block;
        int end = filled;
        while (to < end) {
            byte x = b[to];
            if (x == ',' || x == '\n' || x == '\r' || x == '"' || x < 0) {
                break;
            }
            to++;
        }
        int run = to - from;
        if (run == 0 || contentLength - fieldStart + run > (fieldAscii ? MAX_FIELD_LENGTH : MAX_FIELD_BYTES)) {
            return;
        }
        if (contentLength + run > content.length) {
            content = Arrays.copyOf(content, Math.max(content.length * 2, contentLength + run));
        }
        System.arraycopy(b, from, content, contentLength, run);
        contentLength += run;
        position = to;
    }

    /** Adds a byte to the field begun at fieldStart; returns whether the field is still ASCII. */
    private boolean append(int fieldStart, boolean fieldAscii, int c) {
        int length = contentLength - fieldStart;
        boolean stillAscii = fieldAscii && c < 0x80;
        // An ASCII field is as long as its bytes; otherwise the bytes only bound the characters.
        if (stillAscii ? length == MAX_FIELD_LENGTH : length == MAX_FIELD_BYTES) {
            throw tooLong();
        }
        if (contentLength == content.length) {
            content = Arrays.copyOf(content, content.length * 2);
        }
        content[contentLength++] = (byte) c;
        return stillAscii;
    }

    private void endField(int fieldStart, boolean fieldAscii) {
        requireLength(fieldStart, fieldAscii);
        if (fields == fieldLimit) {
            throw new InputException("line " + line, "got more than " + fieldLimit + " fields, expected at most " + fieldLimit);
        }
        starts[fields] = fieldStart;
        ends[fields] = contentLength;
        ascii[fields] = fieldAscii;
        values[fields] = Double.NaN;
        fields++;
    }

    /** A non-ASCII field's length in characters is known once its bytes are complete. */
    private void requireLength(int fieldStart, boolean fieldAscii) {
        if (!fieldAscii && new String(content, fieldStart, contentLength - fieldStart, StandardCharsets.UTF_8).length()
                > MAX_FIELD_LENGTH) {
            throw tooLong();
        }
    }

    private InputException tooLong() {
        return new InputException("line " + line, "got a field longer than " + MAX_FIELD_LENGTH + " characters");
    }

    private void consumeLineEnd(int c) throws IOException {
        if (c == '\r' && peek() == '\n') {
            position++;
        }
        line++;
    }

    private int read() throws IOException {
        if (position == filled && !fill()) {
            return EOF;
        }
        return block[position++] & 0xFF;
    }

    private int peek() throws IOException {
        if (position == filled && !fill()) {
            return EOF;
        }
        return block[position] & 0xFF;
    }

    /** Refills the block from the input, as full as the input allows; false at its end. */
    private boolean fill() throws IOException {
        if (ended) {
            return false;
        }
        int n = readFully(in, block, 0, block.length);
        ended = n < block.length;
        position = 0;
        filled = n;
        return n > 0;
    }

    /**
     * Reads into {@code bytes[from, from + length)} until it is full or the input ends; the bytes
     * read. {@link InputStream#readNBytes(byte[], int, int)} promises the same, but a subclass that
     * narrows {@code read} may inherit an override that reads once.
     */
    static int readFully(InputStream in, byte[] bytes, int from, int length) throws IOException {
        int n = 0;
        while (n < length) {
            int got = in.read(bytes, from + n, length - n);
            if (got < 0) {
                break;
            }
            n += got;
        }
        return n;
    }
}
