package backstate.formats;

import static backstate.formats.TraceCodecTest.CODEC;
import static backstate.formats.TraceCodecTest.assertSameTrace;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.Trace;
import java.io.UncheckedIOException;
import java.math.BigDecimal;
import java.util.Arrays;
import java.util.SplittableRandom;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.statistics.Statistics;
import net.jqwik.api.statistics.StatisticsReport;
import net.jqwik.api.constraints.IntRange;
import net.jqwik.api.constraints.LongRange;

/**
 * Generated traces through {@link TraceCodec}: every value back bit for bit in both formats, the
 * decimal-delta decode against the JDK's {@code Double.parseDouble}, and damaged payloads refused
 * cleanly. Traces are built from a seed, so a failure names the seed that reproduces it.
 */
class TraceCodecPropertyTest {
    /** Values with no short decimal form, or at the edges of one (IEEE 754 facts, from memory). */
    private static final double[] ODD = {-0.0, 0.0, Double.MIN_VALUE, -Double.MIN_VALUE, Double.MIN_NORMAL,
        2.2250738585072009E-308, Double.MAX_VALUE, -Double.MAX_VALUE, 0.1 + 0.2, 1e22, 1e23, 1e-22, 9007199254740993.0,
        9007199254740992.0, 4.35, 2.675, 1e-300, -123456.789e200};
    private static final double[] NAN_PAYLOADS = {Double.NaN, Double.longBitsToDouble(0x7ff0000000000001L),
        Double.longBitsToDouble(0xfff8000000000000L), Double.longBitsToDouble(0x7fffffffffffffffL)};

    @Property(tries = 600)
    @StatisticsReport(StatisticsReport.StatisticsReportMode.OFF)
    void generated_traces_come_back_bit_for_bit(@ForAll long seed, @ForAll @IntRange(min = 1, max = 400) int n,
                                               @ForAll @IntRange(max = 3) int p, @ForAll @IntRange(max = 3) int m) {
        ParsedTrace parsed = trace(new SplittableRandom(seed), n, p, m);
        byte[] stored = CODEC.encode(parsed);
        assertSameTrace(parsed, CODEC.decode(stored));
        int v1 = TraceCodecV1Oracle.encode(CODEC, parsed).length;
        assertTrue(stored.length <= v1 + StoredColumn.HEADER_BYTES * (1 + p + m), "never more than format 1 and a column header a column");
        for (int kind : columnKinds(stored, 1 + p + m)) {
            Statistics.label("column kind").collect(kind == StoredColumn.RAW ? "raw" : "decimal-delta");
        }
        Statistics.label("column kind").coverage(check -> {
            check.check("raw").percentage(share -> share > 10);
            check.check("decimal-delta").percentage(share -> share > 40);
        });
    }

    @Property(tries = 200)
    void format_1_bytes_of_generated_traces_decode_alike(@ForAll long seed, @ForAll @IntRange(min = 1, max = 200) int n,
                                                         @ForAll @IntRange(max = 3) int p, @ForAll @IntRange(max = 3) int m) {
        ParsedTrace parsed = trace(new SplittableRandom(seed), n, p, m);
        assertSameTrace(parsed, CODEC.decode(TraceCodecV1Oracle.encode(CODEC, parsed)));
    }

    /**
     * Outside reference: {@code Double.parseDouble} of the decimal text M·10^−S, which the JDK
     * documents as correctly rounded, equals the decode division for every |M| < 2^53, S ≤ 22.
     */
    @Property(tries = 5000)
    void decimal_decode_is_parseDouble_of_the_decimal_text(@ForAll @LongRange(min = -(1L << 53) + 1, max = (1L << 53) - 1) long mantissa,
                                                           @ForAll @IntRange(max = StoredColumn.MAX_SCALE) int scale) {
        String text = BigDecimal.valueOf(mantissa, scale).toString();
        double parsed = Double.parseDouble(text);
        assertEquals(Double.doubleToRawLongBits(parsed), Double.doubleToRawLongBits(StoredColumn.value(mantissa, scale)), text);
        long found = StoredColumn.mantissa(parsed, scale);
        assertEquals(Double.doubleToRawLongBits(parsed), Double.doubleToRawLongBits(StoredColumn.value(found, scale)),
                text + ": the encoder finds a mantissa for every value so made");
    }

