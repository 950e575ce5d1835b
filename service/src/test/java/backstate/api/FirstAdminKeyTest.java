package backstate.api;

import static backstate.api.AuthFixture.ADMIN_ID;
import static backstate.api.AuthFixture.ADMIN_KEY;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** How the first admin key comes to exist: from BACKSTATE_ADMIN_KEY, or generated and printed once. */
class FirstAdminKeyTest {
    static final Pattern ANY_KEY = Pattern.compile("bsk_[0-9a-f]{16}_[0-9a-f]{64}");
    static final Map<String, String> AUTH_ON = Map.of("BACKSTATE_AUTH", "on");

    @Test
    void without_a_configured_key_one_admin_key_is_generated_printed_once_and_works(@TempDir Path dir) {
        String printed;
        try (ConsoleCapture console = new ConsoleCapture(); TestServer server = new TestServer(dir, AUTH_ON)) {
            List<String> keys = keysIn(console.text());
            assertEquals(1, keys.size(), "exactly one key printed: " + keys.size());
            printed = keys.get(0);
            assertEquals(200, AsKey.bearer(server, printed).get("/v1/keys").status());
        }
        try (ConsoleCapture console = new ConsoleCapture(); TestServer again = new TestServer(dir, AUTH_ON)) {
            assertEquals(List.of(), keysIn(console.text()), "a restart prints no key");
            assertEquals(200, AsKey.bearer(again, printed).get("/v1/keys").status());
            assertEquals(1, AsKey.bearer(again, printed).get("/v1/keys").json().get("items").size());
        }
    }

    @Test
    void configured_key_is_stored_as_a_hash_once_and_nothing_is_generated_or_printed(@TempDir Path dir) {
        for (int start = 0; start < 2; start++) {
            try (ConsoleCapture console = new ConsoleCapture(); TestServer server = new TestServer(dir, AuthFixture.env())) {
                assertEquals(List.of(), keysIn(console.text()), "no key text in the log");
                TestServer.Reply list = AsKey.bearer(server, ADMIN_KEY).get("/v1/keys");
                assertEquals(200, list.status());
                assertEquals(1, list.json().get("items").size());
                assertEquals(ADMIN_ID, list.json().get("items").get(0).get("id").asText());
            }
        }
    }

    @Test
    void revoked_configured_key_stays_revoked_after_a_restart(@TempDir Path dir) {
        AuthFixture.Key second;
        try (TestServer server = new TestServer(dir, AuthFixture.env())) {
            second = AuthFixture.issue(server, "admin", null, "successor");
            AuthFixture.revoke(server, ADMIN_ID);
        }
        try (ConsoleCapture console = new ConsoleCapture(); TestServer server = new TestServer(dir, AuthFixture.env())) {
            assertEquals(401, AsKey.bearer(server, ADMIN_KEY).get("/v1/keys").status());
            assertEquals(200, AsKey.bearer(server, second.text()).get("/v1/keys").status());
            assertEquals(List.of(), keysIn(console.text()), "an admin key exists, so none is generated");
        }
    }

    @Test
    void malformed_configured_key_stops_the_start_without_showing_the_value(@TempDir Path dir) {
        String value = "hunter2-not-a-key";
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> new TestServer(dir, Map.of("BACKSTATE_AUTH", "on", "BACKSTATE_ADMIN_KEY", value)));
        assertTrue(e.getMessage().contains("BACKSTATE_ADMIN_KEY"), e.getMessage());
        assertFalse(e.getMessage().contains(value), e.getMessage());
    }

    @Test
    void configured_key_whose_id_is_stored_with_another_secret_stops_the_start(@TempDir Path dir) {
        new TestServer(dir, AuthFixture.env()).close();
        String impostor = "bsk_" + ADMIN_ID + "_" + "e".repeat(64);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> new TestServer(dir, Map.of("BACKSTATE_AUTH", "on", "BACKSTATE_ADMIN_KEY", impostor)));
        assertTrue(e.getMessage().contains(ADMIN_ID), e.getMessage());
        assertFalse(e.getMessage().contains("e".repeat(64)), e.getMessage());
    }

    @Test
    void with_access_control_off_no_key_is_generated_and_routes_are_open(@TempDir Path dir) {
        try (ConsoleCapture console = new ConsoleCapture(); TestServer server = new TestServer(dir)) {
            assertEquals(List.of(), keysIn(console.text()));
            assertEquals(200, AsKey.none(server).get("/v1/keys").status());
            assertEquals(0, Database.count(dir.resolve("test.db"), "api_keys"));
        }
    }

    static List<String> keysIn(String text) {
        List<String> keys = new ArrayList<>();
        Matcher m = ANY_KEY.matcher(text);
        while (m.find()) {
            keys.add(m.group());
        }
        return keys;
    }
}
