package backstate.formats;

/**
 * One column of a stored trace (format 2): a kind byte, the length of the body as an int, then
 * the body: the values as raw big-endian doubles, or decimal-delta: a scale S, a base mantissa, and
 * one code a sample in {@link BitBlocks}. The length lets a reader open every column at once and
 * fill the trace's rows block by block ({@link ColumnarSamples}).
 *
 * <p>Decimal-delta: every value v other than NaN and −0.0 is, bit for bit, {@code (double) M / 10^S}
 * for an integer |M| < 2^53 and the column's one S in 0..{@value #MAX_SCALE}; that division of two
 * exact doubles is the correctly rounded value of the decimal M·10^−S (the exact case of Clinger,
 * "How to Read Floating Point Numbers Accurately", PLDI 1990, from memory), the same operation as
 * {@link PlainDecimal}'s fast path, so a value read from decimal text comes back as it was parsed.
 * Body: S (1 byte), zigzag(B) as a varint where B is the first mantissa (0 if none), then blocks of
 * {@value BitBlocks#BLOCK} samples. With D = M − M_prev (M_prev the last M given, B at the start),
 * a block is zigzag(L) as a varint, L the least D in the block (0 if none), then its codes in
 * {@link BitBlocks}: {@value #MISSING} for NaN (missing), {@value #NEGATIVE_ZERO} for −0.0, else
 * 2 + D − L (frame of reference per block: a constant time step costs 2 bits a sample). Encoding
 * checks every value against the decode division and writes the column raw when one fails or when
 * raw is shorter. Every sample costs at least one bit, so a payload's length bounds the arrays its
 * header asks for.
 *
 * <p>NaN payload bits are kept by the raw kind only; decimal-delta gives back {@link Double#NaN},
 * which is all a trace's "missing" needs ({@code Double.isNaN} is the only test made of it).
 */
final class StoredColumn {
    static final int RAW = 0;
    static final int DECIMAL_DELTA = 1;
    /** Kind byte and body length. */
    static final int HEADER_BYTES = 1 + Integer.BYTES;
    /** The largest scale whose 10^S is an exact double. */
    static final int MAX_SCALE = ExactPowersOfTen.MAX;
    /** Below 2^53 every integer is an exact double, so M converts to double without rounding. */
    static final long MANTISSA_BOUND = 1L << 53;
    /** Differences of two mantissas are below 2^54 in size. */
    static final long LEAST_BOUND = 1L << 54;
    static final long MISSING = 0;
    static final long NEGATIVE_ZERO = 1;
    /** Codes from here on carry a difference of mantissas. */
    static final long FIRST_DELTA_CODE = 2;
    /** No M gives the value at the scale tried; not a mantissa, since |M| < 2^53. */
    private static final long NO_MANTISSA = Long.MIN_VALUE;
    /** Marks in the encoder's mantissa scratch for the values carried by an escape code (beyond 2^53, so no M). */
    private static final long MISSING_MARK = Long.MAX_VALUE;
    private static final long NEGATIVE_ZERO_MARK = Long.MAX_VALUE - 1;
    /** 10^0 … 10^15 as longs; 10^16 > 2^53, so no non-zero mantissa survives a larger factor. */
    private static final long[] LONG_POWERS = new long[16];

    static {
        LONG_POWERS[0] = 1;
        for (int i = 1; i < LONG_POWERS.length; i++) {
            LONG_POWERS[i] = LONG_POWERS[i - 1] * 10;
        }
    }

    private StoredColumn() {
    }

    /**
     * Writes {@code values[0, n)} as the shorter of decimal-delta (when every value passes) and raw;
     * the base and each block's least difference are zigzag base-128 varints as in Protocol
     * Buffers' encoding documentation (from memory). {@code mantissas} is scratch of at least n.
     */
    static void write(ByteSink out, double[] values, long[] mantissas, int n) {
        write(out, new double[][] {values}, mantissas, n);
    }

    /**
     * {@link #write(ByteSink, double[], long[], int)} for values held in segments: value k is in the
     * first segments in order, each used whole but the last (a {@link DoubleColumn}'s layout).
     */
    static void write(ByteSink out, double[][] segments, long[] mantissas, int n) {
        int scale = scaleAndMantissas(segments, n, mantissas);
        int start = out.size();
        if (scale >= 0) {
            out.put(DECIMAL_DELTA);
            out.putInt(0);
            out.put(scale);
            writeBlocks(out, mantissas, n);
            if (out.size() - start <= HEADER_BYTES + (long) Double.BYTES * n) {
                out.putIntAt(start + 1, out.size() - start - HEADER_BYTES);
                return;
            }
            out.truncate(start);
        }
        out.put(RAW);
        out.putInt(Double.BYTES * n);
        for (int k = 0, s = 0; k < n; s++) {
            double[] segment = segments[s];
            for (int i = 0, count = Math.min(segment.length, n - k); i < count; i++, k++) {
                out.putDouble(segment[i]);
            }
        }
    }

