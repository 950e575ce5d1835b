package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.estimation.ModelException;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.regex.Pattern;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Assume;
import net.jqwik.api.Combinators;
import net.jqwik.api.EdgeCasesMode;
import net.jqwik.api.Example;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * The byte-level CSV path ({@link CsvRecords}, {@link PlainDecimal}) against an oracle built from
 * outside parts ({@link JacksonCsvOracle}: jackson-dataformat-csv for RFC 4180 records, the JDK for
 * UTF-8 and for decimals): the same traces, bit for bit, and a refusal where the oracle refuses —
 * for the corners one by one, with the reader's own words, and for generated bodies.
 *
 * <p>One difference is known and kept: jackson-dataformat-csv skips blanks between a closing quote
 * and the next comma or line end ({@code "1" ,}), where RFC 4180 (section 2, rules 4-7) has a quoted
 * field end at its closing quote and counts spaces as part of a field, so our reader refuses the
 * text after the quote. Generated bodies with a quote followed by blanks and a separator are left
 * out of the comparison; {@link #blanks_after_a_closing_quote_are_refused_where_jackson_skips_them}
 * pins both sides.
 */
class CsvFastPathTest {
    static final String HEADER = "time,return_air,supply_air,cooling_power,ambient\n";
    /** How an output cell that is not a number is refused, after what it got. */
    static final String NOT_A_NUMBER_OUTPUT = ", expected a decimal number or an empty cell for a missing sample";
    static final ModelDocument MODEL = reeferModel();
    static final String REFUSED = "refused";
    /** A quote, blanks, then a comma, a line end or the end: where jackson-dataformat-csv is laxer than RFC 4180. */
    static final Pattern BLANK_AFTER_QUOTE = Pattern.compile("\"[ \t]+(?=[,\r\n]|$)");

    // ---- corners, with the values they must give

    @Example
    void plain_rows_are_read_exactly() {
        ParsedTrace t = read(HEADER + "0,2.7,-0.7,6.4,27.1\n60,2.65,-0.75,6.4,27.05\n");
        assertArrayEquals(new double[] {0, 60}, times(t));
        assertEquals(2.65, t.trace().output(1, 0));
        assertEquals(-0.75, t.trace().output(1, 1));
        assertEquals(27.05, t.trace().input(1, 1));
    }

    @Example
    void quoted_fields_crlf_and_blank_lines_read_as_rfc_4180_says() {
        String csv = "\"time\",\"return_air\",supply_air,cooling_power,ambient\r\n\r\n"
                + "\"0\",\" 2.5 \",\"-1\",6,27\r\n\n60,,\"\",6,27\r";
        ParsedTrace t = same(csv);
        assertEquals(2.5, t.trace().output(0, 0));
        assertTrue(Double.isNaN(t.trace().output(1, 0)), "empty output cell is missing");
        assertTrue(Double.isNaN(t.trace().output(1, 1)), "empty quoted output cell is missing");
    }

    @Example
    void exponents_signs_and_bare_points_are_decimals() {
        ParsedTrace t = same(HEADER + "+0,1e3,-2.5E-2,+.5,5.\n1E+1,-0,0.000,1.5e+00,-.25\n");
        assertEquals(1000.0, t.trace().output(0, 0));
        assertEquals(-0.025, t.trace().output(0, 1));
        assertEquals(0.5, t.trace().input(0, 0));
        assertEquals(5.0, t.trace().input(0, 1));
        assertEquals(10.0, t.trace().time(1));
        assertEquals(Double.doubleToRawLongBits(-0.0), Double.doubleToRawLongBits(t.trace().output(1, 0)), "-0 stays negative zero");
        assertEquals(-0.25, t.trace().input(1, 1));
    }

    @Example
    void long_and_extreme_decimals_match_parseDouble() {
        String[] cells = {"12345678901234567890.123", "9007199254740993", "1e22", "1e23", "4.9e-324", "2.2250738585072014E-308",
            "0.1000000000000000055511151231257827", "1e-400", "123456789012345678", "0e99999", "1.7976931348623157e308"};
        for (String cell : cells) {
            if (Math.abs(Double.parseDouble(cell)) > Limits.MAX_MAGNITUDE) {
                assertEquals("line 2, column return_air: got " + Double.parseDouble(cell) + ", expected a magnitude of at most 1.0E15",
                        refusedAlike(HEADER + "0," + cell + ",1,1,1\n").getMessage(), cell);
                continue;
            }
            ParsedTrace t = same(HEADER + "0," + cell + ",1,1,1\n");
            assertEquals(Double.parseDouble(cell), t.trace().output(0, 0), cell);
        }
    }

    @Example
    void non_decimal_text_is_refused_naming_the_cell() {
        for (String cell : List.of("NaN", "Infinity", "-Infinity", "1d", "2f", "0x1p3", "1e", "e5", ".", "-", "+-1", "1.2.3",
                "1 2", "١", "1e+", "--1", "1_000")) {
            InputException e = refusedAlike(HEADER + "0," + cell + ",1,1,1\n");
            assertEquals("line 2, column return_air", e.field(), cell);
            assertEquals("line 2, column return_air: got \"" + cell + "\"" + NOT_A_NUMBER_OUTPUT, e.getMessage());
        }
        // An input cannot be missing, so its refusal offers no empty cell.
        assertEquals("line 2, column cooling_power: got \"nan\", expected a decimal number",
                refusedAlike(HEADER + "0,1,1,nan,1\n").getMessage());
    }

    @Example
    void an_overflowing_decimal_is_refused_as_not_finite() {
        InputException e = refusedAlike(HEADER + "0,1e999,1,1,1\n");
        assertEquals("line 2, column return_air: got 1e999, expected a finite number", e.getMessage());
    }

    @Example
    void empty_time_and_input_cells_are_refused() {
        assertEquals("line 2, column time", refusedAlike(HEADER + " ,1,1,1,1\n").field());
        assertEquals("line 3, column cooling_power", refusedAlike(HEADER + "0,1,1,1,1\n60,1,1,\"\",1\n").field());
    }

    @Example
    void structural_errors_name_the_record_line() {
        assertEquals("line 2: got end of input inside a quoted field, expected a closing quote",
                refusedAlike(HEADER + "0,\"1,1,1,1\n").getMessage());
        assertEquals("line 2: got text after a closing quote, expected a comma or line end",
                refusedAlike(HEADER + "0,\"1\"x,1,1,1\n").getMessage());
        assertEquals("line 2: got more than 5 fields, expected at most 5", refusedAlike(HEADER + "0,1,1,1,1,1\n").getMessage());
        assertEquals("line 2: got 4 fields, expected 5", refusedAlike(HEADER + "0,1,1,1\n").getMessage());
        // A quoted line break does not count as a line.
        assertEquals("line 3: got 4 fields, expected 5", refusedAlike(HEADER + "0,\"1\n\",1,1,1\n0,1,1,1\n").getMessage());
    }

    @Example
    void field_length_is_counted_in_characters() {
        String ascii256 = "0." + "1".repeat(254);
        assertEquals(Double.parseDouble(ascii256), same(HEADER + "0,\"" + ascii256 + "\",1,1,1\n").trace().output(0, 0),
                "256 characters fit");
        assertEquals("line 2: got a field longer than 256 characters", refusedAlike(HEADER + "0," + ascii256 + "1,1,1,1\n").getMessage());
        // 200 two-byte characters (400 bytes) fit; 257 do not, whatever error would follow.
        assertTrue(refusedAlike(HEADER + "0," + "é".repeat(200) + ",1,1,1\n").getMessage().endsWith(NOT_A_NUMBER_OUTPUT));
        assertEquals("line 2: got a field longer than 256 characters", refusedAlike(HEADER + "0,\"" + "é".repeat(257)).getMessage());
        assertEquals("line 2: got a field longer than 256 characters", refusedAlike(HEADER + "0," + "€".repeat(400) + "\n").getMessage());
    }

    @Example
    void invalid_utf8_is_shown_as_replacement_characters() {
        byte[] body = concat(HEADER.getBytes(StandardCharsets.UTF_8), new byte[] {'0', ',', (byte) 0xC3, ',', (byte) 0xE2, (byte) 0x82,
            ',', '1', ',', '1', '\n'});
        InputException e = refusedAlike(body);
        assertEquals("line 2, column return_air: got \"\uFFFD\"" + NOT_A_NUMBER_OUTPUT, e.getMessage());
    }

    @Example
    void blanks_after_a_closing_quote_are_refused_where_jackson_skips_them() throws IOException {
        String csv = HEADER + "0,\"1\" ,1,1,1\n";
        assertEquals("line 2: got text after a closing quote, expected a comma or line end",
                assertThrows(InputException.class, () -> read(csv)).getMessage());
        assertEquals(1.0, JacksonCsvOracle.readCsv(csv.getBytes(StandardCharsets.UTF_8), MODEL, Limits.DEFAULTS).trace().output(0, 0),
                "jackson-dataformat-csv reads the field as 1");
        assertTrue(BLANK_AFTER_QUOTE.matcher(csv).find(), "and such bodies are left out of the generated comparison");
    }

    @Example
    void header_errors_are_refused() {
        assertEquals("header", refusedAlike("").field());
        assertEquals("header", refusedAlike("\n\r\n").field());
        assertEquals("header", refusedAlike("return_air,supply_air\n1,2\n").field());
        assertEquals("header[2]", refusedAlike("time,return_air,time\n").field());
        assertEquals("header[1]", refusedAlike("time,\uFEFFreturn_air\n").field());
        assertEquals("header[2]", refusedAlike("time,return_air,return_air\n").field());
    }

    @Example
    void an_extra_header_column_is_refused_by_its_name() {
        InputException one = refusedAlike(HEADER.replace("\n", ",humidity\n") + "0,1,1,1,1,1\n");
        assertEquals("header[5]", one.field());
        assertEquals("header[5]: got an unknown column \"humidity\", expected \"time\" and the model's channels"
                + " [return_air, supply_air, cooling_power, ambient]", one.getMessage());
        // Several extra columns: the first one is named, wherever it stands.
        assertEquals("header[2]", refusedAlike("time,return_air,door,supply_air,cooling_power,ambient,humidity\n").field());
        // A header far longer than the model's channels is refused by its count, as hostile input.
        String wide = "time" + ",x".repeat(5 + TraceReader.EXTRA_HEADER_FIELDS) + "\n";
        assertEquals("line 1: got more than 69 fields, expected at most 69", refusedAlike(wide).getMessage());
    }

    @Example
    void the_sample_limit_is_checked_per_cell() {
        Limits two = new Limits(2, 64, 16);
        byte[] csv = (HEADER + "0,1,1,1,1\n60,1,1,1,1\n120,x,1,1,1\n").getBytes(StandardCharsets.UTF_8);
        InputException e = assertThrows(InputException.class, () -> read(csv, two));
        assertEquals(REFUSED, outcome(() -> JacksonCsvOracle.readCsv(csv, MODEL, two)));
        assertEquals("time: got more than 2 samples, expected at most 2", e.getMessage(), "the third time, before the bad cell");
    }

    @Example
    void a_body_longer_than_one_read_block_is_read_whole() {
        StringBuilder csv = new StringBuilder(HEADER);
        for (int k = 0; k < 5000; k++) {
            csv.append(k * 60).append(",\"").append(k % 7).append(".125\",-0.5,6.25,27\r\n");
        }
        ParsedTrace t = same(csv.toString());
        assertEquals(5000, t.trace().samples());
        assertEquals(1.125, t.trace().output(4999, 0), "4999 % 7 = 1");
    }

    /**
     * Plain rows across read blocks (64 KiB) and column segments (16 384 values): a prefix of each
     * length from 0 to 40 bytes moves every record, and every CR of a CRLF, across the block's end.
     */
    @Example
    void plain_records_across_read_blocks_and_segments_read_as_the_oracle_reads() throws IOException {
        StringBuilder rows = new StringBuilder();
        for (int k = 0; k < DoubleColumn.SEGMENT + 1000; k++) {
            rows.append(60 * k + 1).append(',').append(k % 9 == 0 ? "" : String.format(Locale.ROOT, "%.3f", Math.cos(k) * 30))
                    .append(',').append(-k % 1000 * 0.001).append(',').append(k % 11).append(".5,27")
                    .append(k % 3 == 0 ? "\r\n" : k % 3 == 1 ? "\n" : "\r");
        }
        for (int shift = 0; shift <= 40; shift++) {
            byte[] body = (HEADER + "\n".repeat(shift) + rows).getBytes(StandardCharsets.UTF_8);
            assertEquals(outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS)),
                    outcome(() -> readFrom(new ByteArrayInputStream(body), Limits.DEFAULTS)), "shifted by " + shift + " blank lines");
        }
    }

    /**
     * The plain-decimal path at its edges, against {@code parseDouble} bit for bit: 1 to 25 digits
     * with the point at every place, scales at and beyond ±22 (the largest exact power of ten) and
     * mantissas at 2^53 (the largest exact integer), subnormals, signed zeros and long runs of
     * zeros. Where the path must read a cell itself (at most 18 significant digits, mantissa at most
     * 2^53, scale within ±22) it must not decline it.
     */
    @Example
    void plain_decimal_is_parseDouble_at_the_edges_of_its_exact_case() {
        String digits = "1234567890123456789012345";
        for (int n = 1; n <= 25; n++) {
            for (int point = 0; point <= n; point++) {
                for (String exponent : List.of("", "e0", "e-22", "e22", "e-23", "e23", "E+7", "e-0007", "e-30", "e30")) {
                    for (String sign : List.of("", "-", "+")) {
                        assertPlainDecimalExact(sign + digits.substring(0, point) + "." + digits.substring(point, n) + exponent);
                        assertPlainDecimalExact(sign + digits.substring(0, n) + exponent);
                    }
                }
            }
        }
        for (int zeros = 0; zeros <= 30; zeros++) {
            for (String text : List.of("0." + "0".repeat(zeros) + "1", "1" + "0".repeat(zeros), "0".repeat(zeros + 1) + "7.5",
                    "-0." + "0".repeat(zeros), "1." + "0".repeat(zeros) + "1", "0".repeat(zeros) + ".0e-5", "5" + "0".repeat(zeros) + "e-22")) {
                assertPlainDecimalExact(text);
            }
        }
        for (String text : List.of("9007199254740992", "9007199254740993", "9007199254740991e-22", "900719925474099.2e-7",
                "4.9e-324", "2.4703282292062327e-324", "2.2250738585072011e-308", "-0", "-0.0", "+0e5", "-0e-400", "0e0")) {
            assertPlainDecimalExact(text);
        }
    }

    /**
     * {@code text} is read as parseDouble reads it, bit for bit, or declined; declined only outside the
     * exact case, which {@link java.math.BigDecimal} measures as written: its unscaled value is the
     * digits from the first non-zero one, its scale the fraction digits less the exponent.
     */
    private static void assertPlainDecimalExact(String text) {
        byte[] bytes = text.getBytes(StandardCharsets.US_ASCII);
        double fast = new PlainDecimal().read(bytes, 0, bytes.length);
        java.math.BigDecimal written = new java.math.BigDecimal(text);
        boolean exactCase = written.signum() == 0 || written.precision() <= 18
                && written.unscaledValue().abs().compareTo(java.math.BigInteger.TWO.pow(53)) <= 0 && Math.abs(written.scale()) <= 22;
        if (Double.isNaN(fast)) {
            assertTrue(!exactCase, text + " is in the exact case but was declined");
            return;
        }
        assertEquals(Double.doubleToRawLongBits(Double.parseDouble(text)), Double.doubleToRawLongBits(fast), text);
    }

    // ---- generated bodies: the reader and the oracle give the same outcome

    @Property(tries = 3000)
    void generated_bodies_read_alike(@ForAll("bodies") byte[] body) {
        Assume.that(!BLANK_AFTER_QUOTE.matcher(new String(body, StandardCharsets.ISO_8859_1)).find());
        assertEquals(outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS)),
                outcome(() -> read(body, Limits.DEFAULTS)));
    }

    /** Well-formed traces in many spellings, so that values, not only refusals, are compared. */
    @Property(tries = 1000, edgeCases = EdgeCasesMode.NONE)
    void generated_traces_read_alike_value_for_value(@ForAll("traces") String csv) {
        byte[] body = csv.getBytes(StandardCharsets.UTF_8);
        String oracle = outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS));
        assertTrue(oracle.startsWith("read "), "a well-formed trace is read by the oracle");
        assertEquals(oracle, outcome(() -> read(body, Limits.DEFAULTS)));
    }

    /** The intake's path: columns as read, stored without the row-major trace, as the oracle's trace is stored. */
    @Property(tries = 300, edgeCases = EdgeCasesMode.NONE)
    void generated_traces_store_from_their_columns_as_the_oracle_trace(@ForAll("traces") String csv) throws IOException {
        byte[] body = csv.getBytes(StandardCharsets.UTF_8);
        ColumnarIntakeTest.assertStoredAlike(JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS),
                new TraceReader(Limits.DEFAULTS).readCsvColumns(new ByteArrayInputStream(body), MODEL, TraceOptions.NONE, null), csv);
    }

    @Property(tries = 3000)
    void plain_decimal_is_parseDouble_or_declines(@ForAll("decimals") String text) {
        byte[] bytes = text.getBytes(StandardCharsets.US_ASCII);
        double fast = new PlainDecimal().read(bytes, 0, bytes.length);
        if (!Double.isNaN(fast)) {
            assertEquals(Double.doubleToRawLongBits(Double.parseDouble(text)), Double.doubleToRawLongBits(fast), text);
        }
    }

    @Example
    void plain_decimal_reads_the_usual_cells_itself() {
        for (String text : List.of("0", "-0.75", "27.05", "123456.789", "+1e-3", "9007199254740992", "1e22", ".5", "5.")) {
            byte[] bytes = text.getBytes(StandardCharsets.US_ASCII);
            assertEquals(Double.parseDouble(text), new PlainDecimal().read(bytes, 0, bytes.length), text);
        }
        for (String text : List.of("9007199254740993", "1e23", "1234567890123456789", "1e00001", "NaN", "1e", "")) {
            byte[] bytes = text.getBytes(StandardCharsets.US_ASCII);
            assertTrue(Double.isNaN(new PlainDecimal().read(bytes, 0, bytes.length)), text + " is left to the general path");
        }
    }

    @Provide
    Arbitrary<byte[]> bodies() {
        Arbitrary<String> token = Arbitraries.of("time", "return_air", "supply_air", "cooling_power", "ambient", "x",
                ",", ",", ",", "\n", "\n", "\r\n", "\r", "\"", "\"\"", " ", "\t", "0", "1", "7", "60", "-", "+", ".", "e", "E",
                "12.5", "-0", "0.125", "NaN", "Infinity", "1e999", "1d", "0x1p3", "é", "€", "\uD83D\uDE00", "\u0000",
                "12345678901234567890", "9007199254740993", "1e23", "4.9e-324", "1".repeat(255), "é".repeat(130), "€".repeat(90),
                "2026-12-01T00:00:00Z", "2026-12-01T01:00:30.25+01:00", "2026-12-01T00:00:00", "time since 2026-12-01T00:00:00Z")
                .map(s -> s);
        Arbitrary<byte[]> raw = Arbitraries.of(new byte[] {(byte) 0xC3}, new byte[] {(byte) 0xE2, (byte) 0x82},
                new byte[] {(byte) 0xFF}, new byte[] {(byte) 0xF0, (byte) 0x90, (byte) 0x80}, new byte[] {(byte) 0xED, (byte) 0xA0, (byte) 0x80},
                new byte[] {(byte) 0xC0, (byte) 0xAF}, new byte[] {(byte) 0x80});
        Arbitrary<byte[]> piece = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(12, token.map(s -> s.getBytes(StandardCharsets.UTF_8))), net.jqwik.api.Tuple.of(1, raw));
        Arbitrary<byte[]> noise = piece.list().ofMaxSize(80).map(CsvFastPathTest::concat);
        Arbitrary<byte[]> rows = Arbitraries.integers().between(0, 12).flatMap(n -> row().list().ofSize(n))
                .map(list -> String.join("", list).getBytes(StandardCharsets.UTF_8));
        Arbitrary<byte[]> header = Arbitraries.of(HEADER, "time,ambient,cooling_power,return_air\r\n", "\"time\",return_air,ambient,cooling_power\n",
                        "time since 2026-12-01T00:00:00+01:00,return_air,ambient,cooling_power\n", "")
                .map(s -> s.getBytes(StandardCharsets.UTF_8));
        return Arbitraries.oneOf(
                noise,
                net.jqwik.api.Combinators.combine(header, rows, noise).as((h, r, n) -> concat(List.of(h, r, n))),
                net.jqwik.api.Combinators.combine(header, rows).as((h, r) -> concat(List.of(h, r))));
    }

    /**
     * A trace the model accepts: the header's columns in any order (supply_air, an output, may be
     * left out), increasing times, decimals in many spellings, quoted or padded cells, blank or
     * quoted-empty outputs (missing), CRLF, LF or CR line ends, and blank lines between records.
     */
    @Provide
    Arbitrary<String> traces() {
        Arbitrary<List<String>> header = Arbitraries.of(
                List.of("time", "return_air", "supply_air", "cooling_power", "ambient"),
                List.of("ambient", "time", "cooling_power", "return_air"),
                List.of("supply_air", "cooling_power", "ambient", "return_air", "time"));
        Arbitrary<String> end = Arbitraries.of("\n", "\r\n", "\r", "\n\n", "\r\n\r\n");
        // Nothing above the sample values' limit (Limits.MAX_MAGNITUDE, 1e15; beyond it a trace is
        // refused, which the body generator covers). No flatMap: jqwik builds those slowly.
        Arbitrary<Double> number = Arbitraries.oneOf(
                Arbitraries.doubles().between(-1e6, 1e6).ofScale(6), Arbitraries.doubles().between(-1e-3, 1e-3).ofScale(12),
                Arbitraries.of(0.0, -0.0, 0.1, 1e15, -1e15, 999999999999999.9, 4503599627370497.0 / 8, Double.MIN_VALUE,
                        2.2250738585072014E-308, 4.35, 2.675));
        Arbitrary<String> spelling = Arbitraries.of("%.3f", "%.17g", "%e", "%s", "%+.2f", "%.4E");
        Arbitrary<String> wrapping = Arbitraries.of("%s", "%s", "%s", "\"%s\"", " %s\t", "missing", "\"\"");
        Arbitrary<String> cell = Combinators.combine(number, spelling, wrapping).as((v, format, wrap) -> {
            String text = format.equals("%s") ? Double.toString(v) : String.format(Locale.ROOT, format, v);
            return wrap.equals("missing") ? "" : String.format(Locale.ROOT, wrap, text.replace("E+0", "e"));
        });
        int maxRows = 30;
        return Combinators.combine(header, Arbitraries.integers().between(1, maxRows), cell.list().ofSize(5 * maxRows),
                end.list().ofSize(maxRows + 1), Arbitraries.of("%d", "%.1f", "%.3e", "+%d", "\"%d\"").list().ofSize(maxRows))
                .as((columns, rows, cells, ends, timeFormats) -> {
                    StringBuilder csv = new StringBuilder(String.join(",", columns)).append(ends.get(0));
                    for (int k = 0; k < rows; k++) {
                        for (int i = 0; i < columns.size(); i++) {
                            String name = columns.get(i);
                            String text = cells.get(5 * k + i);
                            // Only outputs may be missing; an input's blank cell is made a zero.
                            boolean blank = text.isBlank() || text.equals("\"\"");
                            csv.append(i == 0 ? "" : ",").append(name.equals("time") ? timeCell(timeFormats.get(k), 60 * k)
                                    : name.endsWith("_air") || !blank ? text : "0");
                        }
                        csv.append(ends.get(k + 1));
                    }
                    return csv.toString();
                });
    }

    private static String timeCell(String format, int seconds) {
        return format.contains("d") ? String.format(Locale.ROOT, format, seconds) : String.format(Locale.ROOT, format, (double) seconds);
    }

    /** A mostly valid row: increasing-ish times, decimals in many spellings, now and then a quote, blank or odd cell. */
    private Arbitrary<String> row() {
        Arbitrary<String> cell = Arbitraries.oneOf(decimals(), decimals().map(s -> "\"" + s + "\""), decimals().map(s -> " " + s + "\t"),
                Arbitraries.of("", "\"\"", "NaN", "1e999", "é", "2026-12-01T00:00:00Z", "\"2026-12-01T00:00:01.5+00:30\""));
        return cell.list().ofMinSize(3).ofMaxSize(6).map(cells -> String.join(",", cells))
                .flatMap(r -> Arbitraries.of("\n", "\r\n", "\r").map(end -> r + end));
    }

    @Provide
    Arbitrary<String> decimals() {
        Arbitrary<Double> value = Arbitraries.oneOf(
                Arbitraries.doubles().between(-1e6, 1e6).ofScale(4),
                Arbitraries.doubles().between(-1e-3, 1e-3).ofScale(12),
                Arbitraries.of(0.0, -0.0, 0.1, 1e22, 1e23, 9007199254740993.0, Double.MIN_VALUE, Double.MAX_VALUE, 4.35, 2.675),
                Arbitraries.longs().map(Double::longBitsToDouble).filter(Double::isFinite));
        return value.flatMap(v -> Arbitraries.of(
                String.format(Locale.ROOT, "%.3f", v), String.format(Locale.ROOT, "%.0f", v), String.format(Locale.ROOT, "%.17g", v),
                String.format(Locale.ROOT, "%e", v), Double.toString(v), String.format(Locale.ROOT, "%+.2f", v),
                String.format(Locale.ROOT, "%.6f", v).replace("0.", "."), String.format(Locale.ROOT, "%.20f", v),
                String.format(Locale.ROOT, "%.4E", v).replace("E+0", "e")));
    }

    // ---- helpers

    interface Read {
        ParsedTrace run() throws IOException;
    }

    /**
     * What a reader made of a body: the trace's values bit for bit, or {@link #REFUSED} for a refusal
     * that names a field (a malformed body or a trace the model's checks refuse). Anything else
     * thrown is a bug, and fails the test.
     */
    static String outcome(Read read) {
        try {
            ParsedTrace t = read.run();
            StringBuilder s = new StringBuilder("read " + t.trace().samples());
            for (int k = 0; k < t.trace().samples(); k++) {
                s.append(';').append(Double.doubleToRawLongBits(t.trace().time(k)));
                for (int j = 0; j < t.trace().outputCount(); j++) {
                    s.append(',').append(Double.doubleToRawLongBits(t.trace().output(k, j)));
                }
                for (int i = 0; i < t.trace().inputCount(); i++) {
                    s.append(',').append(Double.doubleToRawLongBits(t.trace().input(k, i)));
                }
            }
            return s.toString();
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        } catch (InputException e) {
            assertTrue(!e.field().isBlank() && e.getMessage().length() > e.field().length() + 2, e.getMessage());
            return REFUSED;
        } catch (ModelException e) {
            assertTrue(!e.field().isBlank(), e.getMessage());
            return REFUSED;
        }
    }

    private static ParsedTrace same(String csv) {
        byte[] body = csv.getBytes(StandardCharsets.UTF_8);
        String oracle = outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS));
        assertTrue(oracle.startsWith("read "), "the oracle reads it");
        assertEquals(oracle, outcome(() -> read(body, Limits.DEFAULTS)));
        return read(csv);
    }

    private static InputException refusedAlike(String csv) {
        return refusedAlike(csv.getBytes(StandardCharsets.UTF_8));
    }

    private static InputException refusedAlike(byte[] body) {
        assertEquals(REFUSED, outcome(() -> JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS)), "the oracle refuses it");
        return assertThrows(InputException.class, () -> read(body, Limits.DEFAULTS));
    }

    private static ParsedTrace read(String csv) {
        try {
            return read(csv.getBytes(StandardCharsets.UTF_8), Limits.DEFAULTS);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /**
     * Reads the body twice and requires the same trace or the same refusal, word for word: front to
     * back through 7-byte blocks, where records cross the reader's blocks everywhere and the byte
     * loop reads them, and as the intake reads it, where records lie in one block and plain ones
     * are read in place.
     */
    private static ParsedTrace read(byte[] body, Limits limits) throws IOException {
        assertEquals(described(() -> frontToBack(body, limits, 7)), described(() -> readFrom(new ByteArrayInputStream(body), limits)),
                "read front to back through 7-byte blocks and read whole");
        return frontToBack(body, limits, 7);
    }

    private static ParsedTrace readFrom(InputStream in, Limits limits) throws IOException {
        return new TraceReader(limits).readCsv(in, MODEL, TraceOptions.NONE);
    }

    /**
     * The body read front to back by one {@link CsvRecords} through blocks of {@code blockBytes},
     * as {@link TraceReader} reads a body that fits the first block, without the second thread it
     * takes for a larger one ({@link CsvLanes}).
     */
    static ParsedTrace frontToBack(byte[] body, Limits limits, int blockBytes) throws IOException {
        TraceColumns columns = new TraceColumns(MODEL, limits);
        int maxFields = 1 + MODEL.outputs().size() + MODEL.inputsOrEmpty().size();
        CsvRecords records = CsvRecords.inBlocksOf(blockBytes, new ByteArrayInputStream(body),
                maxFields + TraceReader.EXTRA_HEADER_FIELDS, maxFields);
        if (!records.next()) {
            throw new InputException("header", "got an empty body, expected a header row: time, then channel names");
        }
        TraceReader.CsvHeader layout = TraceReader.headerTargets(records.texts(), columns, maxFields);
        layout.rows().readAll(records, columns.times(), layout.channels());
        return columns.finish(TraceOptions.NONE).assemble();
    }

    /** {@link #outcome}, but a refusal with its class and words. */
    static String described(Read read) throws IOException {
        try {
            ParsedTrace t = read.run();
            return outcome(() -> t);
        } catch (InputException | ModelException e) {
            return e.getClass().getSimpleName() + ": " + e.getMessage();
        }
    }

    private static double[] times(ParsedTrace t) {
        double[] out = new double[t.trace().samples()];
        Arrays.setAll(out, t.trace()::time);
        return out;
    }

    private static byte[] concat(byte[]... parts) {
        return concat(Arrays.asList(parts));
    }

    private static byte[] concat(List<byte[]> parts) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        parts.forEach(out::writeBytes);
        return out.toByteArray();
    }

    private static ModelDocument reeferModel() {
        Path file = Path.of(System.getProperty("backstate.testData", "test-data"), "demo", "models", "reefer-40.v1.json");
        try {
            return Json.mapper(Limits.DEFAULTS).readValue(Files.readAllBytes(file), ModelDocument.class);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