    @Property(tries = 1500)
    void damaged_payloads_decode_or_fail_cleanly(@ForAll long seed, @ForAll @IntRange(min = 1, max = 60) int n,
                                                 @ForAll @IntRange(max = 2) int p, @ForAll @IntRange(max = 2) int m,
                                                 @ForAll boolean format1) {
        SplittableRandom random = new SplittableRandom(seed);
        ParsedTrace parsed = trace(random, n, p, m);
        byte[] stored = format1 ? TraceCodecV1Oracle.encode(CODEC, parsed) : CODEC.encode(parsed);
        byte[] bad = damage(random, stored);
        // Any other throwable (OutOfMemoryError, NegativeArraySizeException, an index out of bounds) fails the property.
        try {
            CODEC.decode(bad);
        } catch (IllegalStateException e) {
            assertTrue(e.getMessage().startsWith("stored trace"), e.getMessage());
        } catch (UncheckedIOException e) {
            assertTrue(e.getCause() != null, "an IOException underneath");
        }
    }

    // ---- generated traces

    private enum Kind { DECIMAL, WIDE_DECIMAL, ARBITRARY, DECIMAL_AND_ODD }

    /** A valid trace: increasing times, outputs with missing runs and lone gaps, finite inputs, random σ and options. */
    static ParsedTrace trace(SplittableRandom r, int n, int p, int m) {
        double[] times = times(r, n);
        double[] y = new double[n * p];
        double[] u = new double[n * m];
        for (int j = 0; j < p; j++) {
            fill(r, y, j, p, n, true);
        }
        for (int i = 0; i < m; i++) {
            fill(r, u, i, m, n, false);
        }
        double[] sigma = null;
        if (r.nextBoolean()) {
            sigma = new double[p];
            for (int j = 0; j < p; j++) {
                sigma[j] = r.nextInt(3) == 0 ? Double.NaN : 0.01 + r.nextDouble();
            }
        }
        TraceOptions[] options = {TraceOptions.NONE, new TraceOptions("continuous", true, 60.0, null),
            new TraceOptions(null, false, null, new TraceOptions.PriorDocument(new double[] {1.5, -0.0},
                new double[][] {{1, 0.1 + 0.2}, {0.3, Double.MIN_VALUE}}))};
        return new ParsedTrace(new Trace(times, y, u, p, m, sigma), options[r.nextInt(options.length)]);
    }

    /** Decimal times on a 0–3 digit grid (now and then starting at −0), or arbitrary increasing doubles. */
    private static double[] times(SplittableRandom r, int n) {
        double[] t = new double[n];
        if (r.nextBoolean()) {
            int scale = r.nextInt(4);
            long mantissa = r.nextLong(-1_000_000, 1_000_000);
            long step = 1 + r.nextLong(r.nextBoolean() ? 1 : 100_000);
            for (int k = 0; k < n; k++) {
                t[k] = decimal(mantissa, scale);
                mantissa += r.nextInt(8) == 0 ? 1 + r.nextLong(10 * step) : step;
            }
            if (r.nextInt(8) == 0) {
                t[0] = -0.0;
            }
        } else {
            t[0] = r.nextBoolean() ? (r.nextDouble() - 0.5) * 1e12 : ODD[r.nextInt(ODD.length)] / 2;
            for (int k = 1; k < n; k++) {
                t[k] = r.nextBoolean() ? Math.nextUp(t[k - 1]) : t[k - 1] + Math.abs(t[k - 1]) * 1e-9 + r.nextDouble();
            }
        }
        for (int k = 1; k < n; k++) {
            if (!(t[k] > t[k - 1])) {
                t[k] = Math.nextUp(t[k - 1]);
            }
        }
        return t;
    }