    /**
     * Reads a column's kind and length, and claims its body: the returned cursor gives its values
     * a block at a time. Unknown kinds, scales out of range and lengths beyond the payload are
     * refused here.
     */
    static Cursor open(ByteSource in) {
        int kind = in.get();
        if (kind != RAW && kind != DECIMAL_DELTA) {
            throw new IllegalStateException("stored trace column: got kind " + kind + ", expected " + RAW + " (raw) or "
                    + DECIMAL_DELTA + " (decimal-delta)");
        }
        ByteSource body = in.slice(in.getInt());
        if (kind == RAW) {
            return new Cursor(body, -1, 0);
        }
        int scale = body.get();
        if (scale > MAX_SCALE) {
            throw new IllegalStateException("stored trace column: got decimal scale " + scale + ", expected 0.." + MAX_SCALE);
        }
        long base = unzigzag(body.getVarLong());
        if (base >= MANTISSA_BOUND || base <= -MANTISSA_BOUND) {
            throw new IllegalStateException("stored trace column: got a base mantissa of " + base + ", expected |M| < 2^53");
        }
        return new Cursor(body, scale, base);
    }

    /**
     * The smallest S at which every value but NaN and −0.0 has a mantissa, with those mantissas
     * (and marks for NaN and −0.0) in {@code mantissas[0, n)}; −1 when no S up to {@link #MAX_SCALE}
     * serves. Each value is checked once, by the decode division, at the scale reached so far; when
     * one needs a larger S, the mantissas before it are multiplied by 10^ΔS, which needs no new
     * check: M·10^Δ / 10^(S+Δ) is the same rational number as M / 10^S, so the division rounds to
     * the same double, as long as |M·10^Δ| stays below 2^53 (worked out, no source).
     */
    static int scaleAndMantissas(double[] values, int n, long[] mantissas) {
        return scaleAndMantissas(new double[][] {values}, n, mantissas);
    }

    private static int scaleAndMantissas(double[][] segments, int n, long[] mantissas) {
        int scale = 0;
        for (int k = 0, s = 0; k < n; s++) {
            double[] segment = segments[s];
            for (int i = 0, count = Math.min(segment.length, n - k); i < count; i++, k++) {
                double v = segment[i];
                long m;
                if (v != v) {
                    m = MISSING_MARK;
                } else if (Double.doubleToRawLongBits(v) == Long.MIN_VALUE) {
                    m = NEGATIVE_ZERO_MARK;
                } else {
                    m = mantissa(v, scale);
                    if (m == NO_MANTISSA) {
                        int from = scale;
                        do {
                            if (++scale > MAX_SCALE) {
                                return -1;
                            }
                            m = mantissa(v, scale);
                        } while (m == NO_MANTISSA);
                        if (!rescale(mantissas, k, scale - from)) {
                            return -1;
                        }
                    }
                }
                mantissas[k] = m;
            }
        }
        return scale;
    }

    /** Multiplies {@code mantissas[0, count)} by 10^digits; false when one would reach 2^53. */
    private static boolean rescale(long[] mantissas, int count, int digits) {
        long factor = digits < LONG_POWERS.length ? LONG_POWERS[digits] : 0;
        long largest = factor == 0 ? 0 : (MANTISSA_BOUND - 1) / factor;
        for (int j = 0; j < count; j++) {
            long m = mantissas[j];
            if (m >= MANTISSA_BOUND || m == 0) {
                continue;   // a mark, or zero, which stays zero
            }
            if (Math.abs(m) > largest) {
                return false;
            }
            mantissas[j] = m * factor;
        }
        return true;
    }

    /** The base, then each block's least difference and codes; turns {@code mantissas} into codes on the way. */
    private static void writeBlocks(ByteSink out, long[] mantissas, int n) {
        long previous = 0;
        for (int k = 0; k < n; k++) {
            if (mantissas[k] < MANTISSA_BOUND) {
                previous = mantissas[k];
                break;
            }
        }
        out.putVarLong(zigzag(previous));
        for (int from = 0; from < n; from += BitBlocks.BLOCK) {
            int end = Math.min(n, from + BitBlocks.BLOCK);
            long least = Long.MAX_VALUE;
            for (int k = from; k < end; k++) {
                long m = mantissas[k];
                if (m < MANTISSA_BOUND) {
                    mantissas[k] = m - previous;    // |D| < 2^54: still below the marks
                    least = Math.min(least, m - previous);
                    previous = m;
                }
            }
            least = least == Long.MAX_VALUE ? 0 : least;
            for (int k = from; k < end; k++) {
                long d = mantissas[k];
                mantissas[k] = d == MISSING_MARK ? MISSING : d == NEGATIVE_ZERO_MARK ? NEGATIVE_ZERO : FIRST_DELTA_CODE + d - least;
            }
            out.putVarLong(zigzag(least));
            BitBlocks.writeBlock(out, mantissas, from, end - from);
        }
    }

