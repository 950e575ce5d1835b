package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.util.Map;

/** Servers with access control on, a known admin key, and helpers to issue keys and post traces. */
final class AuthFixture {
    static final String ADMIN_ID = "00000000000000ad";
    /** A fixed admin key given as BACKSTATE_ADMIN_KEY (test-only; real keys come from SecureRandom). */
    static final String ADMIN_KEY = "bsk_" + ADMIN_ID + "_" + "0123456789abcdef".repeat(4);
    /** Any invented unit ID can take a demo trace; this file fits reefer-40 v1. */
    static final String TRACE_FILE = "demo/traces/RCX-12471.csv";

    private AuthFixture() {
    }

    static Map<String, String> env() {
        return Map.of("BACKSTATE_AUTH", "on", "BACKSTATE_ADMIN_KEY", ADMIN_KEY);
    }

    /** A key as issued: its text and ID. */
    record Key(String text, String id) {
    }

    static Key issue(TestServer server, String role, String unitPatternOrNull, String label) {
        String json = "{\"role\":\"" + role + "\",\"label\":\"" + label + "\""
                + (unitPatternOrNull == null ? "" : ",\"unitPattern\":\"" + unitPatternOrNull + "\"") + "}";
        TestServer.Reply r = AsKey.bearer(server, ADMIN_KEY).postJson("/v1/keys", json);
        assertEquals(201, r.status(), r.body());
        JsonNode body = r.json();
        return new Key(body.get("key").asText(), body.get("id").asText());
    }

    static void revoke(TestServer server, String id) {
        TestServer.Reply r = AsKey.bearer(server, ADMIN_KEY).post("/v1/keys/" + id + "/revoke", null, new byte[0]);
        assertEquals(200, r.status(), r.body());
    }

    static void publishDemoModels(TestServer server) {
        AsKey admin = AsKey.bearer(server, ADMIN_KEY);
        assertEquals(201, admin.postJson("/v1/models", "{\"name\":\"reefer-40\",\"description\":\"demo\"}").status());
        TestServer.Reply r = admin.post("/v1/models/reefer-40/versions", "application/json", file("demo/models/reefer-40.v1.json"));
        assertEquals(201, r.status(), r.body());
    }

    static TestServer.Reply postTrace(AsKey caller, String unitId) {
        return caller.post("/v1/units/" + unitId + "/traces?model=reefer-40&version=1", "text/csv", file(TRACE_FILE));
    }

    /** Posts a trace as admin and returns its job's ID. */
    static String jobFor(TestServer server, String unitId) {
        TestServer.Reply r = postTrace(AsKey.bearer(server, ADMIN_KEY), unitId);
        assertEquals(202, r.status(), r.body());
        return r.json().get("jobId").asText();
    }

    static byte[] file(String relative) {
        try {
            return Files.readAllBytes(TestServer.TEST_DATA.resolve(relative));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
