package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.Trace;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.HexFormat;
import java.util.List;
import java.util.SplittableRandom;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;

/**
 * {@link TraceCodec} and {@link StoredColumn} on chosen cases: the stored bytes of both formats
 * pinned against vectors made outside the code under test, the scale chosen, the sizes on
 * demo-like data, and refusals of bad bytes.
 */
class TraceCodecTest {
    static final ObjectMapper MAPPER = Json.mapper(Limits.DEFAULTS);
    static final TraceCodec CODEC = new TraceCodec(MAPPER);
    static final Path TEST_DATA = Path.of(System.getProperty("backstate.testData", "../test-data"));

    /**
     * Written by the format-1 encoder of commit 0226436 (the code before this change, run by hand)
     * for {@link #goldenTrace()}: format 1, n = 3, p = 2, m = 1, rows of big-endian doubles, the
     * two σ, then the options as writeUTF JSON.
     */
    static final String FORMAT_1_GOLDEN = "01000000030000000200000001"
            + "0000000000000000400599999999999a8000000000000000401999999999999a"
            + "404e0000000000007ff8000000000000bfe8000000000000403b0ccccccccccd"
            + "405e20000000000001a56e1fc2f8f3594028b0a3d70a3d713fd3333333333334"
            + "3fa999999999999a7ff8000000000000"
            + "0048" + hexOf("{\"formulation\":\"continuous\",\"estimateOffsets\":true,\"referenceTime\":60.0}");

    // ---- stored bytes, pinned

    @Test
    void format_1_bytes_from_the_old_encoder_still_decode() {
        ParsedTrace decoded = CODEC.decode(HexFormat.of().parseHex(FORMAT_1_GOLDEN));
        assertSameTrace(goldenTrace(), decoded);
        assertEquals(new TraceOptions("continuous", true, 60.0, null), decoded.options());
    }

    @Test
    void the_test_oracle_writes_the_old_encoders_bytes() {
        assertEquals(FORMAT_1_GOLDEN, HexFormat.of().formatHex(TraceCodecV1Oracle.encode(CODEC, goldenTrace())));
    }

    @Test
    void format_2_bytes_are_as_laid_out_by_hand() {
        // Time 0, 60, 120; output 2.7, missing, -0.0; input 6.4, 6.41, 6.4; σ 0.15; no options.
        Trace t = new Trace(new double[] {0, 60, 120}, new double[] {2.7, Double.NaN, -0.0}, new double[] {6.4, 6.41, 6.4},
                1, 1, new double[] {0.15});
        // Worked out by hand from the layout in StoredColumn's and BitBlocks' Javadoc (and again in a
        // few lines of Python as a calculator), not by running the encoder. Each decimal column: kind 1,
        // body length, S, varint zigzag(base B), then one block: varint zigzag(least difference L),
        // width w, codes 2 + D − L (0 missing, 1 −0.0) packed w bits each, low bits first.
        String expected = "02" + "00000003" + "00000001" + "00000001"
                + "01" + "00000007" + "00" + "00" + "00" + "06" + "82ef03"   // S 0, B 0, L 0; D 0, 60, 60: codes 2, 62, 62 at 6 bits = 0x03ef82
                + "01" + "00000005" + "01" + "36" + "00" + "02" + "12"       // S 1, B 27 (zz 54), L 0; codes 2, missing 0, −0.0 1 at 2 bits
                + "01" + "00000007" + "02" + "800a" + "01" + "03" + "a300"   // S 2, B 640 (zz 1280), L −1 (zz 1); D 0, 1, −1: codes 3, 4, 2 at 3 bits
                + "3fc3333333333333"                      // σ = 0.15 (IEEE 754 bits of 0.15, from memory)
                + "0002" + hexOf("{}");
        byte[] stored = CODEC.encode(new ParsedTrace(t, TraceOptions.NONE));
        assertEquals(expected, HexFormat.of().formatHex(stored));
        assertSameTrace(new ParsedTrace(t, TraceOptions.NONE), CODEC.decode(stored));
    }

    // ---- the column encoding

    @Test
    void the_smallest_scale_that_fits_every_value_is_chosen() {
        assertEquals(3, scale(12.345, 60, 0.5));
        assertEquals(0, scale(60, 120, -7, 0.0));
        assertEquals(1, scale(0.1, Double.NaN, -0.0));
        assertEquals(0, scale(Double.NaN, -0.0), "nothing needs a mantissa");
        assertEquals(17, scale(0.01234567890123456), "16 significant digits below 2^53 (1234567890123456 < 9.007e15)");
        assertEquals(22, scale(1e-22));
    }