    /** One column of a row-major array: one kind of values, and for outputs NaN in runs and alone. */
    private static void fill(SplittableRandom r, double[] a, int column, int stride, int n, boolean missing) {
        Kind kind = Kind.values()[r.nextInt(Kind.values().length)];
        int scale = kind == Kind.WIDE_DECIMAL ? r.nextInt(StoredColumn.MAX_SCALE + 1) : r.nextInt(4);
        long mantissa = kind == Kind.WIDE_DECIMAL ? r.nextLong(-(1L << 53) + 1, 1L << 53) : r.nextLong(-100_000, 100_000);
        int gap = 0;
        for (int k = 0; k < n; k++) {
            double v;
            if (kind == Kind.ARBITRARY) {
                v = r.nextInt(4) == 0 ? ODD[r.nextInt(ODD.length)] : Double.longBitsToDouble(r.nextLong());
                if (!Double.isFinite(v)) {
                    v = r.nextGaussian();
                }
            } else {
                v = decimal(mantissa, scale);
                mantissa = kind == Kind.WIDE_DECIMAL ? r.nextLong(-(1L << 53) + 1, 1L << 53) : mantissa + r.nextLong(-500, 501);
                if (r.nextInt(20) == 0) {
                    v = r.nextBoolean() ? -0.0 : 0.0;
                } else if (kind == Kind.DECIMAL_AND_ODD && r.nextInt(n) == 0) {
                    v = ODD[r.nextInt(ODD.length)];
                }
            }
            if (missing) {
                if (gap == 0 && r.nextInt(30) == 0) {
                    gap = 1 + r.nextInt(r.nextBoolean() ? 1 : 40);
                }
                if (gap > 0) {
                    gap--;
                    v = NAN_PAYLOADS[r.nextInt(NAN_PAYLOADS.length)];
                }
            }
            a[k * stride + column] = v;
        }
    }

    /** The double a CSV cell "M·10^−S" parses to. */
    private static double decimal(long mantissa, int scale) {
        return Double.parseDouble(BigDecimal.valueOf(mantissa, scale).toString());
    }

    /** The kind byte of each column of format-2 bytes, read by walking the layout. */
    private static int[] columnKinds(byte[] stored, int columns) {
        ByteSource in = new ByteSource(stored);
        in.get();
        in.getInt();
        in.getInt();
        in.getInt();
        int[] kinds = new int[columns];
        for (int c = 0; c < columns; c++) {
            kinds[c] = in.get();
            in.take(in.getInt());
        }
        return kinds;
    }

    /** A cut, a few flipped bits, a changed byte run, or a header size set to a random int. */
    private static byte[] damage(SplittableRandom r, byte[] stored) {
        byte[] bad = stored.clone();
        switch (r.nextInt(4)) {
            case 0 -> bad = Arrays.copyOf(stored, r.nextInt(stored.length));
            case 1 -> {
                for (int i = 1 + r.nextInt(3); i > 0; i--) {
                    bad[r.nextInt(bad.length)] ^= (byte) (1 << r.nextInt(Byte.SIZE));
                }
            }
            case 2 -> {
                int at = r.nextInt(bad.length);
                for (int i = at; i < Math.min(bad.length, at + 1 + r.nextInt(12)); i++) {
                    bad[i] = (byte) r.nextInt(256);
                }
            }
            default -> {
                int field = 1 + Integer.BYTES * r.nextInt(3);
                int value = r.nextBoolean() ? r.nextInt() : r.nextInt(-2, 1000);
                for (int i = 0; i < Integer.BYTES; i++) {
                    bad[field + i] = (byte) (value >>> (Integer.SIZE - Byte.SIZE * (i + 1)));
                }
            }
        }
        return bad;
    }
}
