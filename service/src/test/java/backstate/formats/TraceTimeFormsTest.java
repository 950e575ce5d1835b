package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import backstate.estimation.ModelException;
import backstate.text.Figure;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import org.junit.jupiter.api.Test;

/**
 * The three ways a trace writes its times — RFC 3339, epoch seconds, seconds since a declared
 * start — read into the same epoch seconds on the microsecond grid, and each way of getting them
 * wrong refused naming the row.
 *
 * <p>Outside source for the calendar arithmetic: the worked examples of RFC 3339 §5.8, whose
 * epoch seconds are written out below as days since 1970-01-01 × 86 400 + seconds of the day
 * (day counts by hand from the Gregorian leap-year rule; common practice, no source).
 */
class TraceTimeFormsTest {
    static final String HEADER = "return_air,supply_air,cooling_power,ambient\n";
    static final String INPUTS = "\"inputs\":{\"cooling_power\":[1,1],\"ambient\":[20,20]}";
    /** 2026-12-01T00:00:00Z: 56 years from 1970 with 14 leap days (1972 … 2024), then Jan–Nov 2026 (334 days). */
    static final double DEC_1_2026 = (56 * 365 + 14 + 334) * 86_400.0;

    // ---- RFC 3339

    @Test
    void rfc_3339_examples_of_section_5_8_read_as_their_epoch_seconds() {
        // "1985-04-12T23:20:50.52Z": 15 years with 4 leap days (1972 … 1984), then 101 days of 1985.
        double april1985 = (15 * 365 + 4 + 101) * 86_400.0 + 23 * 3600 + 20 * 60 + 50.52;
        // "1996-12-19T16:39:57-08:00" is 1996-12-20T00:39:57Z (§5.8): 26 years with 6 leap days, then 354 days of 1996.
        double december1996 = (26 * 365 + 6 + 354) * 86_400.0 + 39 * 60 + 57;
        // "1937-01-01T12:00:27.87+00:20" is 1937-01-01T11:40:27.87Z (§5.8): 33 years with 8 leap days before 1970.
        double january1937 = -(33 * 365 + 8) * 86_400.0 + 11 * 3600 + 40 * 60 + 27.87;
        assertArrayEquals(new double[] {january1937, april1985, december1996},
                json("[\"1937-01-01T12:00:27.87+00:20\",\"1985-04-12T23:20:50.52Z\",\"1996-12-19T16:39:57-08:00\"]"));
    }

    @Test
    void rfc_3339_leap_second_of_section_5_8_is_refused_naming_the_row() {
        // "1990-12-31T23:59:60Z" (§5.8): POSIX seconds have no place for it.
        InputException e = assertThrows(InputException.class, () -> json("[\"1990-12-31T23:59:59Z\",\"1990-12-31T23:59:60Z\"]"));
        assertEquals("time[1]", e.field());
    }

    @Test
    void offsets_z_and_lower_case_give_the_same_instant() {
        double[] t = json("[\"2026-12-01T02:00:00+02:00\",\"2026-12-01T00:00:01Z\",\"2026-11-30T19:00:02-05:00\","
                + "\"2026-12-01t00:00:03z\",\"2026-12-01T00:00:04-00:00\"]");
        assertArrayEquals(new double[] {DEC_1_2026, DEC_1_2026 + 1, DEC_1_2026 + 2, DEC_1_2026 + 3, DEC_1_2026 + 4}, t);
    }

    @Test
    void fractions_are_rounded_to_the_nearest_microsecond_ties_to_the_later() {
        double[] t = json("[\"2026-12-01T00:00:00.5Z\",\"2026-12-01T00:00:01.123456Z\",\"2026-12-01T00:00:02.000000499Z\","
                + "\"2026-12-01T00:00:03.0000005Z\",\"2026-12-01T00:00:04.999999999Z\"]");
        // Each expected value is the double nearest the decimal, as parseDouble gives it.
        assertArrayEquals(new double[] {Double.parseDouble("1796083200.5"), Double.parseDouble("1796083201.123456"),
            Double.parseDouble("1796083202"), Double.parseDouble("1796083203.000001"), Double.parseDouble("1796083205")}, t);
        assertEquals(1796083200.0, DEC_1_2026, "the closed form agrees with the literal used above");
    }