    @Test
    void values_without_a_short_decimal_have_no_scale() {
        // 0.1 + 0.2 prints as 0.30000000000000004 (JDK Double.toString): 17 digits, M = 3.0e16 > 2^53.
        assertEquals("0.30000000000000004", Double.toString(0.1 + 0.2));
        for (double v : new double[] {0.1 + 0.2, 1e-300, Double.MIN_VALUE, 2.2250738585072009E-308, Double.MAX_VALUE,
            9007199254740994.0, 1e23, 1e-23, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY}) {
            assertEquals(-1, scale(2.5, v), Double.toString(v));
        }
    }

    @Test
    void a_column_with_one_value_off_the_decimal_grid_goes_raw_and_keeps_every_bit() {
        double[] column = {2.5, -0.0, Double.NaN, 1e-300, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY,
            Double.longBitsToDouble(0x7ff0000000000001L), Double.MIN_VALUE};
        byte[] stored = columnBytes(column);
        assertEquals(StoredColumn.RAW, stored[0]);
        assertEquals(StoredColumn.HEADER_BYTES + Double.BYTES * column.length, stored.length);
        double[] back = readColumn(stored, column.length);
        for (int k = 0; k < column.length; k++) {
            assertEquals(Double.doubleToRawLongBits(column[k]), Double.doubleToRawLongBits(back[k]), "raw keeps NaN payloads too, k = " + k);
        }
    }

    @Test
    void missing_values_and_negative_zero_keep_a_column_decimal() {
        double[] column = {-0.0, Double.NaN, 1.5, Double.NaN, Double.NaN, -0.0, 2.25, 0.0};
        byte[] stored = columnBytes(column);
        assertEquals(StoredColumn.DECIMAL_DELTA, stored[0]);
        assertEquals(2, stored[StoredColumn.HEADER_BYTES], "scale of 2.25");
        // S 2, B 150 (zz 300 = 0xac 0x02); D 0, 75, −225, so L −225 (zz 449 = 0xc1 0x03); codes 1, 0, 227, 0, 0, 1,
        // 302, 2 at 9 bits (302 < 2^9), 72 bits: worked out with Python as a calculator from the layout.
        assertEquals("01" + "0000000f" + "02" + "ac02" + "c103" + "09" + "01008c030020804b01", HexFormat.of().formatHex(stored));
        double[] back = readColumn(stored, column.length);
        for (int k = 0; k < column.length; k++) {
            assertEquals(Double.doubleToRawLongBits(column[k]), Double.doubleToRawLongBits(back[k]), "k = " + k);
        }
    }

    @Test
    void blocks_of_gaps_and_the_last_block_before_the_payload_end_come_back() {
        // 300 samples: blocks 0–127, 128–255, 256–299. The output is missing from 100 on except a −0.0 at 128,
        // so one block is all escape codes; with no σ and no options the time column's last codes sit
        // within 8 bytes of the payload's end, where the reader copies the block out before reading it.
        int n = 300;
        double[] times = new double[n];
        double[] y = new double[n];
        for (int k = 0; k < n; k++) {
            times[k] = 1_700_000_000 + 60.0 * k;
            y[k] = k < 100 ? (k % 7) * 0.25 - 0.5 : Double.NaN;
        }
        y[128] = -0.0;
        ParsedTrace withOutput = new ParsedTrace(new Trace(times, y, null, 1, 0, null), TraceOptions.NONE);
        ParsedTrace timeOnly = new ParsedTrace(new Trace(times, new double[0], null, 0, 0, null), TraceOptions.NONE);
        for (ParsedTrace parsed : List.of(withOutput, timeOnly)) {
            byte[] stored = CODEC.encode(parsed);
            assertSameTrace(parsed, CODEC.decode(stored));
            assertEquals(StoredColumn.DECIMAL_DELTA, stored[TraceCodec.HEADER_BYTES], "time column kind");
        }
    }

    @Test
    void decimals_whose_codes_outgrow_the_doubles_go_raw() {
        // Mantissas alternating between ±(2^53 − 1) at scale 16: each code takes 56 bits, and the base 8 bytes.
        double big = (double) (StoredColumn.MANTISSA_BOUND - 1) / 1e16;
        double[] column = {big, -big, big, -big};
        assertEquals(16, StoredColumn.scaleAndMantissas(column, column.length, new long[column.length]));
        assertEquals(StoredColumn.RAW, columnBytes(column)[0]);
    }

