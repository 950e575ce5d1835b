package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Test;

/**
 * The intake's path: a body read into columns ({@link TraceReader#readCsvColumns},
 * {@link TraceReader#readJsonColumns}) and stored from them ({@link TraceCodec#encode(ParsedColumns)})
 * without the row-major trace. Checked against outside readers: the stored bytes equal those of the
 * trace jackson-dataformat-csv and {@link Double#parseDouble} read ({@link JacksonCsvOracle}), or of
 * the trace Jackson's JSON parser reads, and decode to that trace bit for bit.
 */
class ColumnarIntakeTest {
    static final ModelDocument MODEL = CsvFastPathTest.MODEL;
    static final TraceCodec CODEC = TraceCodecTest.CODEC;
    static final String HEADER = CsvFastPathTest.HEADER;

    @Test
    void corner_bodies_store_from_their_columns_as_the_oracle_trace_stores() throws IOException {
        List<String> bodies = List.of(
                HEADER + "0,2.7,-0.7,6.4,27.1\r\n60,2.65,-0.75,6.4,27.05\r\n",                       // CRLF
                HEADER + "0,,-0.7,6.4,27.1\n60,2.65,\"\",6.4,27.05\n120,,,1,1\n",                 // missing outputs
                "\"time\",\"return_air\",\"supply_air\",cooling_power,\"ambient\"\n0,1,2,3,4\n",    // quoted header
                HEADER + "0,1e-400,4.9e-324,1e15,-1e15\n60,2.2250738585072014E-308,-0.000000000001e-300,+1E+14,-0\n", // exponents
                HEADER + "\n\n0,1,2,3,4\n\r\n\n60,1,2,3,4\n\n",                                      // blank lines
                "time,return_air,cooling_power,ambient\r0,1,3,4\r60,1.5,3,4\r",                     // no supply_air, CR ends
                "ambient,time,cooling_power,return_air,supply_air\n27,1.7e9,6,2.5,-1\n27,1.70000006e9,6,2.5,-1\n",
                "time since 2026-12-01T00:00:00Z,return_air,supply_air,cooling_power,ambient\n0.5,1,2,3,4\n60.25,1,2,3,4\n");
        for (String csv : bodies) {
            byte[] body = csv.getBytes(StandardCharsets.UTF_8);
            assertStoredAlike(JacksonCsvOracle.readCsv(body, MODEL, Limits.DEFAULTS), columns(body), csv);
        }
    }

    @Test
    void a_trace_of_many_segments_is_read_value_for_value_as_parseDouble_reads_its_cells() throws IOException {
        int rows = 3 * DoubleColumn.SEGMENT + 17;
        String[][] cells = new String[rows][5];
        StringBuilder csv = new StringBuilder(HEADER);
        for (int k = 0; k < rows; k++) {
            cells[k] = new String[] {Integer.toString(60 * k), String.format(Locale.ROOT, "%.3f", Math.sin(k * 1e-3) * 40),
                (k % 5 == 0) ? "" : Double.toString(k * -0.25e-3), String.format(Locale.ROOT, "%.2e", k + 0.5), Double.toString(27 + k % 13 * 0.1)};
            csv.append(String.join(",", cells[k])).append(k % 2 == 0 ? "\n" : "\r\n");
        }
        byte[] body = csv.toString().getBytes(StandardCharsets.UTF_8);
        byte[] stored = CODEC.encode(columns(body));
        ParsedTrace t = columns(body).assemble();
        for (ParsedTrace trace : List.of(t, CODEC.decode(stored))) {
            assertEquals(rows, trace.trace().samples());
            for (int k = 0; k < rows; k++) {
                assertBits(Double.parseDouble(cells[k][0]), trace.trace().time(k), "time " + k);
                assertBits(Double.parseDouble(cells[k][1]), trace.trace().output(k, 0), "return_air " + k);
                assertBits(cells[k][2].isEmpty() ? Double.NaN : Double.parseDouble(cells[k][2]), trace.trace().output(k, 1), "supply_air " + k);
                assertBits(Double.parseDouble(cells[k][3]), trace.trace().input(k, 0), "cooling_power " + k);
                assertBits(Double.parseDouble(cells[k][4]), trace.trace().input(k, 1), "ambient " + k);
            }
        }
    }

