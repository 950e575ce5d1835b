package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * Refusals a first user meets, in words they can act on: the CSV column the model does not have,
 * the query parameter that is required, the matrix entry that is not a number.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class PlainMessagesTest {
    static final String HEADER = "time,return_air,supply_air,cooling_power,ambient";
    static final String ROWS = "0,2.7,-0.7,6.4,27.1\n60,2.6,-0.8,6.4,27.1\n";

    TestServer server;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        server.publishDemoModels();
    }

    @AfterAll
    void stop() {
        server.close();
    }

    /** The problem's one field error, after checking it is a 400 problem+json. */
    static JsonNode fieldError(TestServer.Reply reply) {
        assertEquals(400, reply.status(), reply.body());
        assertTrue(reply.contentType().startsWith("application/problem+json"), reply.contentType());
        return reply.json().get("errors").get(0);
    }

    @Test
    void a_csv_column_the_model_does_not_have_is_named() {
        String csv = HEADER + ",humidity\n" + "0,2.7,-0.7,6.4,27.1,81\n";
        JsonNode error = fieldError(server.post("/v1/units/RCX-00001/traces?model=reefer-40&version=1", "text/csv",
                csv.getBytes(StandardCharsets.UTF_8)));
        assertEquals("header[5]", error.get("field").asText());
        assertTrue(error.get("detail").asText().startsWith("got an unknown column \"humidity\""), error.toString());
    }

    @Test
    void a_trace_post_without_its_model_or_version_says_the_parameter_is_required() {
        byte[] csv = (HEADER + "\n" + ROWS).getBytes(StandardCharsets.UTF_8);
        JsonNode noModel = fieldError(server.post("/v1/units/RCX-00001/traces?version=1", "text/csv", csv));
        assertEquals("model", noModel.get("field").asText());
        assertEquals("the query parameter is required and was not given", noModel.get("detail").asText());
        JsonNode noVersion = fieldError(server.post("/v1/units/RCX-00001/traces?model=reefer-40", "text/csv", csv));
        assertEquals("version", noVersion.get("field").asText());
        assertTrue(noVersion.get("detail").asText().contains("required"), noVersion.toString());
    }

    @Test
    void an_unknown_flag_lists_the_flags_in_one_order_on_every_route() {
        String want = "got \"bad\", expected one of [unobservable, ill_conditioned, model_mismatch, few_samples,"
                + " offset_confounded]";
        assertEquals(want, fieldError(server.get("/v1/units/RCX-00001/estimates?flag=bad")).get("detail").asText());
        assertEquals(want, fieldError(server.get("/v1/fleet/reefer-40/units?version=1&flag=bad")).get("detail").asText());
    }

    @Test
    void a_csv_without_a_known_input_s_column_names_the_column() {
        assertEquals("got no column for the known input \"ambient\", expected one for each of the model's inputs"
                + " [cooling_power, ambient]", csvRefusal("time,return_air,supply_air,cooling_power\n0,2.7,-0.7,6.4\n", "header"));
    }

    @Test
    void a_spreadsheet_s_byte_order_mark_is_read_past_and_other_separators_are_named() {
        byte[] mark = {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF};
        for (String header : List.of(HEADER, "\"" + HEADER.replace(",", "\",\"") + "\"")) {
            byte[] csv = (header + "\r\n" + ROWS.replace("\n", "\r\n")).getBytes(StandardCharsets.UTF_8);
            byte[] marked = new byte[mark.length + csv.length];
            System.arraycopy(mark, 0, marked, 0, mark.length);
            System.arraycopy(csv, 0, marked, mark.length, csv.length);
            TestServer.Reply reply = server.post(TRACES, "text/csv", marked);
            assertEquals(202, reply.status(), header + ": " + reply.body());
        }
        for (String separator : List.of(";", "\t")) {
            String csv = HEADER.replace(",", separator) + "\n" + ROWS.replace(",", separator);
            assertEquals("got names separated by " + (separator.equals(";") ? "semicolons" : "tabs")
                    + ", expected them separated by commas", csvRefusal(csv, "header"));
        }
    }

    @Test
    void a_header_ending_in_a_comma_is_named_as_a_column_with_no_name() {
        assertEquals("got a column with no name, expected every column named (a comma at the end of the header line"
                + " makes one)", csvRefusal(HEADER + ",\n0,2.7,-0.7,6.4,27.1,\n", "header[5]"));
    }

    @Test
    void a_trend_without_its_state_says_the_parameter_is_required() {
        JsonNode error = fieldError(server.get("/v1/units/RCX-00001/trend?model=reefer-40"));
        assertEquals("state", error.get("field").asText());
        assertTrue(error.get("detail").asText().contains("required"), error.toString());
    }

    @Test
    void a_null_or_text_in_a_model_matrix_is_refused_in_plain_words() throws Exception {
        String model = Files.readString(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json"));
        String withNull = model.replace("[0.0, 1.0, 0.0, 0.0],", "[0.0, null, 0.0, 0.0],");
        assertFalse(withNull.equals(model), "the demo model's first row of c was found");
        TestServer.Reply reply = server.post("/v1/models/reefer-40/versions", "application/json",
                withNull.getBytes(StandardCharsets.UTF_8));
        JsonNode error = fieldError(reply);
        assertEquals("c[0][1]", error.get("field").asText());
        assertEquals("got null, expected a number", error.get("detail").asText());
        assertEquals("c[0][1]: got null, expected a number", reply.json().get("detail").asText());

        String withText = model.replace("[0.0, 1.0, 0.0, 0.0],", "[0.0, \"one\", 0.0, 0.0],");
        JsonNode text = fieldError(server.post("/v1/models/reefer-40/versions", "application/json",
                withText.getBytes(StandardCharsets.UTF_8)));
        assertEquals("c[0][1]", text.get("field").asText());
        assertEquals("got the text \"one\", expected a number", text.get("detail").asText());
    }

    static final String TRACES = "/v1/units/RCX-00001/traces?model=reefer-40&version=1";

    /** Posts a JSON body, requires a 400 whose one field error is {@code field}, and returns that error's detail. */
    private String refusal(String path, String body, String field) {
        return refusal(path, "application/json", body, field);
    }

    /** {@link #refusal} for a CSV trace of the demo model. */
    private String csvRefusal(String csv, String field) {
        return refusal(TRACES, "text/csv", csv, field);
    }

    private String refusal(String path, String mediaType, String body, String field) {
        JsonNode error = fieldError(server.post(path, mediaType, body.getBytes(StandardCharsets.UTF_8)));
        assertEquals(field, error.get("field").asText(), error.toString());
        assertFalse(error.toString().contains("Source") || error.toString().contains("REDACTED"), error.toString());
        return error.get("detail").asText();
    }

    @Test
    void malformed_json_says_where_it_stopped_without_the_parser_s_placeholders() {
        assertEquals("got malformed JSON at line 2, column 13: unexpected close marker '}': expected ']'"
                + " (for Array starting at line 2, column 8)", refusal("/v1/models/reefer-40/versions",
                "{\"timeDomain\": \"continuous\",\n \"a\": [[1, 2}}", "body"));
        assertEquals("got malformed JSON at line 1, column 50: unexpected close marker '}': expected ']'"
                + " (for Array starting at line 1, column 45)", refusal(TRACES,
                "{\"time\": [0, 60], \"outputs\": {\"return_air\": [1, 2}}", "body"));
        String cut = refusal("/v1/regressions", "{\"family\": ", "body");
        assertTrue(cut.startsWith("got malformed JSON at line 1, column 12: unexpected end-of-input"), cut);
    }

    @Test
    void a_value_of_the_wrong_type_is_named_with_what_goes_there() throws Exception {
        String model = Files.readString(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json"));
        String statesAsObject = model.replaceFirst("\"states\": \\[", "\"states\": {\"list\": [").replaceFirst("}\\s*],", "}]},");
        assertFalse(statesAsObject.equals(model), "the demo model's states were found");
        assertEquals("got an object, expected an array", refusal("/v1/models/reefer-40/versions", statesAsObject, "body.states"));
        assertEquals("got the number 1.5, expected a whole number", refusal("/v1/regressions",
                "{\"family\": \"reefer-40\", \"baseline\": 1, \"candidate\": 1.5}", "body.candidate"));
        assertEquals("got an array, expected a string", refusal("/v1/models",
                "{\"name\": \"reefer-50\", \"description\": [\"two\", \"lines\"]}", "body.description"));
        assertEquals("got an empty body, expected an object", refusal("/v1/models", "", "body"));
        assertEquals("got an empty body, expected an object", refusal(TRACES, "", "body"));
        assertEquals("got nothing, expected a list of sample times, each a number of seconds or an RFC 3339 time with offset"
                + " such as 2026-12-01T06:00:00+02:00 or 2026-12-01T04:00:00.5Z", refusal(TRACES,
                "{\"outputs\": {\"return_air\": [1]}, \"inputs\": {\"cooling_power\": [0], \"ambient\": [20]}}", "time"));
        assertEquals("got 1 value, expected 2 (one per time)", refusal(TRACES,
                "{\"time\": [0, 60], \"outputs\": {\"return_air\": [1]}}", "outputs.return_air"));
        assertEquals("got an empty body, expected an object", refusal("/v1/models/reefer-40/versions/1/plans", " \n", "body"));
        assertEquals("got 99999999999, expected a whole number from -2147483648 to 2147483647", refusal("/v1/regressions",
                "{\"family\": \"reefer-40\", \"baseline\": 99999999999, \"candidate\": 2}", "body.baseline"));
    }

    /** A JSON trace of the demo model whose options are {@code options}. */
    /** Posts a body, requires a 422 problem whose one field error is {@code field}, and returns its detail. */
    private String inconsistency(String path, String mediaType, String body, String field) {
        TestServer.Reply reply = server.post(path, mediaType, body.getBytes(StandardCharsets.UTF_8));
        assertEquals(422, reply.status(), reply.body());
        JsonNode error = reply.json().get("errors").get(0);
        assertEquals(field, error.get("field").asText(), error.toString());
        return error.get("detail").asText();
    }

    @Test
    void a_reference_time_outside_the_window_is_refused_in_recording_time() {
        String csv = "time since 2026-12-01T06:00:00Z" + HEADER.substring(4) + "\n" + ROWS;
        assertEquals("got 2026-12-01T07:00:00Z, expected a time inside the window 2026-12-01T06:00:00Z to"
                + " 2026-12-01T06:01:00Z", inconsistency(TRACES + "&referenceTime=3600", "text/csv", csv, "referenceTime"));
        assertEquals("got 1970-01-01T00:02:00Z, expected a time inside the window 1970-01-01T00:00:00Z to"
                + " 1970-01-01T00:01:00Z", inconsistency(TRACES, "application/json",
                traceWithOptions("{\"referenceTime\": 120}"), "options.referenceTime"));
        // Past year 9999 RFC 3339 has no words for it: seconds since 1970, not a date cut off at the long range.
        assertEquals("got 1e300 s since 1970-01-01T00:00:00Z, expected a time inside the window 1970-01-01T00:00:00Z to"
                + " 1970-01-01T00:01:00Z", inconsistency(TRACES, "application/json",
                traceWithOptions("{\"referenceTime\": 1e300}"), "options.referenceTime"));
    }

    /**
     * A discrete model's state exists on its grid only (t0 + k·period): a sample or a reference time
     * off it is refused at the post (not taken with 202 and left to fail its job),
     * in recording time and in periods from the first sample (150 s / 60 s = 2.5, 30 s / 60 s = 0.5).
     */
    @Test
    void a_time_off_a_discrete_model_s_grid_is_refused_at_the_post_in_recording_time() {
        if (server.get("/v1/models/toy-steps").status() == 404) {
            assertEquals(201, server.postJson("/v1/models", Map.of("name", "toy-steps", "description", "one-minute steps")).status());
            TestServer.Reply published = server.post("/v1/models/toy-steps/versions", "application/json", ("{\"description\":"
                    + " \"two states, one output\", \"timeDomain\": \"discrete\", \"samplePeriod\": 60, \"states\":"
                    + " [{\"name\": \"a\", \"unit\": \"degC\"}, {\"name\": \"b\", \"unit\": \"degC\"}], \"outputs\":"
                    + " [{\"name\": \"y\", \"unit\": \"degC\", \"noiseSigma\": 0.1}], \"inputs\": [], \"a\": [[0.9, 0.1],"
                    + " [0, 0.8]], \"b\": [[], []], \"c\": [[1, 0]], \"d\": [[]]}").getBytes(StandardCharsets.UTF_8));
            assertEquals(201, published.status(), published.body());
        }
        String traces = "/v1/units/RCX-00001/traces?model=toy-steps&version=1";
        String offGrid = "time,y\n2026-12-01T00:00:00Z,1\n2026-12-01T00:01:00Z,0.9\n2026-12-01T00:02:30Z,0.8\n";
        assertEquals("got 2026-12-01T00:02:30Z, expected a whole number of sample periods (60 s) after the first sample;"
                + " it is 2.5 periods after it", inconsistency(traces, "text/csv", offGrid, "time[2]"));
        String onGrid = "time,y\n2026-12-01T00:00:00Z,1\n2026-12-01T00:01:00Z,0.9\n2026-12-01T00:02:00Z,0.8\n";
        assertEquals("got 2026-12-01T00:00:30Z, expected a whole number of sample periods (60 s) after the first sample;"
                + " it is 0.5 periods after it", inconsistency(traces + "&referenceTime=2026-12-01T00:00:30Z", "text/csv",
                onGrid, "referenceTime"));
        assertEquals(202, server.post(traces + "&referenceTime=2026-12-01T00:01:00Z", "text/csv",
                onGrid.getBytes(StandardCharsets.UTF_8)).status(), "on the grid");
    }

    @Test
    void an_option_the_model_refuses_is_named_inside_options_in_a_json_body() {
        assertEquals("got a matrix that is not positive definite, expected one that is", inconsistency(TRACES,
                "application/json", traceWithOptions("{\"prior\": {\"mean\": [0, 0, 0, 0], \"covariance\":"
                        + " [[1, 2, 0, 0], [2, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]]}}"), "options.prior.covariance"));
        assertEquals("got process_noise, expected a model that declares processNoise", inconsistency(TRACES,
                "application/json", traceWithOptions("{\"formulation\": \"process_noise\"}"), "options.formulation"));
        String csv = HEADER + "\n" + ROWS;
        assertEquals("got process_noise, expected a model that declares processNoise",
                inconsistency(TRACES + "&formulation=process_noise", "text/csv", csv, "formulation"));
    }

    private static String traceWithOptions(String options) {
        return "{\"time\": [0, 60], \"outputs\": {\"return_air\": [1, 2], \"supply_air\": [1, 2]},"
                + " \"inputs\": {\"cooling_power\": [0, 0], \"ambient\": [20, 20]}, \"options\": " + options + "}";
    }

    @Test
    void a_trace_s_options_are_refused_in_the_same_words_as_any_body() {
        assertEquals("got the key \"mean\" twice in one object, expected each key once", refusal(TRACES,
                traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, 4], \"mean\": [1, 2, 3, 4]}}"), "options.prior.mean"));
        String broken = refusal(TRACES, traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, 4}}"), "body");
        assertEquals("got malformed JSON at line 1, column 175: unexpected close marker '}': expected ']'"
                + " (for Array starting at line 1, column 164)", broken);
        assertEquals("got an unknown field \"bogus\", expected one of [mean, covariance]", refusal(TRACES,
                traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, 4], \"bogus\": 1}}"), "options.prior.bogus"));
        assertEquals("got the text \"x\", expected a number", refusal(TRACES,
                traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, \"x\"]}}"), "options.prior.mean[3]"));
        assertEquals("got the text \"3\", expected a number", refusal(TRACES,
                traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, \"3\"]}}"), "options.prior.mean[3]"));
        assertEquals("got the text \"true\", expected true or false", refusal(TRACES,
                traceWithOptions("{\"estimateOffsets\": \"true\"}"), "options.estimateOffsets"));
        assertEquals("got the number 1, expected true or false", refusal(TRACES,
                traceWithOptions("{\"estimateOffsets\": 1}"), "options.estimateOffsets"));
        assertEquals("got an unknown field \"sampled\", expected one of [name, description]", refusal("/v1/models",
                "{\"name\": \"reefer-70\", \"sampled\": true}", "body.sampled"));
        // A key holding ": " stays whole in the field, and the detail is not cut at it.
        assertEquals("got an unknown field \"a: b\", expected one of [name, description]", refusal("/v1/models",
                "{\"name\": \"reefer-70\", \"a: b\": true}", "body.a: b"));
        String tooLong = refusal(TRACES, traceWithOptions("{\"formulation\": \"" + "x".repeat(5000) + "\"}"),
                "options.formulation");
        assertTrue(tooLong.startsWith("got JSON beyond the limits: string value length (") && tooLong.endsWith(
                ") exceeds the maximum allowed (4096)"), tooLong);
    }

    @Test
    void json_the_parser_could_be_told_to_allow_is_refused_without_naming_its_settings() {
        assertEquals("got malformed JSON at line 1, column 49: unexpected token NaN: JSON numbers are finite",
                refusal(TRACES, "{\"time\": [0, 60], \"outputs\": {\"return_air\": [NaN, 1]}}", "body"));
        assertEquals("got malformed JSON at line 1, column 55: unexpected token -Infinity: JSON numbers are finite",
                refusal(TRACES, "{\"time\": [0, 60], \"outputs\": {\"return_air\": [-Infinity, 1]}}", "body"));
        assertEquals("got malformed JSON at line 1, column 19: unexpected character ('/' (code 47)): JSON has no comments",
                refusal(TRACES, "{\"time\": [0, 60], /* minutes */ \"outputs\": {}}", "body"));
        assertEquals("got malformed JSON at line 1, column 12: unexpected character ('+' (code 43)) in numeric value:"
                + " JSON spec does not allow numbers to have plus signs", refusal(TRACES, "{\"time\": [+1, 60]}", "body"));
    }

    @Test
    void a_reading_limit_is_named_without_the_parser_s_setting() {
        assertEquals("got JSON beyond the limits: number value length (81) exceeds the maximum allowed (64)",
                refusal(TRACES, "{\"time\": [0, 1" + "0".repeat(80) + "]}", "body"));
    }

    @Test
    void a_refused_text_or_row_says_what_was_got() {
        assertEquals("got 2001 characters, expected at most 2000", refusal("/v1/models",
                "{\"name\": \"reefer-80\", \"description\": \"" + "d".repeat(2001) + "\"}", "description"));
        JsonNode key = fieldError(server.post(TRACES, "text/csv", (HEADER + "\n" + ROWS).getBytes(StandardCharsets.UTF_8),
                "Idempotency-Key", "k".repeat(129)));
        assertEquals("got 129 characters, expected 1-128 visible ASCII characters", key.get("detail").asText());
        assertEquals("got 3 columns, expected 4 columns", refusal(TRACES, traceWithOptions("{\"prior\": {\"mean\": [1, 2, 3, 4],"
                + " \"covariance\": [[1, 0, 0, 0], [0, 1, 0], [0, 0, 1, 0], [0, 0, 0, 1]]}}"), "options.prior.covariance[1]"));
        assertEquals("got 1 value, expected 4", refusal(TRACES, traceWithOptions("{\"prior\": {\"mean\": [1],"
                + " \"covariance\": [[1, 0, 0, 0], [0, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]]}}"), "options.prior.mean"));
    }

    @Test
    void an_identifier_that_breaks_the_rule_is_quoted_or_measured() {
        String rule = ", expected 1-64 characters: letters, digits, _ - . (starting with a letter or digit)";
        JsonNode slash = fieldError(server.get("/v1/units/RCX%2F1/estimates"));
        assertEquals("unitId", slash.get("field").asText());
        assertEquals("got \"RCX/1\"" + rule, slash.get("detail").asText());
        assertEquals("got 65 characters" + rule, fieldError(server.get("/v1/units/" + "A".repeat(65) + "/estimates"))
                .get("detail").asText());
        assertEquals("got \"reefer 40\"" + rule, refusal("/v1/regressions",
                "{\"family\": \"reefer 40\", \"baseline\": 1, \"candidate\": 2}", "family"));
    }

    @Test
    void an_unsupported_media_type_names_what_was_sent_in_its_field_error_too() {
        TestServer.Reply reply = server.post(TRACES, "text/plain", (HEADER + "\n" + ROWS).getBytes(StandardCharsets.UTF_8));
        assertEquals(415, reply.status(), reply.body());
        JsonNode error = reply.json().get("errors").get(0);
        assertEquals("Content-Type", error.get("field").asText());
        assertEquals("got text/plain, expected application/json or text/csv", error.get("detail").asText());
    }

    @Test
    void a_query_parameter_given_twice_is_refused_naming_it() {
        TestServer.Reply twice = server.post("/v1/units/RCX-00077/traces?model=reefer-40&version=1&version=2", "text/csv",
                (HEADER + "\n" + ROWS).getBytes(StandardCharsets.UTF_8));
        JsonNode error = fieldError(twice);
        assertEquals("version", error.get("field").asText());
        assertEquals("got 2 values (\"1\", \"2\"), expected one", error.get("detail").asText());
        JsonNode four = fieldError(server.get("/v1/units/RCX-00077/estimates?limit=1&limit=2&limit=3&limit=4"));
        assertEquals("got 4 values (\"1\", \"2\", \"3\", …), expected one", four.get("detail").asText());
    }

    @Test
    void a_broken_percent_escape_is_refused_instead_of_dropping_its_parameter() throws Exception {
        String rule = ", expected '%' followed by two hex digits (RFC 3986 percent-encoding)";
        for (String pair : List.of("limit=2%", "limit=%zz", "limit=%2")) {
            ApiProblem refused = assertThrows(ApiProblem.class,
                    () -> QueryStrings.requireWellEscaped("from=2026-12-01T00:00:00Z&" + pair + "&version=1"));
            Problem problem = refused.toProblem();
            assertEquals(400, problem.status());
            assertEquals("query", problem.errors().get(0).field());
            assertEquals("got \"" + pair + "\"" + rule, problem.errors().get(0).detail());
        }
        QueryStrings.requireWellEscaped("limit=%32&from=2026-12-01T00%3A00%3A00Z");
        // End to end (java.net.http will not send a broken escape, so the request goes out by hand).
        try (java.net.Socket socket = new java.net.Socket("127.0.0.1", server.app().port())) {
            socket.getOutputStream().write(("GET /v1/units/RCX-00077/estimates?limit=2% HTTP/1.1\r\nHost: test\r\n"
                    + "Connection: close\r\n\r\n").getBytes(StandardCharsets.US_ASCII));
            String answer = new String(socket.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
            assertTrue(answer.startsWith("HTTP/1.1 400 "), answer);
            assertTrue(answer.contains("\"field\":\"query\""), answer);
        }
        assertEquals(200, server.get("/v1/units/RCX-00077/estimates?limit=%32").status(), "a whole escape is read");
    }

    @Test
    void a_second_document_after_the_body_is_refused_and_nothing_is_created() {
        String after = "got more JSON after the document, expected nothing after it";
        assertEquals(after, refusal("/v1/models", "{\"name\": \"reefer-60\", \"description\": \"x\"} {\"name\": \"reefer-61\"}", "body"));
        String garbage = refusal("/v1/models", "{\"name\": \"reefer-60\", \"description\": \"x\"} ok", "body");
        assertTrue(garbage.startsWith("got malformed JSON at line 1, column 43: unrecognized token 'ok'"), garbage);
        assertEquals(404, server.get("/v1/models/reefer-60").status());
        assertEquals(after, refusal(TRACES, "{\"time\": [0, 60]} {}", "body"));
    }

    @Test
    void a_problem_type_has_one_title_whichever_way_it_is_reached() {
        TestServer.Reply noRoute = server.get("/v1/fleet");
        TestServer.Reply noFamily = server.get("/v1/models/reefer-99");
        for (TestServer.Reply reply : List.of(noRoute, noFamily)) {
            assertEquals(404, reply.status(), reply.body());
            assertEquals("/problems/not-found", reply.json().get("type").asText());
            assertEquals("Not found", reply.json().get("title").asText());
        }
        assertEquals("route GET /v1/fleet does not exist", noRoute.json().get("detail").asText());

        TestServer.Reply wrongMethod = server.post("/v1/estimates/e-1", "application/json", "{}".getBytes(StandardCharsets.UTF_8));
        assertEquals(405, wrongMethod.status(), wrongMethod.body());
        assertEquals("/problems/method-not-allowed", wrongMethod.json().get("type").asText());
        assertEquals("Method not allowed", wrongMethod.json().get("title").asText());
        // RFC 9110 15.5.6: a 405 names the methods the resource has.
        assertEquals("GET, HEAD", wrongMethod.headers().firstValue("Allow").orElse("none"));
        TestServer.Reply readTraces = server.get("/v1/units/RCX-00001/traces");
        assertEquals(405, readTraces.status(), readTraces.body());
        assertEquals("POST", readTraces.headers().firstValue("Allow").orElse("none"));
    }
}
