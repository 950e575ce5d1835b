package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.support.ui.WebDriverWait;

/**
 * The planning page in a real browser with the demo models: what it plots and tabulates equals the
 * plans route's answer to the request the page sent, read back from the page.
 */
class PlanPageTest {
    static final ObjectMapper JSON = new ObjectMapper();
    static final String PLAN = "/v1/models/reefer-40/versions/1/plans";

    @TempDir
    static Path dir;
    static TestServer server;

    @BeforeAll
    static void publish_the_demo_models() throws Exception {
        server = new TestServer(dir);
        server.publishDemoModels();
    }

    @AfterAll
    static void stop() {
        server.close();
    }

    /** The request the page sent and the route's answer to the same request. */
    static JsonNode[] requestAndAnswer(ConsoleBrowser browser) throws Exception {
        JsonNode request = JSON.readTree(browser.find("section.plan-results").getAttribute("data-request"));
        TestServer.Reply reply = server.postJson(PLAN, request);
        assertEquals(200, reply.status(), reply.body());
        return new JsonNode[] {request, reply.json()};
    }

    @Test
    void a_model_without_noise_sigma_shows_the_form_and_plans_once_sigma_is_typed() throws Exception {
        UnitPageTest.publishWithoutSigma(server);
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/plan/" + UnitPageTest.NO_SIGMA_FAMILY + "/1");
            assertEquals("", browser.message(), "no problem shown for a form not yet filled in");
            assertTrue(browser.find("[data-field='formNeeded']").getText().startsWith("Complete the form, then predict:"
                    + " σ of return_air: got \"\""), browser.find("[data-field='formNeeded']").getText());
            browser.find("#plan-sigma-0").sendKeys("0.15");
            browser.find("#plan-sigma-1").sendKeys("0.15");
            browser.find("form.plan-form button[type=submit]").click();
            new org.openqa.selenium.support.ui.WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT)
                    .until(d -> !d.findElements(org.openqa.selenium.By.cssSelector("section.plan-results figure.plot")).isEmpty());
            JsonNode request = JSON.readTree(browser.find("section.plan-results").getAttribute("data-request"));
            assertEquals(0.15, request.get("noiseSigma").get("supply_air").asDouble());
            browser.assertNoConsoleErrors();
        }
    }

    /** The plot's x and every sensor set's line, and the table's shortest windows, equal the plan's. */
    static void assertPageShows(ConsoleBrowser browser, JsonNode request, JsonNode plan) throws Exception {
        String state = request.get("targetStdErrors").fieldNames().next();
        JsonNode plotted = JSON.readTree(browser.find("section.plan-results figure.plot").getAttribute("data-plot"));
        List<String> labels = new ArrayList<>();
        List<Double> x = new ArrayList<>();
        plan.get("subsets").get(0).get("horizons").forEach(p -> x.add(p.get("horizon").asDouble()));
        assertEquals(x, JSON.convertValue(plotted.get("x"), List.class).stream().map(v -> ((Number) v).doubleValue()).toList());
        for (JsonNode subset : plan.get("subsets")) {
            String label = String.join(" + ", JSON.convertValue(subset.get("outputs"), String[].class));
            labels.add(label);
            JsonNode line = plotted.get("series").get(label);
            assertEquals(subset.get("horizons").size(), line.size(), label);
            for (int i = 0; i < line.size(); i++) {
                assertEquals(subset.get("horizons").get(i).get("standardErrors").get(state).asDouble(), line.get(i).asDouble(), 0,
                        label + " at " + x.get(i) + " s");
            }
            WebElement row = browser.find("table.shortest tr[data-sensors='" + label + "']");
            String shortest = row.findElement(org.openqa.selenium.By.cssSelector("td[data-field='shortest'] .num")).getAttribute("data-value");
            JsonNode expected = subset.get("shortestHorizonMeetingTargets");
            assertEquals(expected == null ? "" : String.valueOf(expected.asDouble()),
                    shortest.isEmpty() ? "" : String.valueOf(Double.parseDouble(shortest)), label);
        }
        assertEquals(labels, browser.findAll("table.shortest tbody tr").stream().map(r -> r.getAttribute("data-sensors")).toList());
        assertEquals(request.get("targetStdErrors").get(state).asDouble(), plotted.get("rule").get("value").asDouble());
    }

    @Test
    void the_plotted_standard_errors_and_shortest_windows_equal_the_plans_route() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/plan/reefer-40/1");
            JsonNode[] sent = requestAndAnswer(browser);
            JsonNode request = sent[0];
            // Defaults from the model document (test-data/demo/models/reefer-40.v1.json): σ 0.15 per output,
            // each output alone and both together, the last state.
            assertEquals(0.15, request.get("noiseSigma").get("return_air").asDouble());
            assertEquals(0.15, request.get("noiseSigma").get("supply_air").asDouble());
            assertEquals("[[\"return_air\"],[\"supply_air\"],[\"return_air\",\"supply_air\"]]", request.get("outputSubsets").toString());
            assertTrue(request.get("targetStdErrors").has("cargo_core"));
            assertPageShows(browser, request, sent[1]);

            // numpy (test-data/demo/README.md, generate_demo.py): both outputs, 60 s, σ 0.15: cargo_core
            // standard error 0.194 at 240 min and 0.0839 at 360 min.
            JsonNode plotted = JSON.readTree(browser.find("section.plan-results figure.plot").getAttribute("data-plot"));
            List<Double> x = new ArrayList<>();
            plotted.get("x").forEach(v -> x.add(v.asDouble()));
            JsonNode both = plotted.get("series").get("return_air + supply_air");
            assertEquals(0.194, both.get(x.indexOf(14400.0)).asDouble(), 0.0005);
            assertEquals(0.0839, both.get(x.indexOf(21600.0)).asDouble(), 0.00005);
            browser.assertNoConsoleErrors();
            browser.screenshot("plan");
        }
    }

    @Test
    void a_changed_form_asks_again_and_the_page_shows_the_new_answer() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/plan/reefer-40/1");
            String before = browser.find("section.plan-results").getAttribute("data-request");
            set(browser, "#plan-target", "0.2");
            set(browser, "#plan-step", "1");
            browser.find("#plan-set-1").click();
            browser.find(".plan-form button[type='submit']").click();
            new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d ->
                    !before.equals(browser.find("section.plan-results").getAttribute("data-request"))
                            && "ready".equals(browser.find("section.plan-results").getAttribute("data-state")));
            JsonNode[] sent = requestAndAnswer(browser);
            assertEquals(0.2, sent[0].get("targetStdErrors").get("cargo_core").asDouble());
            List<Double> horizons = new ArrayList<>();
            sent[0].get("horizons").forEach(v -> horizons.add(v.asDouble()));
            assertEquals(List.of(1800.0, 5400.0, 9000.0, 12600.0, 16200.0, 19800.0, 23400.0, 27000.0, 30600.0, 34200.0, 37800.0,
                    41400.0), horizons, "0.5 h to 12 h every hour");
            assertEquals(2, sent[0].get("outputSubsets").size(), "supply_air alone unticked");
            assertPageShows(browser, sent[0], sent[1]);
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void too_many_windows_are_refused_with_a_message_naming_the_field() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/plan/reefer-40/1");
            set(browser, "#plan-step", "0.1");
            browser.find(".plan-form button[type='submit']").click();
            assertTrue(browser.message().startsWith("Problem: windows: 116 candidates"), browser.message());
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void the_chooser_links_every_version_to_its_plan() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/plan");
            List<String> links = browser.findAll("section[data-family='reefer-40'] table a").stream()
                    .map(a -> a.getAttribute("href").replace(server.base() + "/", "")).toList();
            assertEquals(List.of("#/plan/reefer-40/1", "#/plan/reefer-40/2"), links);
            browser.findAll("section[data-family='reefer-40'] table a").get(1).click();
            browser.awaitRendered();
            assertTrue(browser.find("h1").getText().contains("reefer-40 v2"), browser.find("h1").getText());
            assertEquals("ready", browser.find("section.plan-results").getAttribute("data-state"));
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void on_a_tablet_the_page_fits_its_width() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open(820, 1180)) {
            browser.visit(server.base() + "/#/plan/reefer-40/1");
            long overflow = (Long) browser.driver.executeScript(
                    "return document.documentElement.scrollWidth - document.documentElement.clientWidth;");
            assertEquals(0, overflow, "horizontal scrolling at 820 px");
            browser.assertNoConsoleErrors();
            browser.screenshot("plan-tablet");
        }
    }

    private static void set(ConsoleBrowser browser, String css, String value) {
        WebElement input = browser.find(css);
        input.clear();
        input.sendKeys(value);
    }
}
