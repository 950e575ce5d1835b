package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.WebElement;

/**
 * Text from users' documents (here a state's unit in a model version) is shown as text, never run
 * as markup: a unit written as an image tag whose error handler sets a flag leaves the flag unset,
 * loads nothing, and reads back as the same characters on the interval chart's axis.
 */
class MarkupInDataTest {
    static final String UNIT_ID = "ODD-1";
    static final String MARKUP = "<img src=x onerror=__ran=1>";

    @TempDir
    static Path dir;
    static TestServer server;
    static ConsoleBrowser browser;

    @BeforeAll
    static void a_model_whose_state_unit_is_markup() throws Exception {
        browser = ConsoleBrowser.open();
        server = new TestServer(dir);
        ObjectMapper json = new ObjectMapper();
        ObjectNode model = (ObjectNode) json.readTree(Files.readString(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json")));
        model.get("states").forEach(s -> ((ObjectNode) s).put("unit", MARKUP));
        server.postJson("/v1/models", Map.of("name", "odd", "description", "markup in a unit"));
        TestServer.Reply published = server.post("/v1/models/odd/versions", "application/json", json.writeValueAsBytes(model));
        assertEquals(201, published.status(), published.body());
        UnitPageTest.postTrace(server, UNIT_ID, "odd", new ReeferTraces(TestServer.TEST_DATA).csv(360, 11),
                Instant.parse("2026-11-28T06:00:00Z"));
    }

    @AfterAll
    static void close() {
        if (browser != null) {
            browser.close();
        }
        if (server != null) {
            server.close();
        }
    }

    @Test
    void a_unit_written_as_markup_is_shown_as_its_characters_and_never_runs() {
        browser.visit(server.base() + "/#/units/" + UNIT_ID);
        assertEquals(Boolean.TRUE, browser.driver.executeScript("return typeof __ran === 'undefined'"));
        assertEquals(0, browser.findAll(".interval-chart img").size(), "no element made from the unit");
        boolean shown = false;
        for (WebElement label : browser.findAll(".interval-chart text.axis-label")) {
            shown |= MARKUP.equals(label.getText());
        }
        assertTrue(shown, "the unit reads back on an interval chart's axis");
        browser.assertNoConsoleErrors();
    }
}
