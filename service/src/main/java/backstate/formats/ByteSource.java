package backstate.formats;

import java.io.EOFException;
import java.io.UncheckedIOException;

/**
 * Reads a stored payload front to back, the reverse of {@link ByteSink}. Every read checks the
 * remaining length first, so bad or truncated bytes end in an {@link UncheckedIOException}
 * (payload ends early) or an {@link IllegalStateException} (a varint too long), never in a read
 * past the end.
 */
final class ByteSource {
    /** A varint of more bytes than this cannot hold a value below 2^63: the payload is corrupt. */
    private static final int MAX_VARINT_BYTES = 9;

    private final byte[] bytes;
    private final int end;
    private int position;

    ByteSource(byte[] bytes) {
        this(bytes, 0, bytes.length);
    }

    private ByteSource(byte[] bytes, int from, int end) {
        this.bytes = bytes;
        this.position = from;
        this.end = end;
    }

    int position() {
        return position;
    }

    int remaining() {
        return end - position;
    }

    /** The next {@code length} bytes as a source of their own, which cannot read past them. */
    ByteSource slice(int length) {
        int from = take(length);
        return new ByteSource(bytes, from, from + length);
    }

    /** The whole payload array, for a reader that has claimed a range with {@link #take}. */
    byte[] bytes() {
        return bytes;
    }

    /** Claims the next {@code length} bytes and returns where they start. */
    int take(int length) {
        need(length);
        int start = position;
        position += length;
        return start;
    }

    /** The next byte, 0..255. */
    int get() {
        need(1);
        return bytes[position++] & 0xFF;
    }

    int getInt() {
        need(Integer.BYTES);
        int v = 0;
        for (int i = 0; i < Integer.BYTES; i++) {
            v = (v << Byte.SIZE) | (bytes[position++] & 0xFF);
        }
        return v;
    }

    double getDouble() {
        return doubleAt(take(Double.BYTES));
    }

    /** The next {@code count} doubles into {@code into[at]}, {@code into[at + stride]}, …, one length check for all. */
    void getDoubles(double[] into, int at, int count, int stride) {
        for (int i = take(Double.BYTES * count), t = 0, o = at; t < count; t++, i += Double.BYTES, o += stride) {
            into[o] = doubleAt(i);
        }
    }

    /** The big-endian double at {@code at}, a position claimed with {@link #take}. */
    double doubleAt(int at) {
        return Double.longBitsToDouble((long) ByteSink.BIG_ENDIAN_LONG.get(bytes, at));
    }

    /** A base-128 varint as {@link ByteSink#putVarLong} writes it (Protocol Buffers' varint), at most 63 bits. */
    long getVarLong() {
        long v = 0;
        for (int i = 0; i < MAX_VARINT_BYTES; i++) {
            need(1);
            byte b = bytes[position++];
            v |= (long) (b & (ByteSink.VARINT_MORE - 1)) << (i * ByteSink.VARINT_PAYLOAD_BITS);
            if (b >= 0) {
                return v;
            }
        }
        throw new IllegalStateException("stored trace: got a varint longer than " + MAX_VARINT_BYTES
                + " bytes at offset " + position + ", expected at most " + MAX_VARINT_BYTES);
    }

    private void need(int count) {
        if (count < 0 || count > end - position) {
            throw endsEarly();
        }
    }

    static UncheckedIOException endsEarly() {
        return new UncheckedIOException(new EOFException("stored trace payload ends early"));
    }
}