    /**
     * An integer M, |M| < 2^53, with {@code (double) M / 10^scale} bit for bit {@code v}, or
     * {@link #NO_MANTISSA}. The rounded product v·10^scale is within 1.5 of such an M when one
     * exists (v is within half an ulp of M/10^S, the product adds half an ulp; from working it
     * through, no source), so M is its nearest integer or one either side.
     */
    static long mantissa(double v, int scale) {
        double near = Math.rint(v * ExactPowersOfTen.of(scale));
        if (!(Math.abs(near) <= MANTISSA_BOUND)) {   // 2^53 itself: M = 2^53 − 1 may still be one below it
            return NO_MANTISSA;
        }
        long m = (long) near;
        long bits = Double.doubleToRawLongBits(v);
        if (gives(m, scale, bits)) {
            return m;
        }
        if (gives(m - 1, scale, bits)) {
            return m - 1;
        }
        return gives(m + 1, scale, bits) ? m + 1 : NO_MANTISSA;
    }

    private static boolean gives(long m, int scale, long bits) {
        return m < MANTISSA_BOUND && m > -MANTISSA_BOUND && Double.doubleToRawLongBits(value(m, scale)) == bits;
    }

    /** Zigzag: 0, −1, 1, −2 … to 0, 1, 2, 3 …, so small differences of either sign make small codes (Protocol Buffers' sint encoding). */
    static long zigzag(long v) {
        return (v << 1) ^ (v >> (Long.SIZE - 1));
    }

    /** The inverse of {@link #zigzag}. */
    static long unzigzag(long z) {
        return (z >>> 1) ^ -(z & 1);
    }

    /** The value a decimal-delta column gives back for mantissa M at a scale: the decode division itself. */
    static double value(long mantissa, int scale) {
        return mantissa / ExactPowersOfTen.of(scale);
    }

    /**
     * The values of one column, a block at a time, written straight into the trace's row-major
     * arrays. Each decimal value is M / 10^S, Clinger 1990's exact case.
     */
    static final class Cursor {
        private final ByteSource body;
        /** −1 for a raw column. */
        private final int scale;
        private final BitBlocks.Reader blocks = new BitBlocks.Reader();
        private long mantissa;

        private Cursor(ByteSource body, int scale, long base) {
            this.body = body;
            this.scale = scale;
            this.mantissa = base;
        }

        /** The next {@code count} values (samples {@code from} on) into {@code into[at]}, {@code into[at + stride]}, … */
        void next(int count, double[] into, int at, int stride, int from) {
            if (scale < 0) {
                body.getDoubles(into, at, count, stride);
                return;
            }
            long least = unzigzag(body.getVarLong());
            if (least >= LEAST_BOUND || least <= -LEAST_BOUND) {
                throw new IllegalStateException("stored trace column: got a least difference of " + least + " in the block from sample "
                        + from + ", expected one below 2^54");
            }
            blocks.next(body, count);
            long offset = least - FIRST_DELTA_CODE;
            double power = ExactPowersOfTen.of(scale);
            long m = mantissa;
            // Each step is within [least, least + 2^w]; when a block of such steps cannot take M to 2^53
            // no step is checked (the common case), else each is (|M| < 2^53 and |D| < 2^57: none wraps).
            long widest = Math.min(MANTISSA_BOUND, Math.max(Math.abs(least), Math.abs(least + (1L << blocks.width()))));
            boolean checkEach = Math.abs(m) + widest * BitBlocks.BLOCK >= MANTISSA_BOUND;
            for (int t = 0, o = at; t < count; t++, o += stride) {
                long code = blocks.code(t);
                if (code >= FIRST_DELTA_CODE) {
                    m += code + offset;
                    if (checkEach && (m >= MANTISSA_BOUND || m <= -MANTISSA_BOUND)) {
                        throw new IllegalStateException("stored trace column: got a mantissa of " + m + " at sample "
                                + (from + t) + ", expected |M| < 2^53");
                    }
                    into[o] = m / power;
                } else {
                    into[o] = code == MISSING ? Double.NaN : -0.0;
                }
            }
            mantissa = m;
        }

        /** Refuses a body with bytes left over once every sample is read. */
        void finish() {
            if (body.remaining() != 0) {
                throw new IllegalStateException("stored trace column: got " + body.remaining()
                        + " bytes after the last sample, expected none");
            }
        }
    }
}