    @Test
    void zigzag_maps_small_differences_of_either_sign_to_small_codes() {
        // The mapping table of Protocol Buffers' encoding documentation (sint64), from memory.
        long[][] pairs = {{0, 0}, {-1, 1}, {1, 2}, {-2, 3}, {2147483647L, 4294967294L}, {-2147483648L, 4294967295L}};
        for (long[] pair : pairs) {
            assertEquals(pair[1], StoredColumn.zigzag(pair[0]));
            assertEquals(pair[0], StoredColumn.unzigzag(pair[1]));
        }
    }

    @Test
    void packed_codes_sit_at_bit_k_times_w_low_bits_first_for_every_width() {
        // The layout stated bit by bit: bit i of code k is stream bit k·w + i, bit b of the stream is bit b % 8 of byte b / 8.
        SplittableRandom random = new SplittableRandom(5);
        for (int width = 1; width <= BitBlocks.MAX_WIDTH; width++) {
            int count = 1 + random.nextInt(BitBlocks.BLOCK);
            long[] codes = new long[count];
            for (int k = 0; k < count; k++) {
                codes[k] = random.nextLong() >>> (Long.SIZE - width);
            }
            ByteSink sink = new ByteSink(8);
            BitBlocks.writeBlock(sink, codes, 0, count);
            byte[] bytes = sink.toByteArray();
            int used = Long.SIZE - Long.numberOfLeadingZeros(Arrays.stream(codes).reduce(0, (a, b) -> a | b));
            int w = Math.max(1, used);
            assertEquals(w, bytes[0], "width byte");
            assertEquals(1 + (count * w + 7) / 8, bytes.length, "width " + width);
            for (int k = 0; k < count; k++) {
                for (int i = 0; i < w; i++) {
                    int b = k * w + i;
                    assertEquals((codes[k] >>> i) & 1, (bytes[1 + b / 8] >>> (b % 8)) & 1, "code " + k + " bit " + i + " at width " + w);
                }
            }
            // Read back at the payload's end (the block copied out first) and with bytes after it (read in place).
            for (byte[] payload : List.of(bytes, Arrays.copyOf(bytes, bytes.length + Long.BYTES))) {
                BitBlocks.Reader reader = new BitBlocks.Reader();
                reader.next(new ByteSource(payload), count);
                for (int k = 0; k < count; k++) {
                    assertEquals(codes[k], reader.code(k), "read back, code " + k + " at width " + w);
                }
            }
        }
    }

    @Test
    void varints_are_base_128_low_group_first() {
        // 300 = 0b1_0010_1100 → 0xac 0x02: the worked example of Protocol Buffers' encoding documentation (from memory).
        ByteSink sink = new ByteSink(4);
        sink.putVarLong(300);
        sink.putVarLong(1);
        sink.putVarLong(Long.MAX_VALUE);
        byte[] bytes = sink.toByteArray();
        assertEquals("ac0201ffffffffffffffff7f", HexFormat.of().formatHex(bytes));
        ByteSource in = new ByteSource(bytes);
        assertEquals(300, in.getVarLong());
        assertEquals(1, in.getVarLong());
        assertEquals(Long.MAX_VALUE, in.getVarLong());
    }

    // ---- sizes on real values

    @Test
    void a_demo_like_trace_stores_in_under_13_percent_of_format_1() {
        // 1 000 one-minute samples of the demo model, outputs with 3 decimals and inputs with 2, as a gateway writes them.
        byte[] csv = new ReeferTraces(TEST_DATA).csv(1000, 7);
        ParsedTrace parsed = readCsv(csv);
        byte[] v1 = TraceCodecV1Oracle.encode(CODEC, parsed);
        byte[] v2 = CODEC.encode(parsed);
        assertEquals(13 + 8 * (1000 * 5 + 2) + 4, v1.length, "header, 5 columns × 1 000 doubles, 2 σ, \"{}\"");
        // Measured 4 974 bytes (12.4 %): time 2.7 bits a sample, outputs 11, inputs 6–8 (block headers included).
        assertTrue(v2.length * 100L <= v1.length * 13L, v2.length + " bytes against " + v1.length);
        ParsedTrace decoded = CODEC.decode(v2);
        assertSameTrace(parsed, decoded);
        // Outside reference: each decoded value is Double.parseDouble (the JDK) of its CSV cell, bit for bit.
        String[] rows = new String(csv, StandardCharsets.UTF_8).split("\n");
        for (int k = 0; k < 1000; k++) {
            String[] cells = rows[k + 1].split(",");
            assertEquals(5, cells.length, rows[k + 1]);
            double[] got = {decoded.trace().time(k), decoded.trace().output(k, 0), decoded.trace().output(k, 1),
                decoded.trace().input(k, 0), decoded.trace().input(k, 1)};
            for (int c = 0; c < cells.length; c++) {
                assertEquals(Double.doubleToRawLongBits(Double.parseDouble(cells[c])), Double.doubleToRawLongBits(got[c]),
                        "row " + k + " cell " + cells[c]);
            }
        }
    }

