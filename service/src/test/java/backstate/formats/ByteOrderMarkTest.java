package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;

import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * {@link TraceReader#withoutByteOrderMark} drops exactly a leading EF BB BF and passes every other
 * body through byte for byte: checked on every body of up to five bytes over the alphabet of the
 * mark's three bytes and two others (3 906 bodies), read back whole.
 */
class ByteOrderMarkTest {
    private static final byte[] MARK = {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF};
    private static final byte[] ALPHABET = {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF, 't', '\n'};

    @Test
    void only_a_leading_mark_is_dropped_and_every_other_byte_is_kept() throws IOException {
        for (byte[] body : bodies(5)) {
            byte[] expected = startsWithMark(body) ? Arrays.copyOfRange(body, MARK.length, body.length) : body;
            byte[] read = TraceReader.withoutByteOrderMark(new ByteArrayInputStream(body)).readAllBytes();
            assertArrayEquals(expected, read, () -> "body " + Arrays.toString(body));
        }
    }

    private static boolean startsWithMark(byte[] body) {
        return body.length >= MARK.length && body[0] == MARK[0] && body[1] == MARK[1] && body[2] == MARK[2];
    }

    /** Every byte string of length 0 … maxLength over {@link #ALPHABET}. */
    private static List<byte[]> bodies(int maxLength) {
        List<byte[]> all = new ArrayList<>();
        all.add(new byte[0]);
        List<byte[]> last = List.of(new byte[0]);
        for (int length = 1; length <= maxLength; length++) {
            List<byte[]> next = new ArrayList<>();
            for (byte[] prefix : last) {
                for (byte b : ALPHABET) {
                    byte[] longer = Arrays.copyOf(prefix, length);
                    longer[length - 1] = b;
                    next.add(longer);
                }
            }
            all.addAll(next);
            last = next;
        }
        return all;
    }
}
