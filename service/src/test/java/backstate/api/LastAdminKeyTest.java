package backstate.api;

import static backstate.api.AuthFixture.ADMIN_ID;
import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The last valid admin key cannot be revoked; once another exists, it can. */
class LastAdminKeyTest {

    @Test
    void last_admin_key_is_kept_until_another_admin_key_exists(@TempDir Path dir) {
        try (TestServer server = new TestServer(dir, AuthFixture.env())) {
            AsKey first = AsKey.bearer(server, ADMIN_KEY);
            TestServer.Reply refused = first.post("/v1/keys/" + ADMIN_ID + "/revoke", null, new byte[0]);
            assertEquals(409, refused.status(), refused.body());
            assertEquals(200, first.get("/v1/keys").status(), "still valid");

            AuthFixture.Key second = AuthFixture.issue(server, "admin", null, "second admin");
            assertEquals(200, first.post("/v1/keys/" + ADMIN_ID + "/revoke", null, new byte[0]).status());
            assertEquals(401, first.get("/v1/keys").status());
            AsKey next = AsKey.bearer(server, second.text());
            assertEquals(200, next.get("/v1/keys").status());
            assertEquals(409, next.post("/v1/keys/" + second.id() + "/revoke", null, new byte[0]).status());
        }
    }
}
