package backstate.formats;

/**
 * Reads the common short decimal numbers of a CSV cell straight from its ASCII bytes, with the
 * same result as {@link Double#parseDouble}, and declines everything else (returns NaN) so the
 * caller takes the general path.
 *
 * <p>Accepted: {@code [-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?} — the trace CSV grammar — with at
 * most {@link #MAX_DIGITS} significant digits, a mantissa of at most 2^53 and a decimal scale
 * within ±{@link #MAX_EXACT_POWER}. Then the digits form an exact integer M and 10^|e| is an exact
 * double, so one IEEE multiplication or division gives the correctly rounded value, which is what
 * {@code parseDouble} returns: the exact case of Clinger, "How to Read Floating Point Numbers
 * Accurately", PLDI 1990 (cited from memory, section not checked). {@code CsvFastPathTest}
 * compares it with {@code parseDouble} bit for bit.
 *
 * <p>An instance reads a decimal at the front of a run of bytes and remembers where it stopped
 * ({@link #readPrefix}, {@link #stop}), so the CSV reader can read a cell's number and find the
 * cell's end in one pass. It was kept over a library parser by measurement: {@code bench/codec.sh}
 * times it against {@code JavaDoubleParser} (fastdoubleparser) on the cells of a demo-like trace.
 *
 * <p>{@link #readPrefix} reads the common short form (at most {@value #MAX_SHORT_DIGITS} digits, no
 * exponent) on a short route: no zeros skipped, no range checks, one division; it hands any other
 * run to the general route, {@link #readAny}. {@code PlainDecimalPathsTest}
 * compares the two routes on every string of up to six bytes over every byte kind the grammar
 * distinguishes, and of up to nine over one byte of each kind.
 */
final class PlainDecimal {
    /** Significant digits that always fit a long. */
    private static final int MAX_DIGITS = 18;
    /** 2^53: every integer up to it is an exact double. */
    private static final long MAX_EXACT_MANTISSA = 1L << 53;
    /** 10^22 is the largest power of ten that is an exact double. */
    private static final int MAX_EXACT_POWER = ExactPowersOfTen.MAX;
    /**
     * Digits, leading zeros included, that {@link #readPrefix} reads without an exponent before it
     * takes {@link #readAny}: their integer is below 10^15 < 2^53, and 10^15 is an exact power of ten.
     */
    private static final int MAX_SHORT_DIGITS = 15;
    /** Exponent digits read here; a longer exponent goes the general way. */
    private static final int MAX_EXPONENT_DIGITS = 4;
    /** ASCII letters differ from their capitals in this bit only. */
    private static final int LOWER_CASE_BIT = 0x20;

    /** Where the last {@link #readPrefix} stopped. */
    private int stop;

    /**
     * The value of {@code bytes[from, to)} when it is a plain decimal this class reads exactly;
     * NaN when it is not (not a decimal at all, or one for the general path).
     */
    double read(byte[] bytes, int from, int to) {
        double v = readPrefix(bytes, from, to);
        return stop == to ? v : Double.NaN;
    }

    /**
     * Reads the longest run at {@code bytes[from]}, before {@code limit}, that the grammar can
     * continue (sign, digits, one point, an exponent), and returns its value when it is a plain
     * decimal this class reads exactly, else NaN. {@link #stop()} is then the index after the run,
     * every byte of which is a digit, a sign, a point or an E.
     */
    double readPrefix(byte[] bytes, int from, int limit) {
        int i = from;
        boolean negative = false;
        if (i < limit && (bytes[i] == '-' || bytes[i] == '+')) {
            negative = bytes[i] == '-';
            i++;
        }
        int digitsFrom = i;
        long mantissa = 0;
        int d;
        for (; i < limit && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
            mantissa = mantissa * 10 + d;
        }
        int point = i;
        if (i < limit && bytes[i] == '.') {
            for (i++; i < limit && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
                mantissa = mantissa * 10 + d;
            }
        }
        int fractionDigits = i > point ? i - point - 1 : 0;
        int digits = point - digitsFrom + fractionDigits;
        if (digits > MAX_SHORT_DIGITS || i < limit && (bytes[i] | LOWER_CASE_BIT) == 'e') {
            return readAny(bytes, from, limit);
        }
        stop = i;
        if (digits == 0) {
            return Double.NaN;
        }
        double m = mantissa / ExactPowersOfTen.of(fractionDigits); // both exact: one correctly rounded division
        return negative ? -m : m;
    }

    /** {@link #readPrefix} for any length and with an exponent: the general route, also the short route's oracle in tests. */
    double readAny(byte[] bytes, int from, int limit) {
        int i = from;
        boolean negative = false;
        if (i < limit && (bytes[i] == '-' || bytes[i] == '+')) {
            negative = bytes[i] == '-';
            i++;
        }
        int digitsFrom = i;
        i = skipZeros(bytes, i, limit);
        int significantFrom = i;
        long mantissa = 0;
        int d;
        for (; i < limit && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
            mantissa = mantissa * 10 + d;
        }
        int significant = i - significantFrom;
        int digits = i - digitsFrom;
        int fractionDigits = 0;
        if (i < limit && bytes[i] == '.') {
            int fractionFrom = ++i;
            if (mantissa == 0) {
                i = skipZeros(bytes, i, limit);
            }
            int fractionSignificantFrom = i;
            for (; i < limit && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
                mantissa = mantissa * 10 + d;
            }
            significant += i - fractionSignificantFrom;
            fractionDigits = i - fractionFrom;
            digits += fractionDigits;
        }
        int exponent = 0;
        boolean exponentRead = true;
        if (i < limit && (bytes[i] | LOWER_CASE_BIT) == 'e') {
            i++;
            boolean negativeExponent = false;
            if (i < limit && (bytes[i] == '-' || bytes[i] == '+')) {
                negativeExponent = bytes[i] == '-';
                i++;
            }
            int exponentFrom = i;
            for (; i < limit && (d = bytes[i] - '0') >= 0 && d <= 9; i++) {
                exponent = exponent * 10 + d;
            }
            exponentRead = i > exponentFrom && i - exponentFrom <= MAX_EXPONENT_DIGITS;
            exponent = negativeExponent ? -exponent : exponent;
        }
        stop = i;
        // Past MAX_DIGITS the mantissa, past MAX_EXPONENT_DIGITS the exponent, may have wrapped around: declined unused.
        if (digits == 0 || significant > MAX_DIGITS || !exponentRead) {
            return Double.NaN;
        }
        return negative ? -magnitude(mantissa, exponent - fractionDigits) : magnitude(mantissa, exponent - fractionDigits);
    }

    /** Where the last {@link #readPrefix} stopped: the index after the bytes it read. */
    int stop() {
        return stop;
    }

    /** mantissa · 10^scale, correctly rounded; NaN when that needs more than one exact operation. */
    private static double magnitude(long mantissa, int scale) {
        if (mantissa == 0) {
            return 0.0;
        }
        if (mantissa > MAX_EXACT_MANTISSA || scale > MAX_EXACT_POWER || scale < -MAX_EXACT_POWER) {
            return Double.NaN;
        }
        return scale >= 0 ? mantissa * ExactPowersOfTen.of(scale) : mantissa / ExactPowersOfTen.of(-scale);
    }

    /** The index of the first byte at or after i that is not '0'. */
    private static int skipZeros(byte[] bytes, int i, int limit) {
        while (i < limit && bytes[i] == '0') {
            i++;
        }
        return i;
    }
}