    @Test
    void csv_cells_may_be_rfc_3339_times() {
        double[] t = times(csv("time," + HEADER + "2026-12-01T01:00:00+01:00,1,1,1,20\n\"2026-12-01T00:00:59.25Z\",1,1,1,20\n"));
        assertArrayEquals(new double[] {DEC_1_2026, DEC_1_2026 + 59.25}, t);
    }

    @Test
    void formatting_writes_utc_with_the_digits_the_microsecond_needs() {
        assertEquals("2026-12-01T00:00:00Z", RecordingTime.format(DEC_1_2026));
        assertEquals("2026-12-01T00:00:00.500Z", RecordingTime.format(DEC_1_2026 + 0.5));
        assertEquals("2026-12-01T00:00:01.123456Z", RecordingTime.format(Double.parseDouble("1796083201.123456")));
        assertEquals("1970-01-01T00:00:00Z", RecordingTime.format(0));
        assertEquals("1937-01-01T11:40:27.870Z", RecordingTime.format(json("[\"1937-01-01T12:00:27.87+00:20\"]")[0]));
    }

    // ---- numbers

    @Test
    void numbers_without_a_start_are_epoch_seconds_rounded_to_the_microsecond() {
        assertArrayEquals(new double[] {0, 1.123456, 1.123457, 60, 1796083200, Double.parseDouble("1796083200.123456")},
                json("[0,1.1234564,1.1234566,60,1796083200,1796083200.123456]"));
        assertEquals("2026-12-01T00:00:00.250Z", RecordingTime.format(1796083200.25));
    }

    @Test
    void numbers_with_a_declared_start_count_from_it_in_json_and_csv() {
        double[] expected = {DEC_1_2026, DEC_1_2026 + 60, DEC_1_2026 + 90.5};
        assertArrayEquals(expected, times(read("{\"start\":\"2026-12-01T02:00:00+02:00\",\"time\":[0,60,90.5],"
                + "\"inputs\":{\"cooling_power\":[1,1,1],\"ambient\":[20,20,20]}}")));
        // The start may follow the times: a JSON object's members have no order.
        assertArrayEquals(expected, times(read("{\"time\":[0,60,90.5],\"inputs\":{\"cooling_power\":[1,1,1],"
                + "\"ambient\":[20,20,20]},\"start\":\"2026-12-01T00:00:00Z\"}")));
        assertArrayEquals(expected, times(csv("time since 2026-12-01T02:00:00+02:00," + HEADER
                + "0,1,1,1,20\n60,1,1,1,20\n90.5,1,1,1,20\n")));
    }

    @Test
    void a_relative_time_is_added_to_its_start_in_whole_microseconds() {
        // 0.1 + 1796083200 in doubles would round twice; formed in microseconds it is the decimal's nearest double.
        assertEquals(Double.parseDouble("1796083200.1"), times(read("{\"start\":\"2026-12-01T00:00:00Z\",\"time\":[0.1],"
                + "\"inputs\":{\"cooling_power\":[1],\"ambient\":[20]}}"))[0]);
    }

    // ---- reference time