    @Test
    void the_demo_fleet_traces_shrink_and_come_back_whole() throws IOException {
        ModelDocument model = MAPPER.readValue(Files.readAllBytes(TEST_DATA.resolve("demo/models/reefer-40.v1.json")),
                ModelDocument.class);
        List<Path> files;
        try (Stream<Path> listing = Files.list(TEST_DATA.resolve("demo/traces"))) {
            files = listing.sorted().toList();
        }
        assertEquals(20, files.size(), "the demo fleet's 20 traces");
        long v1 = 0;
        long v2 = 0;
        for (Path file : files) {
            byte[] body = Files.readAllBytes(file);
            TraceReader reader = new TraceReader(Limits.DEFAULTS);
            ParsedTrace parsed = file.toString().endsWith(".json") ? reader.readJson(new ByteArrayInputStream(body), model)
                    : reader.readCsv(new ByteArrayInputStream(body), model, TraceOptions.NONE);
            byte[] stored = CODEC.encode(parsed);
            assertSameTrace(parsed, CODEC.decode(stored));
            v1 += TraceCodecV1Oracle.encode(CODEC, parsed).length;
            v2 += stored.length;
        }
        // Measured 36 084 bytes against 273 780 (13.2 %), gaps and irregular JSON times included.
        assertTrue(v2 * 100 <= v1 * 14, v2 + " bytes against " + v1);
    }

    @Test
    void a_trace_of_arbitrary_doubles_costs_five_bytes_a_column_more_than_format_1() {
        SplittableRandom random = new SplittableRandom(11);
        int n = 1000;
        double[] times = new double[n];
        double[] y = new double[2 * n];
        double[] u = new double[2 * n];
        times[0] = random.nextDouble();
        for (int k = 1; k < n; k++) {
            times[k] = times[k - 1] + random.nextDouble();
        }
        for (int i = 0; i < y.length; i++) {
            y[i] = random.nextGaussian();
            u[i] = random.nextGaussian();
        }
        ParsedTrace parsed = new ParsedTrace(new Trace(times, y, u, 2, 2, null), TraceOptions.NONE);
        byte[] v2 = CODEC.encode(parsed);
        assertEquals(TraceCodecV1Oracle.encode(CODEC, parsed).length + 5 * 5, v2.length, "a kind byte and a length for each of 5 columns");
        assertSameTrace(parsed, CODEC.decode(v2));
    }

    // ---- bad bytes

    @Test
    void header_sizes_beyond_the_payload_are_refused_before_allocating() {
        byte[] stored = CODEC.encode(goldenTrace());
        for (int[] sizes : new int[][] {{Integer.MAX_VALUE, 2, 1}, {3, Integer.MAX_VALUE, 1}, {3, 2, Integer.MAX_VALUE},
            {1 << 20, 1 << 20, 1 << 20}, {0, 2, 1}, {-3, 2, 1}, {3, -2, 1}, {3, 2, -1}, {2000, 0, 0}}) {
            byte[] bad = stored.clone();
            ByteBuffer.wrap(bad, 1, 12).putInt(sizes[0]).putInt(sizes[1]).putInt(sizes[2]);
            IllegalStateException e = assertThrows(IllegalStateException.class, () -> CODEC.decode(bad));
            assertTrue(e.getMessage().startsWith("stored trace header: got n = " + sizes[0] + ", p = " + sizes[1]), e.getMessage());
        }
    }

