package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import org.junit.jupiter.api.Test;

/**
 * {@link PlainDecimal#readPrefix}'s short route against its general route ({@link PlainDecimal#readAny},
 * which {@code CsvFastPathTest} holds to {@code Double.parseDouble} bit for bit): the same value, bit
 * for bit, and the same stop, on every string up to a length over the bytes the grammar turns on
 * (each array exactly the string's length, so a read past the limit would fail), and on digit runs
 * on both sides of the short route's limit.
 */
class PlainDecimalPathsTest {
    /** Every byte the grammar distinguishes: digits (zero apart), point, both signs, both E's, a separator, other text. */
    private static final byte[] ALL = "019.-+eE,x".getBytes(StandardCharsets.US_ASCII);
    /** Fewer bytes, for longer strings: one of each kind. */
    private static final byte[] KINDS = "07.-e,".getBytes(StandardCharsets.US_ASCII);

    @Test
    void every_string_of_up_to_six_bytes_reads_alike() {
        assertEquals(1_111_111, everyString(ALL, 6));
    }

    @Test
    void every_string_of_up_to_nine_bytes_of_one_byte_per_kind_reads_alike() {
        assertEquals(12_093_235, everyString(KINDS, 9));
    }

    /** The longest digit runs the short route takes, and the first it hands on, with the point at every place. */
    @Test
    void digit_runs_around_the_short_limit_read_alike() {
        String digits = "98765432109876543210";
        for (int n = 1; n <= digits.length(); n++) {
            for (int point = 0; point <= n; point++) {
                for (String sign : new String[] {"", "-", "+"}) {
                    for (String after : new String[] {"", ",", "e5", "E-2,", ".", "5x"}) {
                        assertReadAlike(sign + digits.substring(0, point) + "." + digits.substring(point, n) + after);
                        assertReadAlike(sign + "0".repeat(point) + digits.substring(0, n - point) + after);
                    }
                }
            }
        }
    }

    /** Compares the two routes on every string of 0 to maxLength bytes from the alphabet; returns how many. */
    private static int everyString(byte[] alphabet, int maxLength) {
        int count = 0;
        for (int length = 0; length <= maxLength; length++) {
            int[] digits = new int[length];
            byte[] bytes = new byte[length];
            while (true) {
                for (int k = 0; k < length; k++) {
                    bytes[k] = alphabet[digits[k]];
                }
                assertReadAlike(bytes);
                count++;
                int k = length - 1;
                while (k >= 0 && ++digits[k] == alphabet.length) {
                    digits[k--] = 0;
                }
                if (k < 0) {
                    break;
                }
            }
        }
        return count;
    }

    private static void assertReadAlike(String text) {
        assertReadAlike(text.getBytes(StandardCharsets.US_ASCII));
    }

    private static void assertReadAlike(byte[] bytes) {
        PlainDecimal shortRoute = new PlainDecimal();
        PlainDecimal general = new PlainDecimal();
        double fast = shortRoute.readPrefix(bytes, 0, bytes.length);
        double expected = general.readAny(bytes, 0, bytes.length);
        if (Double.doubleToRawLongBits(fast) != Double.doubleToRawLongBits(expected) || shortRoute.stop() != general.stop()) {
            String text = new String(bytes, StandardCharsets.US_ASCII);
            assertEquals(expected + " stop " + general.stop(), fast + " stop " + shortRoute.stop(), text);
            assertTrue(false, text + ": NaN or zero with other bits");
        }
    }
}
