package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Files;
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

    @Test
    void a_model_document_chosen_in_the_file_field_is_published_as_the_next_version(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            server.publishDemoModels();
            browser.visit(server.base() + "/#/models/reefer-40");
            Path document = TestServer.TEST_DATA.resolve("demo/models/reefer-40.v2.json").toAbsolutePath().normalize();

            browser.find("section[data-family='reefer-40'] input[type=file]").sendKeys(document.toString());
            browser.find("section[data-family='reefer-40'] form.publish button[type=submit]").click();

            // The page re-renders after the publish, so an element found mid-way may go stale: look again.
            new org.openqa.selenium.support.ui.WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT)
                    .ignoring(org.openqa.selenium.StaleElementReferenceException.class).until(d ->
                    "1,2,3".equals(d.findElement(org.openqa.selenium.By.cssSelector(
                            "section[data-family='reefer-40'] table")).getAttribute("data-versions")));
            browser.awaitRendered();
            assertEquals("Published reefer-40 version 3.", browser.message(), "the success is said on the page it leads to");
            JsonNode third = server.get("/v1/models/reefer-40/versions/3").json();
            assertEquals(3, third.get("version").asInt());
            assertEquals(server.get("/v1/models/reefer-40/versions/2").json().get("document"), third.get("document"));
            browser.assertNoConsoleErrors();
        }
    }

    /** A refused publish shows the problem's own words, naming the field, as the API gave them. */
    @Test
    void a_refused_model_document_shows_the_fields_the_problem_names(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            server.publishDemoModels();
            ObjectNode document = (ObjectNode) server.mapper.readTree(
                    TestServer.TEST_DATA.resolve("demo/models/reefer-40.v2.json").toFile());
            ((ArrayNode) document.get("a").get(0)).set(0, 1e16);
            Path file = dir.resolve("too-large.json");
            Files.write(file, server.mapper.writeValueAsBytes(document));
            JsonNode problem = server.post("/v1/models/reefer-40/versions", "application/json", Files.readAllBytes(file)).json();
            assertEquals(1, problem.get("errors").size(), problem.toString());

            browser.visit(server.base() + "/#/models/reefer-40");
            browser.find("section[data-family='reefer-40'] input[type=file]").sendKeys(file.toString());
            browser.find("section[data-family='reefer-40'] form.publish button[type=submit]").click();
            new org.openqa.selenium.support.ui.WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT)
                    .until(d -> !d.findElement(org.openqa.selenium.By.id("message")).getText().isEmpty());

            // The detail words the one field error already ("a[0][0]: got 1.0E16, …"): it is shown once.
            assertEquals("Problem: " + problem.get("detail").asText(), browser.find("#message").getText());
            assertEquals(2, server.get("/v1/models/reefer-40/versions").json().get("items").size(), "nothing published");
        }
    }
}
