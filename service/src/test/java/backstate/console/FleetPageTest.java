package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.By;
import org.openqa.selenium.Keys;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.interactions.Actions;
import org.openqa.selenium.support.ui.Select;
import org.openqa.selenium.support.ui.WebDriverWait;

/**
 * The fleet page in a real browser, on the demo fleet (loaded as {@code backstate demo} loads it):
 * its counts, histogram and lists equal the fleet routes' answers, read back from the page.
 */
class FleetPageTest {
    static final String FAMILY = "reefer-40";
    static final ObjectMapper JSON = new ObjectMapper();

    @TempDir
    static Path dir;
    static TestServer server;

    @BeforeAll
    static void load_the_demo_fleet() throws Exception {
        server = new TestServer(dir);
        new DemoLoader(server.base()).load();
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
        while (summary("?version=1").get("versions").get(0).get("estimates").asInt() < 20) {
            assertTrue(System.nanoTime() < deadline, "the demo fleet was not solved within 60 s");
            Thread.sleep(50);
        }
    }

    @AfterAll
    static void stop() {
        server.close();
    }

    static JsonNode summary(String query) {
        return server.get("/v1/fleet/" + FAMILY + "/summary" + query).json();
    }

    /** Every unit's newest estimate with version 1, paged along the cursor 7 at a time. */
    static List<JsonNode> allUnits() {
        List<JsonNode> units = new ArrayList<>();
        String cursor = null;
        do {
            JsonNode page = server.get("/v1/fleet/" + FAMILY + "/units?version=1&limit=7"
                    + (cursor == null ? "" : "&cursor=" + cursor)).json();
            page.get("items").forEach(units::add);
            cursor = page.get("nextCursor").isNull() ? null : page.get("nextCursor").asText();
        } while (cursor != null);
        return units;
    }

    static double value(WebElement cell) {
        return Double.parseDouble(cell.findElement(By.cssSelector(".num")).getAttribute("data-value"));
    }

    @Test
    void the_page_shows_the_summary_counts_per_version_and_per_flag() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/fleet");
            JsonNode summary = summary("");
            for (JsonNode v : summary.get("versions")) {
                String row = "table.versions tr[data-version='" + v.get("version").asInt() + "'] ";
                for (String field : List.of("units", "traces", "estimates")) {
                    assertEquals(v.get(field).asDouble(), value(browser.find(row + "td[data-field='" + field + "']")), field);
                }
                if (v.get("chiSquarePerDof").get("count").asInt() > 0) {
                    assertEquals(v.get("chiSquarePerDof").get("median").asDouble(),
                            value(browser.find(row + "td[data-field='chi2-median']")));
                    assertEquals(v.get("chiSquarePerDof").get("max").asDouble(), value(browser.find(row + "td[data-field='chi2-max']")));
                }
            }
            assertEquals("1", browser.find("section.fleet-version").getAttribute("data-version"), "the version with most units first");
            JsonNode flags = summary.get("versions").get(0).get("flags");
            flags.fieldNames().forEachRemaining(flag -> {
                List<WebElement> cells = browser.findAll("table.flag-table tr[data-flag='" + flag + "'] td");
                assertEquals(flags.get(flag).get("units").asDouble(), value(cells.get(2)), flag + " units");
                assertEquals(flags.get(flag).get("estimates").asDouble(), value(cells.get(3)), flag + " estimates");
                List<String> ids = new ArrayList<>();
                flags.get(flag).get("unitIds").forEach(id -> ids.add(id.asText()));
                assertEquals(ids, cells.get(4).findElements(By.cssSelector("a.unit")).stream().map(WebElement::getText).toList());
                assertTrue(cells.get(0).getText().startsWith(ids.isEmpty() ? "✓" : "⚠"), "a symbol as well as colour: " + flag);
            });
            // The demo's injected faults (test-data/demo/README.md): three model mismatches and one short trace.
            assertEquals(3, flags.get("model_mismatch").get("units").asInt());
            assertEquals(1, flags.get("few_samples").get("units").asInt());

