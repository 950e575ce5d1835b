package backstate.api;

import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.javalin.http.HandlerType;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * HEAD is GET without the body (RFC 9110 §9.3.2), so it meets the same access rule and gets the
 * same status as GET from the same caller; a path with a trailing slash is not the resource
 * without it, and gets a 404 problem as any unknown path does.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class HeadAndTrailingSlashTest {
    TestServer server;
    AsKey admin;
    AsKey reader;
    AsKey nobody;

    @BeforeAll
    void start(@TempDir Path dir) {
        server = new TestServer(dir, AuthFixture.env());
        AuthFixture.publishDemoModels(server);
        admin = AsKey.bearer(server, ADMIN_KEY);
        reader = AsKey.bearer(server, AuthFixture.issue(server, "reader", null, "head-test").text());
        nobody = AsKey.none(server);
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @Test
    void head_without_a_key_on_a_protected_route_is_refused_like_get() {
        TestServer.Reply head = nobody.send("HEAD", "/v1/models", null, null);
        assertEquals(401, head.status());
        assertTrue(head.headers().firstValue("WWW-Authenticate").isPresent(), head.headers().toString());
        assertEquals("", head.body());
    }

    @Test
    void head_with_a_reader_key_on_an_admin_route_is_forbidden() {
        assertEquals(403, reader.send("HEAD", "/v1/keys", null, null).status());
    }

    @Test
    void head_with_a_permitted_key_answers_get_s_status_and_type_without_a_body() {
        TestServer.Reply get = admin.get("/v1/models/reefer-40");
        TestServer.Reply head = admin.send("HEAD", "/v1/models/reefer-40", null, null);
        assertEquals(200, head.status());
        assertEquals(get.contentType(), head.contentType());
        assertEquals("", head.body());
        assertEquals(404, admin.send("HEAD", "/v1/models/no-such-family", null, null).status());
    }

    @Test
    void every_get_route_answers_head_with_get_s_status_for_no_key_a_reader_and_an_admin() {
        List<String> differences = new ArrayList<>();
        for (Route r : server.app().api().routes()) {
            if (r.method() != HandlerType.GET) {
                continue;
            }
            String path = r.path().replace("{family}", "reefer-40").replace("{unitId}", "RCX-00001")
                    .replace("{version}", "1").replaceAll("\\{[A-Za-z]+}", "0000000000000000");
            for (AsKey caller : List.of(nobody, reader, admin)) {
                int get = caller.get(path).status();
                int head = caller.send("HEAD", path, null, null).status();
                if (get != head) {
                    differences.add("HEAD " + path + " as " + caller.authorization() + ": " + head + ", GET: " + get);
                }
            }
        }
        assertEquals(List.of(), differences);
    }

    @ParameterizedTest
    @ValueSource(strings = {"/v1/models/", "/healthz/", "/v1/models/reefer-40/", "/readyz/", "/openapi.yaml/"})
    void a_path_with_a_trailing_slash_is_not_found_as_a_problem(String path) {
        TestServer.Reply r = admin.get(path);
        assertEquals(404, r.status(), r.body());
        assertTrue(r.contentType().startsWith("application/problem+json"), r.contentType());
        assertEquals(200, admin.get(path.substring(0, path.length() - 1)).status(), "the same path without the slash");
    }
}
