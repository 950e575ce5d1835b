package backstate.formats;

/**
 * Reads the common short decimal numbers of a CSV cell straight from its ASCII bytes, with the
 * same result as {@link Double#parseDouble}, and declines everything else (returns NaN) so the
 * caller takes the general path.
 *
 * <p>Accepted: {@code [-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?} — the trace CSV grammar — with at
 * most {@link #MAX_DIGITS} significant digits, a mantissa below 2^53 and a decimal scale within
 * ±{@link #MAX_EXACT_POWER}. Then the digits form an exact integer M and 10^|e| is an exact
 * double, so one IEEE multiplication or division gives the correctly rounded value, which is what
 * {@code parseDouble} returns: the exact case of Clinger, "How to Read Floating Point Numbers
 * Accurately", PLDI 1990 (cited from memory, section not checked). {@code CsvFastPathTest}
 * compares it with {@code parseDouble} bit for bit.
 */
final class PlainDecimal {
    /** Significant digits that always fit a long. */
    private static final int MAX_DIGITS = 18;
    /** 2^53: every integer up to it is an exact double. */
    private static final long MAX_EXACT_MANTISSA = 1L << 53;
    /** 10^22 is the largest power of ten that is an exact double. */
    private static final int MAX_EXACT_POWER = ExactPowersOfTen.MAX;
    /** Exponent digits read here; a longer exponent goes the general way. */
    private static final int MAX_EXPONENT_DIGITS = 4;

    private PlainDecimal() {
    }

    /**
     * The value of {@code bytes[from, to)} when it is a plain decimal this class reads exactly;
     * NaN when it is not (not a decimal at all, or one for the general path).
     */
    static double parse(byte[] bytes, int from, int to) {
        int i = from;
        boolean negative = false;
        if (i < to && (bytes[i] == '-' || bytes[i] == '+')) {
            negative = bytes[i] == '-';
            i++;
        }
        int digitsFrom = i;
        i = skipZeros(bytes, i, to);
        int significantFrom = i;
        long mantissa = 0;
        int d;
        for (; i < to && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
            mantissa = mantissa * 10 + d;
        }
        int significant = i - significantFrom;
        int digits = i - digitsFrom;
        int fractionDigits = 0;
        if (i < to && bytes[i] == '.') {
            int fractionFrom = ++i;
            if (mantissa == 0) {
                i = skipZeros(bytes, i, to);
            }
            int fractionSignificantFrom = i;
            for (; i < to && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
                mantissa = mantissa * 10 + d;
            }
            significant += i - fractionSignificantFrom;
            fractionDigits = i - fractionFrom;
            digits += fractionDigits;
        }
        // Past MAX_DIGITS the mantissa may have wrapped around: declined before it is used.
        if (digits == 0 || significant > MAX_DIGITS) {
            return Double.NaN;
        }
        int exponent = 0;
        if (i < to) {
            if (bytes[i] != 'e' && bytes[i] != 'E') {
                return Double.NaN;
            }
            i++;
            boolean negativeExponent = false;
            if (i < to && (bytes[i] == '-' || bytes[i] == '+')) {
                negativeExponent = bytes[i] == '-';
                i++;
            }
            int exponentDigits = to - i;
            if (exponentDigits == 0 || exponentDigits > MAX_EXPONENT_DIGITS) {
                return Double.NaN;
            }
            for (; i < to; i++) {
                int b = bytes[i];
                if (b < '0' || b > '9') {
                    return Double.NaN;
                }
                exponent = exponent * 10 + (b - '0');
            }
            exponent = negativeExponent ? -exponent : exponent;
        }
        double value;
        if (mantissa == 0) {
            value = 0.0;
        } else {
            int scale = exponent - fractionDigits;
            if (mantissa > MAX_EXACT_MANTISSA || scale > MAX_EXACT_POWER || scale < -MAX_EXACT_POWER) {
                return Double.NaN;
            }
            value = scale >= 0 ? mantissa * ExactPowersOfTen.of(scale) : mantissa / ExactPowersOfTen.of(-scale);
        }
        return negative ? -value : value;
    }

    /** The index of the first byte at or after i that is not '0'. */
    private static int skipZeros(byte[] bytes, int i, int to) {
        while (i < to && bytes[i] == '0') {
            i++;
        }
        return i;
    }
}
