package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Doubles written by the service's mapper (Jackson's shortest-digits writer) read back as the
 * same bits through {@code Double.parseDouble}, the JDK's correctly rounded reader, and are never
 * longer than {@code Double.toString}'s digits.
 */
class JsonDoublesTest {
    private final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);

    @Test
    void edge_values_round_trip_bit_for_bit() throws Exception {
        double[] edges = {0.0, -0.0, Double.MIN_VALUE, -Double.MIN_VALUE, Double.MIN_NORMAL, Double.MAX_VALUE,
            1e23, 9.999999999999999e22, 2e-3, 0.1, 1.0 / 3, 5e-324, 1e-7, 1e7, 123456789.0, 4.35, 2.0e-13,
            Math.nextUp(1.0), Math.nextDown(1.0), Math.PI, -Math.E};
        for (double v : edges) {
            assertRoundTrip(v);
        }
    }

    @Test
    void random_bit_patterns_round_trip_bit_for_bit() throws Exception {
        SplittableRandom random = new SplittableRandom(20261202);
        for (int i = 0; i < 200_000; i++) {
            double v = Double.longBitsToDouble(random.nextLong());
            if (Double.isFinite(v)) {
                assertRoundTrip(v);
            }
        }
    }

    private void assertRoundTrip(double v) throws Exception {
        String written = mapper.writeValueAsString(v);
        assertEquals(Double.doubleToRawLongBits(v), Double.doubleToRawLongBits(Double.parseDouble(written)), written);
        assertTrue(digits(written) <= digits(Double.toString(v)), written + " against " + Double.toString(v));
    }

    /** Significant digits of a decimal as Java writes it (mantissa digits, leading zeros dropped). */
    private static int digits(String decimal) {
        String mantissa = decimal.replace("-", "").split("[eE]")[0].replace(".", "").replaceFirst("^0+", "");
        return mantissa.replaceFirst("0+$", "").length();
    }
}
