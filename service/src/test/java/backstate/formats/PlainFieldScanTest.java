package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * {@link PlainFieldScan} against the rule it implements, applied one byte at a time: the first byte
 * that is a comma, a quote, at most U+0020 or non-ASCII (RFC 4180's separators, and what the CSV
 * reader leaves to its byte loop).
 */
class PlainFieldScanTest {
    /** Bytes at and around every boundary of the rule, where a word-at-a-time test could slip. */
    private static final int[] EDGES = {0x00, 0x01, 0x09, 0x0A, 0x0D, 0x1F, 0x20, 0x21, 0x22, 0x23, 0x2B, 0x2C, 0x2D, 0x2E, 0x30,
        0x39, 0x45, 0x65, 0x7E, 0x7F, 0x80, 0x81, 0xA0, 0xC3, 0xFE, 0xFF};

    @Test
    void every_byte_value_is_found_at_every_place_of_a_word() {
        for (int value = 0; value <= 0xFF; value++) {
            for (int at = 0; at < 24; at++) {
                byte[] bytes = filled(24, (byte) '5');
                bytes[at] = (byte) value;
                for (int from = 0; from <= at; from++) {
                    assertScansAlike(bytes, from, bytes.length);
                    assertScansAlike(bytes, from, at);
                }
            }
        }
    }

    @Test
    void the_first_special_byte_wins_over_any_byte_after_it() {
        // Pairs: a borrow from the first byte may mark the next, never one before it.
        for (int first : EDGES) {
            for (int second = 0; second <= 0xFF; second++) {
                for (int at = 0; at < 15; at++) {
                    byte[] bytes = filled(16, (byte) '7');
                    bytes[at] = (byte) first;
                    bytes[at + 1] = (byte) second;
                    assertScansAlike(bytes, 0, bytes.length);
                }
            }
        }
    }

    @Test
    void seeded_random_words_scan_as_byte_by_byte() {
        SplittableRandom random = new SplittableRandom(20261202);
        for (int trial = 0; trial < 200_000; trial++) {
            byte[] bytes = new byte[1 + random.nextInt(40)];
            for (int i = 0; i < bytes.length; i++) {
                bytes[i] = (byte) (random.nextInt(4) == 0 ? EDGES[random.nextInt(EDGES.length)] : '0' + random.nextInt(10));
            }
            int from = random.nextInt(bytes.length + 1);
            assertScansAlike(bytes, from, from + random.nextInt(bytes.length - from + 1));
        }
    }

    private static void assertScansAlike(byte[] bytes, int from, int to) {
        assertEquals(byteByByte(bytes, from, to), PlainFieldScan.nextSpecial(bytes, from, to),
                () -> "from " + from + " to " + to + " in " + java.util.HexFormat.of().formatHex(bytes));
    }

    private static int byteByByte(byte[] bytes, int from, int to) {
        for (int i = from; i < to; i++) {
            int b = bytes[i] & 0xFF;
            if (b <= ' ' || b == ',' || b == '"' || b >= 0x80) {
                return i;
            }
        }
        return to;
    }

    private static byte[] filled(int length, byte b) {
        byte[] bytes = new byte[length];
        java.util.Arrays.fill(bytes, b);
        return bytes;
    }
}
