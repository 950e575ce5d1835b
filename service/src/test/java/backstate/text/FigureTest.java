package backstate.text;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/** Rounding to three significant digits, half away from zero as BigDecimal's HALF_UP (common practice, no source). */
class FigureTest {
    @Test
    void three_significant_digits_plain_between_a_thousandth_and_a_million() {
        assertEquals("10.9", Figure.of(10.897888775031998));
        assertEquals("0.5", Figure.of(0.5));
        assertEquals("4", Figure.of(3.9988851203902813));
        assertEquals("-0.707", Figure.of(-Math.sqrt(0.5)));
        assertEquals("0.00123", Figure.of(0.0012345));
        assertEquals("575000", Figure.of(574641.664011454));
        assertEquals("1000", Figure.of(999.96));
        assertEquals("0", Figure.of(0.0));
        assertEquals("0", Figure.of(-0.0));
    }

    @Test
    void powers_of_ten_outside_that_range() {
        assertEquals("5.75e6", Figure.of(5746416.64011454));
        assertEquals("1.2e-7", Figure.of(1.2e-7));
        assertEquals("-3e-4", Figure.of(-0.0003));
        assertEquals("NaN", Figure.of(Double.NaN));
        assertEquals("Infinity", Figure.of(Double.POSITIVE_INFINITY));
    }

    /** The shortest round-trip decimal (Java's Double.toString digits), written without an exponent. */
    @Test
    void plain_writes_the_shortest_decimal_without_powers_of_ten() {
        assertEquals("1796205660.25", Figure.plain(1.79620566025e9));
        assertEquals("0.0000001", Figure.plain(1e-7));
        assertEquals("60", Figure.plain(60.0));
        assertEquals("-0.5", Figure.plain(-0.5));
        assertEquals("100000000000000000000", Figure.plain(1e20));
        assertEquals("NaN", Figure.plain(Double.NaN));
    }

    @Test
    void exact_keeps_every_digit_and_drops_a_whole_number_s_point_zero() {
        assertEquals("3600", Figure.exact(3600.0));
        assertEquals("0.25", Figure.exact(0.25));
        assertEquals("12345", Figure.exact(12345.0));
        assertEquals("-60", Figure.exact(-60.0));
        assertEquals("1.0E20", Figure.exact(1e20));
    }
}