    @Test
    void a_format_1_header_must_fit_eight_bytes_a_value() {
        byte[] golden = HexFormat.of().parseHex(FORMAT_1_GOLDEN);
        ByteBuffer.wrap(golden, 1, 4).putInt(10);
        // 10 samples × 4 columns × 8 bytes + 2 σ × 8 + the 2-byte options length = 338.
        assertEquals("stored trace header: got n = 10, p = 2, m = 1 with 186 bytes left, expected n ≥ 1, p ≥ 0, m ≥ 0 and "
                + "338 bytes or more", assertThrows(IllegalStateException.class, () -> CODEC.decode(golden)).getMessage());
    }

    @Test
    void unknown_format_kind_scale_and_width_bytes_are_named() {
        byte[] stored = hand();
        assertEquals("stored trace format 3, expected 1 or 2", refused(stored, 0, 3));
        assertEquals("stored trace column: got kind 7, expected 0 (raw) or 1 (decimal-delta)", refused(stored, 13, 7));
        assertEquals("stored trace column: got decimal scale 23, expected 0..22", refused(stored, 18, 23));
        assertEquals("stored trace column: got a block width of 0 bits, expected 1..56", refused(stored, 21, 0));
        assertEquals("stored trace column: got a block width of 57 bits, expected 1..56", refused(stored, 21, 57));
    }

    @Test
    void overlong_varints_and_mantissas_beyond_2_to_the_53_are_refused() {
        // S = 0, then ten bytes with the continuation bit.
        assertTrue(refusedSample("00" + "ff".repeat(10)).startsWith("stored trace: got a varint longer than 9 bytes"));
        long bound = StoredColumn.MANTISSA_BOUND;
        assertEquals("stored trace column: got a base mantissa of 9007199254740992, expected |M| < 2^53",
                refusedSample("00" + varint(StoredColumn.zigzag(bound)) + "00" + "02" + "02"));
        assertEquals("stored trace column: got a least difference of 18014398509481984 in the block from sample 0, expected one below 2^54",
                refusedSample("00" + "00" + varint(StoredColumn.zigzag(StoredColumn.LEAST_BOUND)) + "02" + "02"));
        // Base 2^53 − 1, then one block: least difference 1, code 2 at 2 bits: M = 2^53, which a double cannot hold exactly.
        assertEquals("stored trace column: got a mantissa of 9007199254740992 at sample 0, expected |M| < 2^53",
                refusedSample("00" + varint(StoredColumn.zigzag(bound - 1)) + varint(StoredColumn.zigzag(1)) + "02" + "02"));
    }

    /** The refusal of a one-sample trace (no outputs or inputs) whose time column is decimal with this body. */
    private static String refusedSample(String bodyHex) {
        byte[] payload = HexFormat.of().parseHex("02" + "00000001" + "00000000" + "00000000" + "01"
                + String.format("%08x", bodyHex.length() / 2) + bodyHex + "0002" + hexOf("{}"));
        return assertThrows(IllegalStateException.class, () -> CODEC.decode(payload)).getMessage();
    }

    private static String varint(long v) {
        ByteSink sink = new ByteSink(10);
        sink.putVarLong(v);
        return HexFormat.of().formatHex(sink.toByteArray());
    }

    @Test
    void bytes_after_the_options_and_stored_values_that_are_no_trace_are_refused() {
        byte[] stored = hand();
        byte[] longer = Arrays.copyOf(stored, stored.length + 1);
        assertEquals("stored trace: got 1 bytes after the options, expected none",
                assertThrows(IllegalStateException.class, () -> CODEC.decode(longer)).getMessage());
        // Second time code 62 → 2 (difference 0; packed 0x03ef82 → 0x03e082): time 0, 0, 60 is not increasing.
        IllegalStateException e = assertThrows(IllegalStateException.class, () -> CODEC.decode(with(stored, 23, 0xe0)));
        // The time column's body one byte longer than its samples need.
        String hand = HexFormat.of().formatHex(stored);
        byte[] padded = HexFormat.of().parseHex(hand.substring(0, 28) + "00000008" + hand.substring(36, 50) + "00" + hand.substring(50));
        assertEquals("stored trace column: got 1 bytes after the last sample, expected none",
                assertThrows(IllegalStateException.class, () -> CODEC.decode(padded)).getMessage());
        assertTrue(e.getMessage().startsWith("stored trace is not a valid trace: "), e.getMessage());
    }

