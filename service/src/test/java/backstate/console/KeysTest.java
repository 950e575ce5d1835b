package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.JsonNode;
import java.net.URI;
import java.net.http.HttpRequest;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The console with access control on (a serve instance): a key typed once in the masthead is used
 * for every call and kept in this tab's session storage only; a missing or wrong key, and a key
 * whose role may not do something, are refused in words. Check values: the API's answers to the
 * same key, and the browser's own storage and address.
 */
class KeysTest {
    /** A fixed admin key given as BACKSTATE_ADMIN_KEY (test-only text in the service's key format). */
    static final String ADMIN_KEY = "bsk_00000000000000ad_" + "0123456789abcdef".repeat(4);
    /** Same ID, other secret: well formed, but not the key the service holds. */
    static final String WRONG_KEY = "bsk_00000000000000ad_" + "fedcba9876543210".repeat(4);
    static final String REFUSED = "The service needs an API key for this, or refused the one given (401). Type a valid key above.";

    @Test
    void a_key_typed_once_opens_the_pages_and_a_missing_or_wrong_key_is_refused_in_words(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir, Map.of("BACKSTATE_AUTH", "on", "BACKSTATE_ADMIN_KEY", ADMIN_KEY));
             ConsoleBrowser browser = ConsoleBrowser.open()) {
            publishDemoModels(server);

            browser.visit(server.base() + "/#/models");
            assertEquals("Problem: " + REFUSED, browser.message());
            assertTrue(browser.findAll("section[data-family]").isEmpty(), "nothing shown without a key");
            assertOnlyRefusals(browser.consoleErrors(), "401");
            browser.screenshot("keys-refused");

            typeKey(browser, WRONG_KEY);
            assertEquals("Problem: " + REFUSED, browser.message(), "a wrong key is refused in the same words");
            assertEquals("key refused (this tab)", browser.find("#key-state").getText(), "the box says its key was refused");
            assertTrue(browser.findAll("section[data-family]").isEmpty());

            typeKey(browser, ADMIN_KEY);
            assertEquals("", browser.message());
            JsonNode versions = asKey(server, ADMIN_KEY, "/v1/models/reefer-40/versions").get("items");
            List<String> expected = new ArrayList<>();
            versions.forEach(v -> expected.add(v.get("version").asText()));
            assertEquals(String.join(",", expected),
                    browser.find("section[data-family='reefer-40'] table").getAttribute("data-versions"));
            List<Double> singularValues = new ArrayList<>();
            versions.get(0).get("observability").get("singularValues").forEach(s -> singularValues.add(s.asDouble()));
            assertEquals(singularValues, browser.findAll("section[data-family='reefer-40'] tbody tr:first-child .num").stream()
                    .map(e -> Double.parseDouble(e.getAttribute("data-value"))).toList());
            assertEquals("key in use (this tab)", browser.find("#key-state").getText());

            browser.find("nav a[data-section='regressions']").click();
            browser.awaitRendered();
            assertEquals("", browser.message(), "the same key serves the next page's calls");
            assertKeyKeptInThisTabOnly(browser);
        }
    }

    @Test
    void a_reader_key_sees_a_run_but_its_cancel_is_refused_with_a_clear_403(@TempDir Path dir) throws Exception {
        try (RegressionByHand server = new RegressionByHand(dir, ADMIN_KEY); ConsoleBrowser browser = ConsoleBrowser.open()) {
            String reader = server.postAsAdmin("/v1/keys", "{\"role\":\"reader\",\"label\":\"console test\"}").get("key").asText();
            String id = server.startRun();

            browser.visit(server.base + "/#/regressions/" + id);
            assertEquals("Problem: " + REFUSED, browser.message());
            typeKey(browser, reader);
            assertEquals("queued", browser.find("#run").getAttribute("data-state"));
            assertEquals(Integer.toString(RegressionByHand.TRACES), browser.find(".bar-run").getAttribute("data-total"));

            browser.find("#cancel-run").click();
            RegressionPageTest.awaitText(browser, "#cancel-outcome", "Not cancelled");
            String refusal = "Not cancelled: this key may not cancel runs (403); cancelling needs an admin key.";
            assertEquals(refusal, browser.find("#cancel-outcome").getText());
            assertEquals("Problem: " + refusal, browser.message());
            JsonNode run = server.get("/v1/regressions/" + id);
            assertEquals("queued", run.get("state").asText());
            assertFalse(run.get("cancelRequested").asBoolean());
            assertOnlyRefusals(browser.consoleErrors(), "401", "403");
            assertKeyKeptInThisTabOnly(browser);
            browser.screenshot("keys-reader-cancel");
        }
    }

    static void typeKey(ConsoleBrowser browser, String key) {
        browser.find("#key-input").sendKeys(key);
        browser.find("#key-form button[type='submit']").click();
        browser.awaitRendered();
        assertEquals("", browser.find("#key-input").getAttribute("value"), "the box is emptied once the key is taken");
    }

    /** In session storage only: not in the address, not in local storage, not in the page's text. */
    static void assertKeyKeptInThisTabOnly(ConsoleBrowser browser) {
        String key = (String) browser.driver.executeScript("return sessionStorage.getItem('backstate.apiKey')");
        assertTrue(key != null && key.startsWith("bsk_"), "the key is in session storage");
        String secret = key.substring(key.lastIndexOf('_') + 1);
        assertFalse(browser.driver.getCurrentUrl().contains(secret), browser.driver.getCurrentUrl());
        assertEquals(0L, browser.driver.executeScript("return localStorage.length"));
        assertFalse(browser.driver.getPageSource().contains(secret), "the key is not written into the page");
    }

    /** Every console error is a refused request (a failed load with one of these statuses). */
    static void assertOnlyRefusals(List<String> errors, String... statuses) {
        assertFalse(errors.isEmpty(), "the refused request shows in the browser's console");
        for (String error : errors) {
            assertTrue(List.of(statuses).stream().anyMatch(s -> error.contains("status of " + s)), error);
        }
    }

    static JsonNode asKey(TestServer server, String key, String path) {
        TestServer.Reply r = server.send(HttpRequest.newBuilder(URI.create(server.base() + path))
                .header("Authorization", "Bearer " + key).GET());
        assertEquals(200, r.status(), r.body());
        return r.json();
    }

    static void publishDemoModels(TestServer server) throws Exception {
        String auth = "Bearer " + ADMIN_KEY;
        TestServer.Reply family = server.post("/v1/models", "application/json",
                "{\"name\":\"reefer-40\",\"description\":\"demo\"}".getBytes(java.nio.charset.StandardCharsets.UTF_8),
                "Authorization", auth);
        assertEquals(201, family.status(), family.body());
        for (int v = 1; v <= 2; v++) {
            TestServer.Reply r = server.post("/v1/models/reefer-40/versions", "application/json",
                    Files.readAllBytes(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v" + v + ".json")), "Authorization", auth);
            assertEquals(201, r.status(), r.body());
        }
    }
}
