package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.By;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.support.ui.WebDriverWait;

/**
 * The regression run page in a real browser: its progress bar follows the run trace by trace, the
 * verdict and the per-unit rows are the API's (worst first), cancel says what happened, and the
 * list shows runs as the API lists them. Check values: the API's own answer for the same run.
 */
class RegressionPageTest {
    /** A hang guard while the page polls (every 0.5 s), not a timing assertion. */
    static final Duration POLL_WAIT = Duration.ofSeconds(30);

    @Test
    void the_bar_shows_each_count_the_run_reaches_and_the_verdict_equals_the_apis(@TempDir Path dir) throws Exception {
        try (RegressionByHand server = new RegressionByHand(dir, null); ConsoleBrowser browser = ConsoleBrowser.open()) {
            String id = server.startRun();
            browser.visit(server.base + "/#/regressions/" + id);
            assertEquals("queued", browser.find("#run").getAttribute("data-state"));
            assertBar(browser, 0, RegressionByHand.TRACES);

            List<Integer> shown = new ArrayList<>();
            Set<Integer> holdAt = Set.of(1, 7, 13, 19);
            server.work(id, done -> {
                if (holdAt.contains(done)) {
                    awaitAttribute(browser, ".bar-run", "data-done", Integer.toString(done));
                    assertEquals("running", browser.find("#run").getAttribute("data-state"));
                    assertEquals(done + " of 20 traces compared (" + (100 * done / 20) + " %)", browser.find(".bar-text").getText());
                    assertEquals("on", browser.find("#run").getAttribute("data-polling"));
                    shown.add(Integer.parseInt(browser.find(".bar-run").getAttribute("data-done")));
                }
            });
            assertEquals(List.of(1, 7, 13, 19), shown, "the bar's data-done read while the run was held at each count");

            new WebDriverWait(browser.driver, POLL_WAIT).until(d -> !d.findElements(By.cssSelector("#verdict")).isEmpty());
            JsonNode run = server.get("/v1/regressions/" + id);
            assertEquals("succeeded", run.get("state").asText());
            assertBar(browser, 20, 20);
            assertEquals(run.get("pass").asText(), browser.find("#verdict").getAttribute("data-pass"));
            assertEquals("off", browser.find("#run").getAttribute("data-polling"), "polling stopped once the run finished");
            assertUnitRowsEqual(run.get("result"), browser);
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void cancel_on_a_running_run_leaves_it_cancelled_and_says_so(@TempDir Path dir) throws Exception {
        try (RegressionByHand server = new RegressionByHand(dir, null); ConsoleBrowser browser = ConsoleBrowser.open()) {
            String first = server.startRun();
            server.work(first, done -> { });
            String second = server.startRun();
            browser.visit(server.base + "/#/regressions/" + second);

            server.work(second, done -> {
                if (done == 4) {
                    browser.find("#cancel-run").click();
                    awaitText(browser, "#cancel-outcome", "Cancel requested");
                }
            });
            awaitAttribute(browser, "#run", "data-state", "cancelled");
            JsonNode run = server.get("/v1/regressions/" + second);
            assertEquals("cancelled", run.get("state").asText());
            assertEquals(4, run.get("result").get("tracesDone").asInt());
            assertEquals("Cancelled after 4 of 20 traces; no verdict.", browser.find("#cancel-outcome").getText());
            assertEquals("Cancelled after 4 of 20 traces; no verdict.", browser.message());
            assertTrue(browser.find(".run-state").getText().contains("cancelled"), browser.find(".run-state").getText());
            assertEquals("", browser.find("#verdict").getAttribute("data-pass"), "no verdict on a cancelled run");
            assertEquals(4, browser.findAll(".unit-changes tbody tr").size(), "the units compared before the cancel");
            assertTrue(browser.find("#cancel-run").getAttribute("hidden") != null, "no Cancel button on a finished run");
            browser.assertNoConsoleErrors();
            browser.screenshot("regression-cancelled");

            browser.visit(server.base + "/#/regressions");
            JsonNode listed = server.get("/v1/regressions").get("items");
            assertEquals(listed.get(0).get("id").asText() + "," + listed.get(1).get("id").asText(),
                    browser.find("table.runs").getAttribute("data-runs"));
            assertEquals(List.of(second, first), List.of(listed.get(0).get("id").asText(), listed.get(1).get("id").asText()),
                    "newest first");
            List<String> verdicts = browser.findAll("table.runs tbody tr td:nth-child(5)").stream().map(WebElement::getText).toList();
            assertEquals(List.of("— none", "✗ fail"), verdicts);
            browser.assertNoConsoleErrors();
            browser.screenshot("regressions");
        }
    }

    @Test
    void a_run_on_a_demo_server_ends_with_the_apis_verdict_and_units_worst_first(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            new DemoLoader(server.base()).load();
            TestServer.Reply started = server.postJson("/v1/regressions", RegressionByHand.V1_AGAINST_V2);
            assertEquals(202, started.status(), started.body());
            String id = started.json().get("id").asText();
            browser.visit(server.base() + "/#/regressions/" + id);

            new WebDriverWait(browser.driver, POLL_WAIT).until(d -> !d.findElements(By.cssSelector("#verdict")).isEmpty());
            JsonNode run = server.get("/v1/regressions/" + id).json();
            assertEquals("succeeded", run.get("state").asText());
            assertBar(browser, 20, 20);
            JsonNode verdict = run.get("result").get("verdict");
            assertEquals(verdict.get("pass").asText(), browser.find("#verdict").getAttribute("data-pass"));
            assertEquals(verdict.get("rule").asText(), browser.find("#verdict").getAttribute("data-rule"));
            assertEquals(verdict.get("detail").asText(), browser.find(".verdict-detail").getText());
            assertTrue(browser.find(".verdict-word").getText().startsWith(verdict.get("pass").asBoolean() ? "✓ PASS" : "✗ FAIL"));
            assertUnitRowsEqual(run.get("result"), browser);
            browser.assertNoConsoleErrors();
            browser.screenshot("regression");
            browser.driver.executeScript("document.querySelector('.unit-changes').scrollIntoView()");
            browser.screenshot("regression-units");
        }
    }

    /** The rows are the API's units, worst first: beyond tolerance, then compared, then not compared; Δχ²/dof falling; unit ID. */
    static void assertUnitRowsEqual(JsonNode result, ConsoleBrowser browser) {
        List<JsonNode> units = new ArrayList<>();
        result.get("units").forEach(units::add);
        units.sort(Comparator.comparingInt(RegressionPageTest::group)
                .thenComparing(Comparator.comparingDouble(RegressionPageTest::deltaForOrder).reversed())
                .thenComparing(u -> u.get("unitId").asText()));
        List<WebElement> rows = browser.findAll(".unit-changes tbody tr");
        assertEquals(units.stream().map(u -> u.get("unitId").asText()).toList(),
                rows.stream().map(r -> r.getAttribute("data-unit")).toList());
        for (int i = 0; i < units.size(); i++) {
            JsonNode unit = units.get(i);
            List<String> shown = rows.get(i).findElements(By.cssSelector(".num")).stream()
                    .map(e -> e.getAttribute("data-value")).toList();
            assertEquals(List.of(unit.get("baselineChi2PerDof").asDouble(), unit.get("candidateChi2PerDof").asDouble(),
                    unit.get("deltaChi2PerDof").asDouble(), unit.get("maxAbsX0ShiftSe").asDouble()),
                    shown.stream().map(Double::parseDouble).toList(), unit.get("unitId").asText());
            String change = rows.get(i).findElement(By.cssSelector(".change")).getText();
            assertTrue(change.endsWith(unit.get("change").asText()), change);
        }
        int beyond = (int) units.stream().filter(u -> u.get("beyondTolerance").asBoolean()).count();
        assertEquals(beyond, browser.findAll(".unit-changes tbody tr.row-beyond").size());
    }

    private static int group(JsonNode unit) {
        return unit.get("beyondTolerance").asBoolean() ? 0 : unit.get("compared").asBoolean() ? 1 : 2;
    }

    private static double deltaForOrder(JsonNode unit) {
        return unit.has("deltaChi2PerDof") ? unit.get("deltaChi2PerDof").asDouble()
                : unit.get("compared").asBoolean() ? Double.POSITIVE_INFINITY : Double.NEGATIVE_INFINITY;
    }

    static void assertBar(ConsoleBrowser browser, int done, int total) {
        WebElement bar = browser.find(".bar-run");
        assertEquals(List.of(Integer.toString(done), Integer.toString(total)),
                List.of(bar.getAttribute("data-done"), bar.getAttribute("data-total")));
        assertEquals(Integer.toString(done), bar.getAttribute("aria-valuenow"));
    }

    static void awaitAttribute(ConsoleBrowser browser, String css, String attribute, String value) {
        new WebDriverWait(browser.driver, POLL_WAIT).until(d -> value.equals(d.findElement(By.cssSelector(css)).getAttribute(attribute)));
    }

    static void awaitText(ConsoleBrowser browser, String css, String start) {
        new WebDriverWait(browser.driver, POLL_WAIT).until(d -> d.findElement(By.cssSelector(css)).getText().startsWith(start));
    }
}