    @Test
    void a_reference_time_is_rfc_3339_or_a_number_on_the_traces_clock() {
        String body = "{\"start\":\"2026-12-01T00:00:00Z\",\"time\":[0,60]," + INPUTS + ",\"options\":{\"referenceTime\":%s}}";
        assertEquals(DEC_1_2026 + 30, read(String.format(body, "30")).options().referenceTime());
        // Far beyond any window, added as a double (a long of microseconds would overflow and turn negative);
        // the solver then refuses it as outside the window, in the right direction.
        assertEquals(DEC_1_2026 + 1e20, read(String.format(body, "1e20")).options().referenceTime());
        assertEquals(DEC_1_2026 + 45, read(String.format(body, "\"2026-12-01T01:00:45+01:00\"")).options().referenceTime());
        ParsedTrace epoch = read("{\"time\":[1796083200,1796083260]," + INPUTS + ",\"options\":{\"referenceTime\":1796083230}}");
        assertEquals(DEC_1_2026 + 30, epoch.options().referenceTime());
        String csv = "time since 2026-12-01T00:00:00Z," + HEADER + "0,1,1,1,20\n60,1,1,1,20\n";
        assertEquals(DEC_1_2026 + 30, csvWithReference(csv, "30").options().referenceTime());
        assertEquals(DEC_1_2026 + 15, csvWithReference(csv, "2026-12-01T00:00:15Z").options().referenceTime());
        assertEquals("referenceTime", assertThrows(InputException.class, () -> csvWithReference(csv, "soon")).field());
        assertEquals("options.referenceTime", assertThrows(InputException.class,
                () -> read(String.format(body, "\"12:00\""))).field());
        assertEquals("options.referenceTime", assertThrows(InputException.class,
                () -> read(String.format(body, "[30]"))).field());
    }

    // ---- refusals, each naming the row

    @Test
    void a_bad_timestamp_is_refused_naming_the_row() {
        assertEquals("time[1]", refused(InputException.class, "[\"2026-12-01T00:00:00Z\",\"2026-02-30T00:00:00Z\"]"));
        assertEquals("time[0]", refused(InputException.class, "[\"2026-12-01T00:00:00\"]"));
        assertEquals("time[0]", refused(InputException.class, "[\"2026-12-01T00:00Z\"]"));
        assertEquals("time[0]", refused(InputException.class, "[\"2026-12-01 00:00:00Z\"]"));
        assertEquals("time[0]", refused(InputException.class, "[true]"));
        InputException cell = assertThrows(InputException.class, () -> csv("time," + HEADER
                + "2026-12-01T00:00:00Z,1,1,1,20\n2026-12-01T25:00:00Z,1,1,1,20\n"));
        assertEquals("line 3, column time", cell.field());
        assertEquals("line 3, column time: got \"2026-12-01T25:00:00Z\", expected a decimal number of seconds or "
                + RecordingTime.EXAMPLE, cell.getMessage());
    }

    @Test
    void mixed_forms_are_refused_at_the_first_time_of_the_other_form() {
        InputException e = assertThrows(InputException.class, () -> json("[0,60,\"2026-12-01T00:02:00Z\"]"));
        assertEquals("time[2]: got an RFC 3339 time where the trace's first time is a number, expected every time of a"
                + " trace in one form", e.getMessage());
        assertEquals("time[1]", refused(InputException.class, "[\"2026-12-01T00:00:00Z\",1796083260]"));
        assertEquals("line 4, column time", assertThrows(InputException.class, () -> csv("time," + HEADER
                + "2026-12-01T00:00:00Z,1,1,1,20\n2026-12-01T00:01:00Z,1,1,1,20\n1796083320,1,1,1,20\n")).field());
    }

    @Test
    void times_out_of_order_are_refused_where_they_stand() {
        // Later on the wall clock of its offset, earlier in UTC: 01:00+01:00 is 00:00Z, before 00:30Z.
        ModelException e = assertThrows(ModelException.class, () -> json("[\"2026-12-01T00:30:00Z\",\"2026-12-01T01:00:00+01:00\"]"));
        assertEquals("time[1]: got 2026-12-01T00:00:00Z after 2026-12-01T00:30:00Z, expected strictly increasing times",
                e.getMessage());
        ModelException numbers = assertThrows(ModelException.class,
                () -> csv("time," + HEADER + "1796205660.25,1,1,1,20\n1796205660.25,1,1,1,20\n"));
        assertEquals("line 3, column time", numbers.field());
        assertEquals("got 1796205660.25 s after 1796205660.25 s, expected strictly increasing times", numbers.problem());
        assertEquals("line 3, column time", assertThrows(ModelException.class, () -> csv("time," + HEADER
                + "2026-12-01T00:01:00Z,1,1,1,20\n2026-12-01T00:00:00Z,1,1,1,20\n")).field());
    }