    @Test
    void json_and_csv_of_one_trace_store_the_same_bytes() throws IOException {
        int rows = DoubleColumn.SEGMENT + 3;
        StringBuilder csv = new StringBuilder(HEADER);
        StringBuilder[] json = {new StringBuilder(), new StringBuilder(), new StringBuilder(), new StringBuilder(), new StringBuilder()};
        for (int k = 0; k < rows; k++) {
            String[] row = {Integer.toString(60 * k), String.format(Locale.ROOT, "%.3f", 2 + k % 17 * 0.125), "-0.5e-2",
                Integer.toString(k % 3), "27.05"};
            csv.append(String.join(",", row)).append('\n');
            for (int i = 0; i < row.length; i++) {
                json[i].append(k == 0 ? "" : ",").append(row[i]);
            }
        }
        String body = "{\"time\":[" + json[0] + "],\"outputs\":{\"supply_air\":[" + json[2] + "],\"return_air\":[" + json[1]
                + "]},\"inputs\":{\"ambient\":[" + json[4] + "],\"cooling_power\":[" + json[3] + "]}}";
        byte[] fromJson = CODEC.encode(reader().readJsonColumns(stream(body.getBytes(StandardCharsets.UTF_8)), MODEL));
        assertArrayEquals(CODEC.encode(columns(csv.toString().getBytes(StandardCharsets.UTF_8))), fromJson);
    }

    @Test
    void noise_options_and_a_missing_output_store_as_the_assembled_trace_stores() throws IOException {
        byte[] body = ("{\"time\":[\"2026-12-01T00:00:00Z\",\"2026-12-01T00:01:00.5Z\"],\"outputs\":{\"return_air\":[1.5,null]},"
                + "\"inputs\":{\"cooling_power\":[1,2],\"ambient\":[3,4]},\"noiseSigma\":{\"return_air\":0.25},"
                + "\"options\":{\"formulation\":\"sampled\",\"referenceTime\":\"2026-12-01T00:00:30Z\"}}").getBytes(StandardCharsets.UTF_8);
        ParsedTrace assembled = reader().readJson(stream(body), MODEL);
        byte[] stored = CODEC.encode(reader().readJsonColumns(stream(body), MODEL));
        assertArrayEquals(CODEC.encode(assembled), stored, "the encoder of the row-major trace gives the same bytes");
        assertEquals(CsvFastPathTest.outcome(() -> assembled), CsvFastPathTest.outcome(() -> CODEC.decode(stored)));
        assertEquals(assembled.options(), CODEC.decode(stored).options());
    }

    static void assertStoredAlike(ParsedTrace oracle, ParsedColumns columns, String what) {
        byte[] stored = CODEC.encode(columns);
        assertArrayEquals(CODEC.encode(oracle), stored, what);
        assertEquals(CsvFastPathTest.outcome(() -> oracle), CsvFastPathTest.outcome(() -> CODEC.decode(stored)), what);
    }

    private static void assertBits(double expected, double got, String what) {
        assertEquals(Double.doubleToRawLongBits(expected), Double.doubleToRawLongBits(got), what);
    }

    private static ParsedColumns columns(byte[] body) throws IOException {
        return reader().readCsvColumns(stream(body), MODEL, TraceOptions.NONE, null);
    }

    private static TraceReader reader() {
        return new TraceReader(Limits.DEFAULTS);
    }

    private static ByteArrayInputStream stream(byte[] body) {
        return new ByteArrayInputStream(body);
    }
}
