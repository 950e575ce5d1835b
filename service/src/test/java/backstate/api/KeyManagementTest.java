package backstate.api;

import static backstate.api.AuthFixture.ADMIN_ID;
import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** Issuing, listing and revoking keys, what each role can do with them, and what the database keeps. */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class KeyManagementTest {
    static final String KEY_FORMAT = "bsk_[0-9a-f]{16}_[0-9a-f]{64}";

    TestServer server;
    Path db;
    AsKey admin;

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

    @Test
    void issued_key_is_shown_once_and_listed_without_its_secret() {
        TestServer.Reply issued = admin.postJson("/v1/keys", "{\"role\":\"gateway\",\"unitPattern\":\"RCX-4?1*\",\"label\":\"gw 41\"}");
        assertEquals(201, issued.status(), issued.body());
        JsonNode body = issued.json();
        String key = body.get("key").asText();
        String id = body.get("id").asText();
        assertTrue(key.matches(KEY_FORMAT), key);
        assertEquals("bsk_" + id + "_", key.substring(0, 21));
        assertEquals("gateway", body.get("role").asText());
        assertEquals("RCX-4?1*", body.get("unitPattern").asText());
        assertEquals(ADMIN_ID, body.get("createdBy").asText());
        assertTrue(issued.headers().firstValue("Location").isEmpty(), "no Location: keys have no GET-by-ID route");
        assertEquals("no-store", issued.headers().firstValue("Cache-Control").orElse(""));

        TestServer.Reply list = admin.get("/v1/keys");
        assertEquals(200, list.status());
        assertFalse(list.body().contains(key.substring(21)), "the list shows a secret");
        JsonNode listed = find(list.json(), id);
        assertEquals("gw 41", listed.get("label").asText());
        assertEquals("RCX-4?1*", listed.get("unitPattern").asText());
        assertEquals(AccessMatrixTest.fieldNames(listed), java.util.Set.of("id", "role", "unitPattern", "label", "createdAt", "createdBy"));
        assertEquals("BACKSTATE_ADMIN_KEY", find(list.json(), ADMIN_ID).get("label").asText());
    }

    @Test
    void database_keeps_only_the_salted_sha256_of_each_key() throws Exception {
        AuthFixture.Key reader = AuthFixture.issue(server, "reader", null, "hash check");
        byte[] salt;
        byte[] hash;
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             PreparedStatement ps = c.prepareStatement("SELECT salt, hash FROM api_keys WHERE id = ?")) {
            ps.setString(1, reader.id());
            try (ResultSet rs = ps.executeQuery()) {
                assertTrue(rs.next());
                salt = rs.getBytes("salt");
                hash = rs.getBytes("hash");
            }
        }
        // The scheme in docs/security.md, computed here with the JDK alone: SHA-256(salt || key).
        MessageDigest sha = MessageDigest.getInstance("SHA-256");
        sha.update(salt);
        assertArrayEquals(sha.digest(reader.text().getBytes(StandardCharsets.US_ASCII)), hash);
        assertEquals(16, salt.length);
        String secret = reader.text().substring(21);
        for (Path file : new Path[] {db, Path.of(db + "-wal")}) {
            if (Files.exists(file)) {
                String bytes = new String(Files.readAllBytes(file), StandardCharsets.ISO_8859_1);
                assertFalse(bytes.contains(secret), file + " holds a key's secret");
                assertFalse(bytes.contains(ADMIN_KEY.substring(21)), file + " holds the admin key's secret");
            }
        }
    }

    @Test
    void gateway_posts_and_follows_jobs_for_its_units_only() {
        AuthFixture.Key gw = AuthFixture.issue(server, "gateway", "RCX-1*", "gateway north");
        AsKey gateway = AsKey.bearer(server, gw.text());
        TestServer.Reply accepted = AuthFixture.postTrace(gateway, "RCX-10415");
        assertEquals(202, accepted.status(), accepted.body());
        assertEquals(200, gateway.get("/v1/jobs/" + accepted.json().get("jobId").asText()).status());

        // Traces and jobs only: the accepted job above may write its estimate at any moment.
        long traces = Database.count(db, "traces");
        long jobs = Database.count(db, "jobs");
        TestServer.Reply outside = AuthFixture.postTrace(gateway, "RCX-20123");
        assertEquals(403, outside.status(), outside.body());
        assertEquals(traces, Database.count(db, "traces"), "a refused post stores no trace");
        assertEquals(jobs, Database.count(db, "jobs"), "a refused post queues no job");
        assertEquals(403, gateway.get("/v1/jobs/" + AuthFixture.jobFor(server, "RCX-20123")).status());
        assertEquals(403, gateway.get("/v1/units/RCX-10415/estimates/latest").status(), "gateways do not read estimates");
        assertEquals(403, gateway.get("/v1/keys").status());
        assertEquals(200, gateway.get("/v1/models").status(), "any key reads the model catalogue");
    }

    @Test
    void reader_reads_but_neither_posts_nor_manages() {
        AsKey reader = AsKey.bearer(server, AuthFixture.issue(server, "reader", null, "dashboard").text());
        assertEquals(200, reader.get("/v1/jobs/" + AuthFixture.jobFor(server, "RCX-777")).status());
        assertEquals(404, reader.get("/v1/units/RCX-000/estimates/latest").status(), "the handler answers the reader");
        assertEquals(403, AuthFixture.postTrace(reader, "RCX-777").status());
        assertEquals(403, reader.postJson("/v1/keys", "{\"role\":\"admin\",\"label\":\"escalate\"}").status());
        assertEquals(403, reader.postJson("/v1/models", "{\"name\":\"x\",\"description\":\"y\"}").status());
    }

    @Test
    void revoked_key_is_refused_at_once_and_revoking_again_changes_nothing() {
        AuthFixture.Key key = AuthFixture.issue(server, "reader", null, "short-lived");
        AsKey reader = AsKey.bearer(server, key.text());
        assertEquals(200, reader.get("/v1/models").status());
        TestServer.Reply first = admin.post("/v1/keys/" + key.id() + "/revoke", null, new byte[0]);
        assertEquals(200, first.status(), first.body());
        String revokedAt = first.json().get("revokedAt").asText();
        TestServer.Reply refused = reader.get("/v1/models");
        assertEquals(401, refused.status());
        assertEquals(AccessDenied.INVALID_TOKEN, refused.headers().firstValue("WWW-Authenticate").orElse(""));
        TestServer.Reply again = admin.post("/v1/keys/" + key.id() + "/revoke", null, new byte[0]);
        assertEquals(200, again.status());
        assertEquals(revokedAt, again.json().get("revokedAt").asText());
        assertEquals(404, admin.post("/v1/keys/0123456789abcdef/revoke", null, new byte[0]).status());
        assertEquals(400, admin.post("/v1/keys/NOT-AN-ID/revoke", null, new byte[0]).status());
    }

    @Test
    void bearer_scheme_is_case_insensitive_and_other_schemes_are_refused() {
        assertEquals(200, new AsKey(server, "bearer " + ADMIN_KEY).get("/v1/keys").status());
        TestServer.Reply basic = new AsKey(server, "Basic YWRtaW46YWRtaW4=").get("/v1/keys");
        assertEquals(401, basic.status());
        TestServer.Reply none = AsKey.none(server).get("/v1/keys");
        assertEquals(401, none.status());
        assertEquals(AccessDenied.CHALLENGE, none.headers().firstValue("WWW-Authenticate").orElse(""));
        assertEquals(200, AsKey.none(server).get("/healthz").status(), "public routes need no key");
    }

    static Stream<Arguments> badIssueRequests() {
        return Stream.of(
                Arguments.of("unknown role", "{\"role\":\"root\",\"label\":\"x\"}", "role"),
                Arguments.of("no role", "{\"label\":\"x\"}", "role"),
                Arguments.of("gateway without a pattern", "{\"role\":\"gateway\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("reader with a pattern", "{\"role\":\"reader\",\"unitPattern\":\"RCX-*\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("pattern with a slash", "{\"role\":\"gateway\",\"unitPattern\":\"RCX/*\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("pattern with regex syntax", "{\"role\":\"gateway\",\"unitPattern\":\"RCX-(1|2).*\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("pattern too long", "{\"role\":\"gateway\",\"unitPattern\":\"" + "R".repeat(65) + "\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("pattern with more stars than the cap (9)", "{\"role\":\"gateway\",\"unitPattern\":\"" + "*a".repeat(9) + "\",\"label\":\"x\"}", "unitPattern"),
                Arguments.of("no label", "{\"role\":\"reader\"}", "label"),
                Arguments.of("blank label", "{\"role\":\"reader\",\"label\":\"  \"}", "label"),
                Arguments.of("label with a line break", "{\"role\":\"reader\",\"label\":\"a\\nINFO forged\"}", "label"),
                Arguments.of("label too long", "{\"role\":\"reader\",\"label\":\"" + "x".repeat(101) + "\"}", "label"),
                Arguments.of("unknown field", "{\"role\":\"reader\",\"label\":\"x\",\"secret\":\"mine\"}", "body.secret"));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("badIssueRequests")
    void bad_issue_request_gets_400_naming_the_field_and_issues_nothing(String name, String json, String field) {
        long before = Database.count(db, "api_keys");
        TestServer.Reply r = admin.postJson("/v1/keys", json);
        assertEquals(400, r.status(), r.body());
        assertEquals(field, r.json().get("errors").get(0).get("field").asText(), r.body());
        assertEquals(before, Database.count(db, "api_keys"));
    }

    @Test
    void a_refused_label_or_key_id_is_described_in_the_refusal() {
        String expected = ", expected 1-100 printable characters naming who holds the key";
        assertEquals("got nothing" + expected, detail(admin.postJson("/v1/keys", "{\"role\":\"reader\"}")));
        assertEquals("got a blank label" + expected, detail(admin.postJson("/v1/keys", "{\"role\":\"reader\",\"label\":\"  \"}")));
        String unprintable = "got a label with a control, format or line-separator character" + expected;
        assertEquals(unprintable, detail(admin.postJson("/v1/keys", "{\"role\":\"reader\",\"label\":\"a\\nINFO forged\"}")));
        // Beyond ASCII's controls: a line separator, a C1 next-line and a right-to-left override (Unicode Zl, Cc, Cf).
        for (String escape : new String[] {"\\u2028", "\\u0085", "\\u202e"}) {
            assertEquals(unprintable, detail(admin.postJson("/v1/keys", "{\"role\":\"reader\",\"label\":\"a" + escape + "b\"}")));
        }
        assertEquals("got 101 characters" + expected,
                detail(admin.postJson("/v1/keys", "{\"role\":\"reader\",\"label\":\"" + "x".repeat(101) + "\"}")));
        assertEquals("got 9 characters, expected 16 lowercase hex digits (the part after bsk_)",
                detail(admin.post("/v1/keys/NOT-AN-ID/revoke", null, new byte[0])));
        // A whole key pasted for its ID is described, never echoed: its secret would be in the answer.
        String whole = "bsk_0123456789abcdef_" + "a".repeat(64);
        TestServer.Reply pasted = admin.post("/v1/keys/" + whole + "/revoke", null, new byte[0]);
        assertEquals("got a whole key, expected 16 lowercase hex digits (the part after bsk_)", detail(pasted));
        assertEquals(false, pasted.body().contains("aaaaaaaa"), pasted.body());
        assertEquals("got \"RCX-*\", expected none: only gateway keys have a unit pattern (this key's role is reader)",
                detail(admin.postJson("/v1/keys", "{\"role\":\"reader\",\"unitPattern\":\"RCX-*\",\"label\":\"x\"}")));
    }

    /** Two credentials are none: a proxy reading the other header would disagree about who called. */
    @Test
    void two_authorization_headers_are_refused_whichever_comes_first() {
        AuthFixture.Key reader = AuthFixture.issue(server, "reader", null, "reader");
        String adminHeader = "Bearer " + AuthFixture.ADMIN_KEY;
        for (String[] order : new String[][] {{adminHeader, "Bearer " + reader.text()}, {"Bearer " + reader.text(), adminHeader}}) {
            TestServer.Reply r = server.post("/v1/keys", "application/json",
                    "{\"role\":\"reader\",\"label\":\"x\"}".getBytes(java.nio.charset.StandardCharsets.UTF_8),
                    "Authorization", order[0], "Authorization", order[1]);
            assertEquals(401, r.status(), r.body());
        }
    }

    /** The one field error's detail of a 400. */
    private static String detail(TestServer.Reply reply) {
        assertEquals(400, reply.status(), reply.body());
        return reply.json().get("errors").get(0).get("detail").asText();
    }

    static JsonNode find(JsonNode page, String id) {
        for (JsonNode k : page.get("items")) {
            if (k.get("id").asText().equals(id)) {
                return k;
            }
        }
        throw new AssertionError("key " + id + " not listed in " + page);
    }
}