    @Test
    void times_closer_than_a_microsecond_collapse_and_are_refused() {
        assertEquals("time[1]", refused(ModelException.class, "[0.0000001,0.0000002]"));
    }

    @Test
    void a_start_is_only_for_numbers_and_must_itself_be_rfc_3339() {
        assertEquals("start", assertThrows(InputException.class, () -> read("{\"start\":\"2026-12-01T00:00:00Z\","
                + "\"time\":[\"2026-12-01T00:00:00Z\"],\"inputs\":{\"cooling_power\":[1],\"ambient\":[20]}}")).field());
        assertEquals("start", assertThrows(InputException.class, () -> read("{\"start\":1796083200,\"time\":[0]}")).field());
        assertEquals("start", assertThrows(InputException.class, () -> read("{\"start\":\"yesterday\",\"time\":[0]}")).field());
        assertEquals("header[0]", assertThrows(InputException.class, () -> csv("time since 2026-12-01T00:00:00Z," + HEADER
                + "2026-12-01T00:00:00Z,1,1,1,20\n")).field());
        assertEquals("header[0]", assertThrows(InputException.class, () -> csv("time since noon," + HEADER + "0,1,1,1,20\n")).field());
        assertEquals("header[1]", assertThrows(InputException.class, () -> csv("time,time since 2026-12-01T00:00:00Z,return_air\n"))
                .field());
    }

    @Test
    void times_are_kept_from_1700_to_before_2200_and_refused_outside_as_written() {
        // 1700-01-01T00:00:00Z and 2200-01-01T00:00:00Z: -98 615 and 84 006 days from 1970 × 86 400 s
        // (Python: datetime(1700, 1, 1, tzinfo=timezone.utc).timestamp() and the same for 2200).
        assertArrayEquals(new double[] {-8_520_336_000.0, Double.parseDouble("7258118399.999999")},
                json("[-8520336000,7258118399.999999]"));
        assertArrayEquals(new double[] {-8_520_336_000.0, Double.parseDouble("7258118399.999999")},
                json("[\"1700-01-01T00:00:00Z\",\"2199-12-31T23:59:59.999999Z\"]"));
        assertEquals("time[0]: got 7258118400 s since 1970-01-01T00:00:00Z, expected " + RecordingTime.KEPT_YEARS,
                assertThrows(InputException.class, () -> json("[7258118400]")).getMessage());
        assertEquals("time[0]: got -8520336000.000001 s since 1970-01-01T00:00:00Z, expected " + RecordingTime.KEPT_YEARS,
                assertThrows(InputException.class, () -> json("[-8520336000.000001]")).getMessage());
        assertEquals("time[1]: got \"9999-12-31T23:59:59.999999Z\", expected a time in the years 1700 to 2199"
                + " (where every microsecond is kept)", assertThrows(InputException.class,
                () -> json("[\"2026-12-01T00:00:00Z\",\"9999-12-31T23:59:59.999999Z\"]")).getMessage());
        assertEquals("time[0]", refused(InputException.class, "[\"1699-12-31T23:59:59.999999Z\"]"));
        assertEquals("line 2, column time", assertThrows(InputException.class, () -> csv("time," + HEADER
                + "2300-01-01T00:00:00.000001Z,1,1,1,20\n")).field());
        assertEquals("time[0]: got 1e20 s after the start, expected " + RecordingTime.KEPT_YEARS, assertThrows(
                InputException.class, () -> read("{\"start\":\"2026-12-01T00:00:00Z\",\"time\":[1e20],"
                + "\"inputs\":{\"cooling_power\":[1],\"ambient\":[20]}}")).getMessage());
    }

