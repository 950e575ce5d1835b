package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.Map;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** Each malformed trace post gets the right 4xx problem naming the field, and stores nothing. */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class BadTraceRequestsTest {
    /** Small enough that a 3 KB body is over the limit. */
    static final String BODY_LIMIT = "2048";
    static final String HEADER = "time,return_air,supply_air,cooling_power,ambient\n";
    /** A valid JSON trace of two samples, before the duplicate cases add a key to it. */
    static final String DUPLICATE_FREE = "{\"time\":[0,60],\"outputs\":{\"return_air\":[2.7,2.6],\"supply_air\":[-0.7,-0.8]},"
            + "\"inputs\":{\"cooling_power\":[6.4,6.4],\"ambient\":[27.1,27.1]}}";
    static final String GOOD_ROW = "0,2.7,-0.7,6.4,27.1\n60,2.6,-0.8,6.4,27.1\n";

    TestServer server;
    Path db;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir, Map.of("BACKSTATE_MAX_BODY_BYTES", BODY_LIMIT));
        db = dir.resolve("test.db");
        server.publishDemoModels();
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static Stream<Arguments> badRequests() {
        String csv = "text/csv";
        String json = "application/json";
        String ok = "?model=reefer-40&version=1";
        return Stream.of(
                Arguments.of("malformed JSON", ok, json, "{\"time\": [0, 1,", 400, "body"),
                Arguments.of("NaN in JSON", ok, json, "{\"time\":[0,60],\"outputs\":{\"return_air\":[NaN,1]},\"inputs\":{\"cooling_power\":[1,1],\"ambient\":[1,1]}}", 400, "body"),
                Arguments.of("string where a number belongs", ok, json, "{\"time\":[0,\"x\"]}", 400, "time[1]"),
                Arguments.of("unknown JSON field", ok, json, "{\"tiem\":[0,60]}", 400, "tiem"),
                Arguments.of("unknown output channel", ok, json, "{\"time\":[0,60],\"outputs\":{\"door\":[1,1]}}", 400, "outputs.door"),
                Arguments.of("wrong column count", ok, json, "{\"time\":[0,60],\"outputs\":{\"return_air\":[1]},\"inputs\":{\"cooling_power\":[1,1],\"ambient\":[1,1]}}", 400, "outputs.return_air"),
                Arguments.of("missing known input", ok, json, "{\"time\":[0,60],\"outputs\":{\"return_air\":[1,1]},\"inputs\":{\"cooling_power\":[1,1]}}", 400, "inputs.ambient"),
                Arguments.of("non-increasing times", ok, csv, HEADER + "0,2.7,-0.7,6.4,27.1\n0,2.6,-0.8,6.4,27.1\n", 422, "line 3, column time"),
                Arguments.of("RFC 3339 times out of order", ok, json, "{\"time\":[\"2026-12-01T00:30:00Z\",\"2026-12-01T01:00:00+01:00\"]}", 422, "time[1]"),
                Arguments.of("a bad RFC 3339 time", ok, csv, HEADER + "2026-12-01T00:00:00Z,2.7,-0.7,6.4,27.1\n2026-13-01T00:00:00Z,2.6,-0.8,6.4,27.1\n", 400, "line 3, column time"),
                Arguments.of("numbers and RFC 3339 times mixed", ok, json, "{\"time\":[0,\"2026-12-01T00:01:00Z\"]}", 400, "time[1]"),
                Arguments.of("a start that is not RFC 3339", ok, json, "{\"start\":\"today\",\"time\":[0,60]}", 400, "start"),
                Arguments.of("a reference time that is neither", ok + "&referenceTime=noon", csv, HEADER + GOOD_ROW, 400, "referenceTime"),
                Arguments.of("NaN text in CSV", ok, csv, HEADER + "0,NaN,-0.7,6.4,27.1\n", 400, "line 2, column return_air"),
                Arguments.of("missing input cell in CSV", ok, csv, HEADER + "0,2.7,-0.7,,27.1\n", 400, "line 2, column cooling_power"),
                Arguments.of("ragged CSV row", ok, csv, HEADER + "0,2.7,-0.7,6.4\n", 400, "line 2"),
                Arguments.of("CSV without time column", ok, csv, "return_air,supply_air\n1,2\n", 400, "header"),
                // were named as the JSON form's fields (inputs.ambient, options.formulation)
                Arguments.of("CSV without a known input's column", ok, csv, "time,return_air,supply_air,cooling_power\n0,2.7,-0.7,6.4\n", 400, "header"),
                Arguments.of("an unknown formulation in the query", ok + "&formulation=magic", csv, HEADER + GOOD_ROW, 400, "formulation"),
                Arguments.of("unknown model version", "?model=reefer-40&version=99", csv, HEADER + GOOD_ROW, 422, "version"),
                Arguments.of("version not a number", "?model=reefer-40&version=one", csv, HEADER + GOOD_ROW, 400, "version"),
                Arguments.of("no model named", "?version=1", csv, HEADER + GOOD_ROW, 400, "model"),
                Arguments.of("unsupported media type", ok, "text/plain", HEADER + GOOD_ROW, 415, "Content-Type"),
                // were accepted: the media type was matched by prefix
                Arguments.of("text/csv with letters after it", ok, "text/csvfoo", HEADER + GOOD_ROW, 415, "Content-Type"),
                Arguments.of("application/json with letters after it", ok, "application/jsonx", DUPLICATE_FREE, 415, "Content-Type"),
                // were accepted, then the job failed three times (1e300) or came back "unobservable" (1e-320)
                Arguments.of("an output of 1e300", ok, json, DUPLICATE_FREE.replace("[2.7,2.6]", "[1e300,2.6]"), 400, "outputs.return_air[0]"),
                Arguments.of("an input of -1e16 in CSV", ok, csv, HEADER + "0,2.7,-0.7,-1e16,27.1\n", 400, "line 2, column cooling_power"),
                Arguments.of("a noise sigma of 1e-320", ok, json,
                        DUPLICATE_FREE.replace("}}", "},\"noiseSigma\":{\"return_air\":1e-320}}"), 400, "noiseSigma.return_air"),
                // were merged: the second "time" appended two more samples (4 stored)
                Arguments.of("time written twice", ok, json, DUPLICATE_FREE.replace("}}", "},\"time\":[120,180]}"), 400, "time"),
                Arguments.of("an output written twice", ok, json,
                        DUPLICATE_FREE.replace("\"outputs\":{", "\"outputs\":{\"return_air\":[1,1],"), 400, "outputs.return_air"),
                Arguments.of("reference time outside the window", ok + "&referenceTime=999", csv, HEADER + GOOD_ROW, 422, "referenceTime"),
                Arguments.of("oversize body", ok, csv, HEADER + GOOD_ROW.repeat(60), 413, null));
    }

    @ParameterizedTest(name = "{0} gets {4}")
    @MethodSource("badRequests")
    void bad_trace_post_gets_a_problem_naming_the_field_and_stores_nothing(String name, String query, String type,
                                                                          String body, int status, String field) {
        String before = Database.signature(db);
        TestServer.Reply reply = server.post("/v1/units/RCX-00001/traces" + query, type, body.getBytes(StandardCharsets.UTF_8));
        assertEquals(status, reply.status(), reply.body());
        assertTrue(reply.contentType().startsWith("application/problem+json"), reply.contentType());
        JsonNode problem = reply.json();
        assertEquals(status, problem.get("status").asInt());
        assertTrue(problem.get("type").asText().startsWith("/problems/"));
        if (field != null) {
            assertEquals(field, problem.get("errors").get(0).get("field").asText(), reply.body());
        }
        assertEquals(before, Database.signature(db));
    }
}
