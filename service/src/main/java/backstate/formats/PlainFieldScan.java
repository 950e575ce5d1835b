package backstate.formats;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteOrder;

/**
 * Finds the first byte that ends or complicates a plain CSV field, eight bytes at a time: a comma,
 * a quote, any byte up to U+0020 (CR, LF, tab, space and the other controls) or a non-ASCII byte.
 *
 * <p>Each long read from the bytes (little-endian, so the lowest byte comes first) is tested with
 * the "has a byte less than n" and "has a zero byte" expressions of Anderson's <i>Bit Twiddling
 * Hacks</i> (Stanford, section "Determine if a word has a byte less than n"): {@code (x - n·0x01…)
 * & ~x & 0x80…} marks every byte below n, and may also mark bytes above the first marked one (a
 * borrow carries upward) but never one below it, so the lowest mark is exact. A zero byte of
 * {@code x ^ ','·0x01…} is a comma. {@code PlainFieldScanTest} compares it with a byte-by-byte loop.
 */
final class PlainFieldScan {
    private static final VarHandle LONGS = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);
    private static final long ONES = 0x0101_0101_0101_0101L;
    private static final long HIGH_BITS = 0x8080_8080_8080_8080L;
    /** Bytes below this are controls or the space: never inside a plain field. */
    private static final int FIRST_PLAIN = '!';

    private PlainFieldScan() {
    }

    /** The first index in {@code [from, to)} whose byte is not plain; {@code to} when all are. */
    static int nextSpecial(byte[] bytes, int from, int to) {
        int i = from;
        for (; i <= to - Long.BYTES; i += Long.BYTES) {
            long marks = specialMarks((long) LONGS.get(bytes, i));
            if (marks != 0) {
                return i + (Long.numberOfTrailingZeros(marks) >>> 3);
            }
        }
        for (; i < to; i++) {
            if (isSpecial(bytes[i])) {
                return i;
            }
        }
        return to;
    }

    /** True for a byte {@link #nextSpecial} stops at. */
    static boolean isSpecial(byte b) {
        return b < FIRST_PLAIN || b == ',' || b == '"'; // non-ASCII bytes are negative
    }

    /** The high bit of each special byte of x is set, exactly so for the lowest; maybe others above it. */
    private static long specialMarks(long x) {
        long below = (x - ONES * FIRST_PLAIN) & ~x;
        long commas = x ^ (ONES * ',');
        long quotes = x ^ (ONES * '"');
        return (below | ((commas - ONES) & ~commas) | ((quotes - ONES) & ~quotes) | x) & HIGH_BITS;
    }
}