    @Test
    void every_microsecond_of_the_kept_years_keeps_a_double_of_its_own() {
        // Near both ends a microsecond step is a step of the double (spacing 2^-20 s there, below 1 µs),
        // and formatting gives the microsecond back; past 2^33 s (year 2242) it would not.
        for (String text : new String[] {"1700-01-01T00:00:00.000001Z", "2199-12-31T23:59:59.999998Z"}) {
            double t = json("[\"" + text + "\"]")[0];
            assertEquals(text, RecordingTime.format(t));
            assertEquals(text.replace("00.000001Z", "00.000002Z").replace("59.999998Z", "59.999999Z"),
                    RecordingTime.format(json("[" + Figure.plain(t + 1e-6) + "]")[0]));
        }
        assertEquals(0x1p-20, Math.ulp(7_258_118_400.0), "the spacing at the end of 2199");
        assertEquals(0x1p-20, Math.ulp(-8_520_336_000.0), "the spacing at the start of 1700");
    }

    @Test
    void a_number_is_rounded_once_from_its_double_and_a_start_from_its_digits_with_it() {
        // The double nearest 1796090000.0000004 is 1796090000.000000476837158203125 (Python:
        // decimal.Decimal(1796090000.0000004)): 0.48 µs past the second, so it rounds down to it;
        // multiplying by 1e6 first rounds it to a tie and up.
        assertEquals(1_796_090_000.0, json("[1796090000.0000004]")[0]);
        // A declared start's sub-microsecond digits are added to the number's before the one rounding:
        // .0000005 + 0.0000005 s is 1 µs, .0000004 + 0.0000004 s is 0.8 µs, both 1 µs (not 2 and 0).
        String inputs = ",\"inputs\":{\"cooling_power\":[1],\"ambient\":[20]}}";
        assertEquals("2026-12-01T06:00:00.000001Z", RecordingTime.format(times(read(
                "{\"start\":\"2026-12-01T06:00:00.0000005Z\",\"time\":[0.0000005]" + inputs))[0]));
        assertEquals("2026-12-01T06:00:00.000001Z", RecordingTime.format(times(csv("time since 2026-12-01T06:00:00.0000004Z,"
                + HEADER + "0.0000004,1,1,1,20\n"))[0]));
    }

    @Test
    void an_rfc_3339_time_rounding_onto_the_time_before_it_is_said_so() {
        ModelException e = assertThrows(ModelException.class,
                () -> json("[\"2026-12-01T00:00:00.0000001Z\",\"2026-12-01T00:00:00.0000004Z\"]"));
        assertEquals("time[1]: got 2026-12-01T00:00:00Z again (times are kept to the microsecond), expected times at"
                + " least 1 µs apart", e.getMessage());
    }

    // ---- helpers

    /** A JSON trace of the given times, one sample each with constant inputs and no outputs. */
    private static double[] json(String timeArray) {
        int n = timeArray.split(",").length;
        String ones = "[" + String.join(",", java.util.Collections.nCopies(n, "1")) + "]";
        return times(read("{\"time\":" + timeArray + ",\"inputs\":{\"cooling_power\":" + ones + ",\"ambient\":" + ones + "}}"));
    }

    private static String refused(Class<? extends RuntimeException> type, String timeArray) {
        RuntimeException e = assertThrows(type, () -> json(timeArray));
        return e instanceof InputException i ? i.field() : ((ModelException) e).field();
    }

    private static ParsedTrace read(String body) {
        try {
            return new TraceReader(Limits.DEFAULTS).readJson(new ByteArrayInputStream(body.getBytes(StandardCharsets.UTF_8)),
                    CsvFastPathTest.MODEL);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static ParsedTrace csv(String body) {
        return csvWithReference(body, null);
    }

    private static ParsedTrace csvWithReference(String body, String referenceTime) {
        try {
            return new TraceReader(Limits.DEFAULTS).readCsv(new ByteArrayInputStream(body.getBytes(StandardCharsets.UTF_8)),
                    CsvFastPathTest.MODEL, TraceOptions.NONE, referenceTime);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static double[] times(ParsedTrace t) {
        double[] out = new double[t.trace().samples()];
        Arrays.setAll(out, t.trace()::time);
        return out;
    }
}
