package backstate.api;

import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * JSON bodies other than traces (model documents, key and regression requests) refuse a key
 * written twice, media types are matched exactly, and a model's names must let every trace form
 * address every channel. Each refusal is a 400/415 problem naming the field and stores nothing.
 * The rules are RFC 8259 §4 (names SHOULD be unique; this API makes it a MUST) and RFC 9110 §8.3.1
 * (a media type is type/subtype, parameters after ";").
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class StrictInputTest {
    static final String V1 = "demo/models/reefer-40.v1.json";

    TestServer server;
    AsKey admin;
    Path db;

    @BeforeAll
    void start(@TempDir Path dir) {
        server = new TestServer(dir, AuthFixture.env());
        db = dir.resolve("test.db");
        admin = AsKey.bearer(server, ADMIN_KEY);
        AuthFixture.publishDemoModels(server);
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static String v1() {
        return new String(AuthFixture.file(V1), StandardCharsets.UTF_8);
    }

    static Stream<Arguments> refused() {
        String v1 = v1();
        String versions = "/v1/models/reefer-40/versions";
        return Stream.of(
                // were merged, the last one kept
                Arguments.of("model with timeDomain twice", versions, "application/json",
                        v1.replaceFirst("\\{", "{\"timeDomain\": \"discrete\", "), 400, "body.timeDomain"),
                Arguments.of("model with a name twice in one output", versions, "application/json",
                        v1.replace("{\"name\": \"supply_air\"", "{\"name\": \"x\", \"name\": \"supply_air\""), 400, "body.outputs[1].name"),
                Arguments.of("key request with role twice", "/v1/keys", "application/json",
                        "{\"role\":\"admin\",\"label\":\"l\",\"role\":\"reader\"}", 400, "body.role"),
                Arguments.of("regression request with candidate twice", "/v1/regressions", "application/json",
                        "{\"family\":\"reefer-40\",\"baseline\":1,\"candidate\":1,\"candidate\":2}", 400, "body.candidate"),
                Arguments.of("family with name twice", "/v1/models", "application/json",
                        "{\"name\":\"a\",\"name\":\"b\"}", 400, "body.name"),
                // were accepted: the media type was matched by prefix
                Arguments.of("model as application/jsonx", versions, "application/jsonx", v1, 415, "Content-Type"),
                Arguments.of("model as application/json-seq", versions, "application/json-seq", v1, 415, "Content-Type"),
                // were published, and then no CSV trace could name their channels
                Arguments.of("an input named like an output", versions, "application/json",
                        v1.replace("\"name\": \"ambient\"", "\"name\": \"return_air\""), 400, "inputs[1].name"),
                Arguments.of("an output named like a state", versions, "application/json",
                        v1.replace("\"name\": \"supply_air\"", "\"name\": \"air\""), 400, "outputs[1].name"),
                Arguments.of("an output named time", versions, "application/json",
                        v1.replace("\"name\": \"supply_air\"", "\"name\": \"time\""), 400, "outputs[1].name"),
                Arguments.of("a state named time", versions, "application/json",
                        v1.replace("\"name\": \"wall\"", "\"name\": \"time\""), 400, "states[0].name"),
                // were published, then every solve came back "unobservable" with components not computed
                Arguments.of("a noise sigma of 1e-320", versions, "application/json",
                        v1.replaceFirst("\"noiseSigma\": 0.15", "\"noiseSigma\": 1e-320"), 400, "outputs[0].noiseSigma"),
                Arguments.of("an entry of 1e300 in a", versions, "application/json",
                        v1.replace("[-0.000475,", "[1e300,"), 400, "a[0][0]"),
                // were 422 naming noiseSigma[0] (the engine's name) and "got Infinity"
                Arguments.of("a negative noise sigma", versions, "application/json",
                        v1.replaceFirst("\"noiseSigma\": 0.15", "\"noiseSigma\": -0.15"), 400, "outputs[0].noiseSigma"),
                Arguments.of("an entry of 1e400 in a", versions, "application/json",
                        v1.replace("[-0.000475,", "[1e400,"), 400, "a[0][0]"),
                // was published with the σ silently unused (a state's noise is processNoise)
                Arguments.of("a noise sigma on a state", versions, "application/json",
                        v1.replace("{\"name\": \"wall\", \"unit\": \"degC\"}",
                                "{\"name\": \"wall\", \"unit\": \"degC\", \"noiseSigma\": 0.1}"), 400, "states[0].noiseSigma"),
                Arguments.of("a noise sigma on an input", versions, "application/json",
                        v1.replace("{\"name\": \"ambient\", \"unit\": \"degC\"}",
                                "{\"name\": \"ambient\", \"unit\": \"degC\", \"noiseSigma\": 0.1}"), 400, "inputs[1].noiseSigma"),
                // were converted: a string or a number taken for a boolean, a string for a number
                Arguments.of("a regression's baseline as a string", "/v1/regressions", "application/json",
                        "{\"family\":\"reefer-40\",\"baseline\":\"1\",\"candidate\":2}", 400, "body.baseline"),
                Arguments.of("a regression's latestPerUnit as a string", "/v1/regressions", "application/json",
                        "{\"family\":\"reefer-40\",\"baseline\":1,\"candidate\":2,\"traces\":{\"latestPerUnit\":\"1\"}}",
                        400, "body.traces.latestPerUnit"),
                Arguments.of("a trace's estimateOffsets as a string", "/v1/units/RCX-1/traces?model=reefer-40&version=1",
                        "application/json", "{\"time\":[0,60],\"outputs\":{\"return_air\":[1,2],\"supply_air\":[1,2]},"
                                + "\"inputs\":{\"cooling_power\":[0,0],\"ambient\":[0,0]},\"options\":{\"estimateOffsets\":\"true\"}}",
                        400, "options.estimateOffsets"),
                Arguments.of("a trace's estimateOffsets as a number", "/v1/units/RCX-1/traces?model=reefer-40&version=1",
                        "application/json", "{\"time\":[0,60],\"outputs\":{\"return_air\":[1,2],\"supply_air\":[1,2]},"
                                + "\"inputs\":{\"cooling_power\":[0,0],\"ambient\":[0,0]},\"options\":{\"estimateOffsets\":1}}",
                        400, "options.estimateOffsets"));
    }

    @ParameterizedTest(name = "{0} gets {3}")
    @MethodSource("refused")
    void a_body_that_is_ambiguous_or_mislabelled_is_refused_naming_the_field(String name, String path, String type,
                                                                             String body, int status, String field) {
        String before = Database.signature(db);
        TestServer.Reply r = admin.post(path, type, body.getBytes(StandardCharsets.UTF_8));
        assertEquals(status, r.status(), r.body());
        assertTrue(r.contentType().startsWith("application/problem+json"), r.contentType());
        assertEquals(field, r.json().get("errors").get(0).get("field").asText(), r.body());
        assertEquals(before, Database.signature(db));
    }

    @Test
    void a_model_whose_state_overflows_within_the_trace_fails_its_job_in_words_not_as_unobservable() throws Exception {
        // a[0][0] = +1000/s: the wall mode grows by e^60000 in one 60 s step, beyond the double range (1.8e308)
        TestServer.Reply published = admin.post("/v1/models/reefer-40/versions", "application/json",
                v1().replace("[-0.000475,", "[1000.0,").getBytes(StandardCharsets.UTF_8));
        assertEquals(201, published.status(), published.body());
        int version = published.json().get("version").asInt();
        TestServer.Reply posted = admin.post("/v1/units/RCX-00002/traces?model=reefer-40&version=" + version, "text/csv",
                AuthFixture.file(AuthFixture.TRACE_FILE));
        assertEquals(202, posted.status(), posted.body());
        JsonNode job = awaitJob(posted.json().get("jobId").asText());
        assertEquals("failed", job.get("state").asText(), job.toString());
        String error = job.toString();
        assertTrue(error.contains("leaves the floating-point range"), error);
        assertTrue(java.util.regex.Pattern.compile("over this trace's \\d+(\\.\\d{1,6})? s leaves").matcher(error).find(),
                "the window's span in plain digits, to the microsecond: " + error);
        assertFalse(error.contains("unobservable"), error);
        assertFalse(error.contains("Exception"), error);
        assertFalse(error.contains("null"), error);
    }

    JsonNode awaitJob(String jobId) throws InterruptedException {
        return TestServer.awaitFinished(admin::get, "/v1/jobs/" + jobId);
    }

    @Test
    void the_duplicate_key_is_named_in_the_detail() {
        TestServer.Reply r = admin.postJson("/v1/keys", "{\"role\":\"admin\",\"label\":\"l\",\"role\":\"reader\"}");
        assertEquals("body.role: got the key \"role\" twice in one object, expected each key once",
                r.json().get("detail").asText(), r.body());
    }

    @Test
    void the_unedited_model_is_published_with_a_charset_parameter_and_the_names_time_in_other_case_are_free() {
        String renamed = v1().replace("\"name\": \"wall\"", "\"name\": \"Time\"");
        TestServer.Reply r = admin.post("/v1/models/reefer-40/versions", "Application/JSON; charset=utf-8",
                renamed.getBytes(StandardCharsets.UTF_8));
        assertEquals(201, r.status(), r.body());
    }

    @Test
    void a_trace_under_text_csv_with_a_charset_parameter_is_accepted() throws Exception {
        TestServer.Reply r = admin.post("/v1/units/RCX-00001/traces?model=reefer-40&version=1", "text/csv; charset=utf-8",
                AuthFixture.file(AuthFixture.TRACE_FILE));
        assertEquals(202, r.status(), r.body());
        // Waited for, so its estimate is not written while another test compares the database before and after.
        assertEquals("succeeded", awaitJob(r.json().get("jobId").asText()).get("state").asText());
    }
}
