package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The models page in a real browser shows each family's versions and observability as the API gives them. */
class ModelsPageTest {

    @Test
    void the_models_page_lists_the_versions_and_singular_values_the_api_gives(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            server.publishDemoModels();
            browser.visit(server.base() + "/#/models");

            JsonNode versions = server.get("/v1/models/reefer-40/versions").json().get("items");
            List<String> expected = new ArrayList<>();
            versions.forEach(v -> expected.add(v.get("version").asText()));
            assertEquals(String.join(",", expected),
                    browser.find("section[data-family='reefer-40'] table").getAttribute("data-versions"));
            List<String> shown = browser.findAll("section[data-family='reefer-40'] tbody tr:first-child .num").stream()
                    .map(e -> e.getAttribute("data-value")).toList();
            List<String> api = new ArrayList<>();
            versions.get(0).get("observability").get("singularValues").forEach(s -> api.add(s.asText()));
            assertEquals(api.stream().map(Double::parseDouble).toList(), shown.stream().map(Double::parseDouble).toList());
            assertTrue(browser.find("#caution").getText().contains("never replace"), browser.find("#caution").getText());
            browser.assertNoConsoleErrors();
            browser.screenshot("models");
        }
    }
}