    @Test
    void every_cut_of_a_stored_trace_fails_cleanly() {
        for (byte[] stored : List.of(hand(), CODEC.encode(goldenTrace()), HexFormat.of().parseHex(FORMAT_1_GOLDEN))) {
            for (int length = 0; length < stored.length; length++) {
                byte[] cut = Arrays.copyOf(stored, length);
                RuntimeException e = assertThrows(RuntimeException.class, () -> CODEC.decode(cut), "cut at " + length);
                assertTrue(e instanceof IllegalStateException || e instanceof UncheckedIOException, "cut at " + length + ": " + e);
            }
        }
    }

    // ---- helpers

    /** Times, outputs with −0.0, a missing value and a subnormal-scale number, an input of 0.1 + 0.2, one σ given. */
    static ParsedTrace goldenTrace() {
        Trace t = new Trace(new double[] {0, 60, 120.5}, new double[] {2.7, -0.0, Double.NaN, -0.75, 1e-300, 12.345},
                new double[] {6.4, 27.05, 0.1 + 0.2}, 2, 1, new double[] {0.05, Double.NaN});
        return new ParsedTrace(t, new TraceOptions("continuous", true, 60.0, null));
    }

    /** The hand-laid format-2 bytes of {@link #format_2_bytes_are_as_laid_out_by_hand}. */
    private static byte[] hand() {
        return CODEC.encode(new ParsedTrace(new Trace(new double[] {0, 60, 120}, new double[] {2.7, Double.NaN, -0.0},
                new double[] {6.4, 6.41, 6.4}, 1, 1, new double[] {0.15}), TraceOptions.NONE));
    }

    private static String refused(byte[] stored, int at, int value) {
        return assertThrows(IllegalStateException.class, () -> CODEC.decode(with(stored, at, value))).getMessage();
    }

    private static byte[] with(byte[] stored, int at, int value) {
        byte[] bad = stored.clone();
        bad[at] = (byte) value;
        return bad;
    }

    private static int scale(double... values) {
        return StoredColumn.scaleAndMantissas(values, values.length, new long[values.length]);
    }

    private static byte[] columnBytes(double[] column) {
        ByteSink sink = new ByteSink(8);
        StoredColumn.write(sink, column, new long[column.length], column.length);
        return sink.toByteArray();
    }

    /** One column of at most a block. */
    private static double[] readColumn(byte[] stored, int n) {
        double[] back = new double[n];
        ByteSource in = new ByteSource(stored);
        StoredColumn.Cursor cursor = StoredColumn.open(in);
        cursor.next(n, back, 0, 1, 0);
        cursor.finish();
        assertEquals(0, in.remaining());
        return back;
    }

    static ParsedTrace readCsv(byte[] csv) {
        try {
            ModelDocument model = MAPPER.readValue(Files.readAllBytes(ReeferTraces.modelFile(TEST_DATA)), ModelDocument.class);
            return new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(csv), model, TraceOptions.NONE);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static String hexOf(String ascii) {
        return HexFormat.of().formatHex(ascii.getBytes(StandardCharsets.US_ASCII));
    }

    /** Same samples bit for bit (any NaN for NaN), same σ, same options. */
    static void assertSameTrace(ParsedTrace expected, ParsedTrace actual) {
        Trace e = expected.trace();
        Trace a = actual.trace();
        assertArrayEquals(new int[] {e.samples(), e.outputCount(), e.inputCount()}, new int[] {a.samples(), a.outputCount(), a.inputCount()});
        for (int k = 0; k < e.samples(); k++) {
            assertSameBits(e.time(k), a.time(k), "time", k);
            for (int j = 0; j < e.outputCount(); j++) {
                assertSameBits(e.output(k, j), a.output(k, j), "output " + j, k);
            }
            for (int i = 0; i < e.inputCount(); i++) {
                assertSameBits(e.input(k, i), a.input(k, i), "input " + i, k);
            }
        }
        for (int j = 0; j < e.outputCount(); j++) {
            assertSameBits(e.noiseSigma(j), a.noiseSigma(j), "sigma", j);
        }
        try {
            assertEquals(MAPPER.writeValueAsString(expected.options()), MAPPER.writeValueAsString(actual.options()));
        } catch (IOException x) {
            throw new UncheckedIOException(x);
        }
    }

    private static void assertSameBits(double expected, double actual, String what, int k) {
        if (Double.isNaN(expected)) {
            assertTrue(Double.isNaN(actual), what + " at " + k + ": got " + actual + ", expected NaN");
        } else {
            assertEquals(Double.doubleToRawLongBits(expected), Double.doubleToRawLongBits(actual), what + " at " + k);
        }
    }
}