            JsonNode stale = summary("?version=1").get("stale");
            assertEquals(stale.get("count").asText(), browser.find("table.stale").getAttribute("data-count"));
            List<String> staleIds = new ArrayList<>();
            stale.get("oldestFirst").forEach(u -> staleIds.add(u.get("unitId").asText()));
            assertEquals(staleIds, browser.findAll("table.stale tbody tr").stream().map(r -> r.getAttribute("data-unit")).toList());
            browser.assertNoConsoleErrors();
            browser.screenshot("fleet");
        }
    }

    @Test
    void the_histogram_bins_every_unit_with_a_chi_square_per_dof_on_log_spaced_edges() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/fleet/" + FAMILY);
            JsonNode plot = JSON.readTree(browser.find("section.fleet-version figure.plot").getAttribute("data-plot"));
            double[] edges = JSON.convertValue(plot.get("edges"), double[].class);
            int[] shown = JSON.convertValue(plot.get("counts"), int[].class);
            List<Double> values = allUnits().stream().filter(u -> u.hasNonNull("chiSquarePerDof"))
                    .map(u -> u.get("chiSquarePerDof").asDouble()).toList();
            assertEquals(20, values.size(), "every demo unit has a chi-square per dof");
            assertEquals(values.size(), java.util.Arrays.stream(shown).sum());

            // The page's rule, in its caption: a bin holds its lower edge, the last also its upper one.
            int[] expected = new int[edges.length - 1];
            for (double v : values) {
                int bin = expected.length - 1;
                for (int i = 0; i < expected.length; i++) {
                    if (v < edges[i + 1]) {
                        bin = i;
                        break;
                    }
                }
                expected[bin]++;
            }
            assertEquals(java.util.Arrays.toString(expected), java.util.Arrays.toString(shown));
            assertTrue(edges[0] <= values.stream().min(Double::compare).orElseThrow());
            assertTrue(edges[edges.length - 1] >= values.stream().max(Double::compare).orElseThrow());
            for (int i = 1; i + 1 < edges.length; i++) {
                assertEquals(edges[1] / edges[0], edges[i + 1] / edges[i], 1e-9, "log-spaced: one ratio between neighbours");
            }
            String caption = browser.find("section.fleet-version .histogram .note").getText();
            assertTrue(caption.contains(edges.length - 1 + " log-spaced bins"), caption);
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void the_worst_fit_list_has_the_api_order_and_its_links_lead_to_the_unit_pages() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/fleet/" + FAMILY);
            List<String> api = new ArrayList<>();
            server.get("/v1/fleet/" + FAMILY + "/units?version=1&sort=-chiSquarePerDof&limit=10").json().get("items")
                    .forEach(u -> api.add(u.get("unitId").asText()));
            List<String> shown = browser.findAll("table.worst tbody tr").stream().map(r -> r.getAttribute("data-unit")).toList();
            assertEquals(api, shown);
            List<String> byOwnSort = allUnits().stream()
                    .sorted(Comparator.comparingDouble((JsonNode u) -> u.get("chiSquarePerDof").asDouble()).reversed())
                    .limit(10).map(u -> u.get("unitId").asText()).toList();
            assertEquals(byOwnSort, shown, "worst fit first");
            assertEquals("RCX-80742", shown.get(0), "the door-open unit fits worst (test-data/demo/README.md: 237.01)");

            browser.find("table.worst tbody tr:first-child a.unit").click();
            browser.awaitRendered();
            assertEquals(server.base() + "/#/units/RCX-80742", browser.driver.getCurrentUrl());
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void the_tab_key_reaches_a_unit_link_and_enter_follows_it() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/fleet/" + FAMILY);
            WebElement focused = null;
            for (int presses = 0; presses < 80; presses++) {
                new Actions(browser.driver).sendKeys(Keys.TAB).perform();
                focused = browser.driver.switchTo().activeElement();
                if ("unit".equals(focused.getAttribute("class"))) {
                    break;
                }
            }
            assertEquals("unit", focused.getAttribute("class"), "no unit link reached with Tab");
            String target = focused.getAttribute("href");
            assertTrue(target.contains("#/units/RCX-"), target);
            focused.sendKeys(Keys.ENTER);
            browser.awaitRendered();
            assertEquals(target, browser.driver.getCurrentUrl());
        }
    }

    @Test
    void choosing_the_unused_version_shows_it_empty_without_errors() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/fleet/" + FAMILY);
            new Select(browser.find("#fleet-version")).selectByValue("2");
            new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d ->
                    "2".equals(browser.find("section.fleet-version").getAttribute("data-version"))
                            && "ready".equals(browser.find("section.fleet-version").getAttribute("data-state")));
            assertEquals(0, summary("?version=2").get("versions").get(0).get("estimates").asInt());
            assertTrue(browser.find("section.fleet-version").getText().contains("No estimate with this version"));
            assertEquals(List.of(), browser.findAll("section.fleet-version figure.plot"));
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void on_a_tablet_the_page_fits_its_width() throws Exception {
        try (ConsoleBrowser browser = ConsoleBrowser.open(820, 1180)) {
            browser.visit(server.base() + "/#/fleet/" + FAMILY);
            long overflow = (Long) browser.driver.executeScript(
                    "return document.documentElement.scrollWidth - document.documentElement.clientWidth;");
            assertEquals(0, overflow, "horizontal scrolling at 820 px");
            browser.assertNoConsoleErrors();
            browser.screenshot("fleet-tablet");
        }
    }
}
