package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.cli.DemoLoader;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.support.ui.WebDriverWait;

/**
 * The unit page in a real browser, against the demo fleet: every number and every plotted series
 * on the page is read back (data-value, data-plot) and compared with the public API's answer for
 * the same unit, which is the reference. RCX-80742 (door opened mid-window) carries
 * model_mismatch; RCX-85159 is healthy and gets two earlier recordings (simulated from the demo
 * model, {@link ReeferTraces}) so its history and trend have three points.
 */
class UnitPageTest {
    static final String FLAGGED = "RCX-80742";
    static final String HEALTHY = "RCX-85159";
    /** A unit solved under a version whose outputs have no noise σ: σ is estimated from its residuals. */
    static final String NO_SIGMA = "NS-1";
    static final String NO_SIGMA_FAMILY = "reefer-no-sigma";
    private static final ObjectMapper JSON = new ObjectMapper();

    @TempDir
    static Path dir;
    static TestServer server;
    static ConsoleBrowser browser;

    @BeforeAll
    static void demo_fleet_with_history() throws Exception {
        browser = ConsoleBrowser.open();
        server = new TestServer(dir);
        loadDemoFleet(server);
        ReeferTraces traces = new ReeferTraces(TestServer.TEST_DATA);
        postTrace(server, HEALTHY, traces.csv(360, 11), Instant.parse("2026-11-28T06:00:00Z"));
        postTrace(server, HEALTHY, traces.csv(360, 12), Instant.parse("2026-11-29T06:00:00Z"));
        publishWithoutSigma(server);
        postTrace(server, NO_SIGMA, NO_SIGMA_FAMILY, traces.csv(360, 13), Instant.parse("2026-11-29T06:00:00Z"));
    }

    /** The demo's v1 with no noise σ on its outputs, as family {@value #NO_SIGMA_FAMILY}. */
    static void publishWithoutSigma(TestServer server) throws Exception {
        com.fasterxml.jackson.databind.node.ObjectNode doc = (com.fasterxml.jackson.databind.node.ObjectNode) JSON.readTree(
                java.nio.file.Files.readString(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json")));
        doc.get("outputs").forEach(o -> ((com.fasterxml.jackson.databind.node.ObjectNode) o).remove("noiseSigma"));
        assertEquals(201, server.postJson("/v1/models", java.util.Map.of("name", NO_SIGMA_FAMILY, "description", "no σ")).status());
        assertEquals(201, server.post("/v1/models/" + NO_SIGMA_FAMILY + "/versions", "application/json",
                JSON.writeValueAsBytes(doc)).status());
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

    /** The demo fleet as `backstate demo` loads it, waited on (bounded) until all 20 units have an estimate. */
    static void loadDemoFleet(TestServer server) throws Exception {
        new DemoLoader(server.base()).load();
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        while (server.get("/v1/fleet/reefer-40/summary?version=1").json().get("versions").get(0).get("estimates").asInt() < 20) {
            if (System.nanoTime() > deadline) {
                throw new AssertionError("the demo fleet was not solved within 60 s");
            }
            Thread.sleep(50);
        }
    }

    /** Posts a reefer CSV trace whose clock starts at {@code start} under reefer-40 v1 and waits for its estimate. */
    static void postTrace(TestServer server, String unitId, byte[] csv, Instant start) throws Exception {
        postTrace(server, unitId, "reefer-40", csv, start);
    }

    /** The same under version 1 of {@code family}. */
    static void postTrace(TestServer server, String unitId, String family, byte[] csv, Instant start) throws Exception {
        String body = "time since " + start + new String(csv, StandardCharsets.UTF_8).substring("time".length());
        TestServer.Reply posted = server.post("/v1/units/" + unitId + "/traces?model=" + family + "&version=1", "text/csv",
                body.getBytes(StandardCharsets.UTF_8));
        assertEquals(202, posted.status(), posted.body());
        assertEquals("succeeded", server.awaitJob(posted.json().get("jobId").asText()).get("state").asText());
    }

    /** The numbers of a JSON array (null stays null), to compare the page's data-plot with the API. */
    static List<Double> numbers(JsonNode array) {
        List<Double> out = new ArrayList<>();
        array.forEach(v -> out.add(v.isNull() ? null : v.asDouble()));
        return out;
    }

    static JsonNode plot(WebElement figure) throws Exception {
        return JSON.readTree(figure.getAttribute("data-plot"));
    }

    static double value(WebElement scope, String field) {
        return Double.parseDouble(scope.findElement(org.openqa.selenium.By.cssSelector(".num[data-field='" + field + "']"))
                .getAttribute("data-value"));
    }

    /** Opens a unit's page from a blank page, so no earlier page's ready state or scroll position is read. */
    private static void open(String unitId) {
        browser.driver.get("about:blank");
        browser.visit(server.base() + "/#/units/" + unitId);
    }

    private JsonNode latest(String unitId) {
        return server.get("/v1/units/" + unitId + "/estimates/latest").json();
    }

    @Test
    void the_flagged_unit_shows_the_api_states_intervals_and_flag_in_words() throws Exception {
        JsonNode estimate = latest(FLAGGED);
        open(FLAGGED);

        assertEquals(estimate.get("id").asText(), browser.find("header.unit-head").getAttribute("data-estimate"));
        for (String end : List.of("", "end.")) {
            JsonNode states = end.isEmpty() ? estimate.get("result").get("states")
                    : estimate.get("result").get("windowEnd").get("states");
            for (JsonNode state : states) {
                WebElement row = browser.find(".state-table tr[data-state='" + state.get("name").asText() + "']");
                assertEquals(state.get("estimate").asDouble(), value(row, end + "estimate"), state.toString());
                assertEquals(state.get("lower").asDouble(), value(row, end + "lower"), state.toString());
                assertEquals(state.get("upper").asDouble(), value(row, end + "upper"), state.toString());
            }
        }
        assertEquals(estimate.get("chiSquarePerDof").asDouble(), value(browser.find(".facts"), "chiSquarePerDof"));
        assertEquals("model_mismatch", browser.find(".verdict [data-flags]").getAttribute("data-flags"));
        assertTrue(browser.find(".verdict").getText().contains("model mismatch: the model does not fit this trace"),
                browser.find(".verdict").getText());
        assertTrue(browser.find("[data-field='caution']").getText().endsWith(estimate.get("caution").asText()));
        assertEquals(estimate.get("windowStart").asText(), browser.find("time[data-field='windowStart']").getAttribute("datetime"));
        assertEquals(estimate.get("windowEnd").asText(), browser.find("time[data-field='windowEnd']").getAttribute("datetime"));

        JsonNode chart = plot(browser.find("figure.interval-chart"));
        JsonNode start = chart.get("series").get("at window start");
        JsonNode atEnd = chart.get("series").get("at window end");
        for (int i = 0; i < estimate.get("result").get("states").size(); i++) {
            assertEquals(estimate.get("result").get("states").get(i).get("name").asText(), chart.get("labels").get(i).asText());
            assertEquals(estimate.get("result").get("states").get(i).get("upper").asDouble(), start.get("upper").get(i).asDouble());
            assertEquals(estimate.get("result").get("windowEnd").get("states").get(i).get("lower").asDouble(),
                    atEnd.get("lower").get(i).asDouble());
        }
        browser.assertNoConsoleErrors();
        browser.screenshot("unit");
        reviewWholePage("unit-full");
    }

    /** A screenshot of the whole page for review (the window made as tall as the page, then set back). */
    static void reviewWholePage(String name) {
        org.openqa.selenium.Dimension before = browser.driver.manage().window().getSize();
        long height = (Long) browser.driver.executeScript("return document.documentElement.scrollHeight");
        browser.driver.manage().window().setSize(new org.openqa.selenium.Dimension(before.getWidth(), (int) height + 140));
        browser.screenshot(name);
        browser.driver.manage().window().setSize(before);
    }

    @Test
    void at_tablet_width_the_page_needs_no_sideways_scrolling() throws Exception {
        try (ConsoleBrowser tablet = ConsoleBrowser.open(820, 1180)) {
            tablet.visit(server.base() + "/#/units/" + FLAGGED);
            long width = (Long) tablet.driver.executeScript("return document.documentElement.scrollWidth");
            long viewport = (Long) tablet.driver.executeScript("return document.documentElement.clientWidth");
            assertTrue(width <= viewport, "page " + width + " px wide in a " + viewport + " px viewport");
            tablet.assertNoConsoleErrors();
            tablet.screenshot("unit-tablet");
        }
    }

    /**
     * A trace longer than the page asks for (4 001 samples, at most 2 000 points) is thinned to
     * samples 0, 3, 6, … and the last: stride ⌈4000 / 1999⌉ = 3, 1 334 + 1 points; the page says
     * so in English ordinals and its plots end at the window's last sample.
     */
    @Test
    void a_thinned_trace_is_described_and_plotted_to_its_last_sample() throws Exception {
        String unit = "RCX-40001";
        postTrace(server, unit, new ReeferTraces(TestServer.TEST_DATA).csv(4001, 21), Instant.parse("2026-11-27T06:00:00Z"));
        open(unit);
        assertEquals("Plotted: every 3rd sample and the last, 1335 points (asked for at most 2000).",
                browser.find("section[data-section='fit'] p.lede").getText());
        List<Double> x = numbers(plot(browser.findAll("[data-output='return_air'] figure.plot").get(0)).get("x"));
        assertEquals(1335, x.size());
        double windowEnd = java.time.Instant.parse(latest(unit).get("windowEnd").asText()).getEpochSecond();
        assertEquals(windowEnd, x.get(x.size() - 1), 0.0, "the plot ends at the window's last sample");
        browser.assertNoConsoleErrors();
        browser.driver.executeScript("arguments[0].scrollIntoView()", browser.find("section[data-section='fit']"));
        browser.screenshot("unit-thinned");
    }

    @Test
    void the_plotted_fit_residuals_and_trajectory_are_the_api_series() throws Exception {
        JsonNode estimate = latest(FLAGGED);
        open(FLAGGED);
        String maxPoints = browser.find("section[data-section='fit']").getAttribute("data-max-points");
        JsonNode series = server.get("/v1/estimates/" + estimate.get("id").asText() + "/series?maxPoints=" + maxPoints).json();

        for (JsonNode channel : estimate.get("result").get("residuals").get("channels")) {
            String output = channel.get("output").asText();
            double sigma = channel.get("sigma").asDouble();
            List<WebElement> figures = browser.findAll("[data-output='" + output + "'] figure.plot");
            JsonNode fit = plot(figures.get(0));
            JsonNode residual = plot(figures.get(1));
            assertEquals(numbers(series.get("time")), numbers(fit.get("x")));
            assertEquals(numbers(series.get("measured").get(output)), numbers(fit.get("series").get("measured")));
            List<Double> fitted = numbers(series.get("fitted").get(output));
            assertEquals(fitted, numbers(fit.get("series").get("fitted")));
            assertEquals(fitted.stream().map(v -> v + 2 * sigma).toList(), numbers(fit.get("series").get("fitted upper")));
            assertEquals(fitted.stream().map(v -> v - 2 * sigma).toList(), numbers(fit.get("series").get("fitted lower")));
            assertEquals(numbers(series.get("residual").get(output)), numbers(residual.get("series").get("residual")));
        }
        for (String state : List.of("wall", "air", "cargo_surface", "cargo_core")) {
            JsonNode band = series.get("state").get(state);
            JsonNode drawn = plot(browser.find(".unit-trajectory [data-state='" + state + "'] figure.plot"));
            assertEquals(numbers(series.get("time")), numbers(drawn.get("x")));
            assertEquals(numbers(band.get("estimate")), numbers(drawn.get("series").get(state)));
            assertEquals(numbers(band.get("lower")), numbers(drawn.get("series").get(state + " lower")));
            assertEquals(numbers(band.get("upper")), numbers(drawn.get("series").get(state + " upper")));
        }
        assertEquals(browser.findAll("figure.time-plot").size(), browser.findAll("figure.time-plot canvas").size(),
                "every time plot drawn");
        browser.assertNoConsoleErrors();
    }

    @Test
    void the_healthy_unit_shows_no_flags_and_its_earlier_estimates_newest_first() throws Exception {
        open(HEALTHY);
        assertEquals("", browser.find(".verdict [data-flags]").getAttribute("data-flags"));
        assertTrue(browser.find(".verdict").getText().contains("no flags"), browser.find(".verdict").getText());

        JsonNode history = server.get("/v1/units/" + HEALTHY + "/estimates").json().get("items");
        List<String> expected = new ArrayList<>();
        history.forEach(e -> expected.add(e.get("id").asText()));
        assertEquals(3, expected.size());
        assertEquals(expected, browser.findAll(".history-table tbody tr").stream().map(r -> r.getAttribute("data-estimate")).toList());
        browser.assertNoConsoleErrors();
        browser.screenshot("unit-healthy");
        reviewWholePage("unit-healthy-full");

        browser.find(".history-table tbody tr:last-child a").click();
        browser.awaitRendered();
        new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d ->
                expected.get(2).equals(browser.find("header.unit-head").getAttribute("data-estimate")));
        JsonNode oldest = server.get("/v1/estimates/" + expected.get(2)).json();
        assertEquals(oldest.get("result").get("states").get(3).get("estimate").asDouble(),
                value(browser.find(".state-table tr[data-state='cargo_core']"), "estimate"));
        browser.assertNoConsoleErrors();
    }

    @Test
    void a_flagged_estimate_is_marked_unreliable_in_its_table_its_note_its_words_and_its_trend() throws Exception {
        JsonNode estimate = latest(FLAGGED);
        open(FLAGGED);
        assertEquals("true", browser.find(".state-table").getAttribute("data-flagged"));
        assertTrue(browser.find(".state-table caption").getText().startsWith("⚠ Flagged: treat these as unreliable."));
        assertTrue(browser.find("p.caution").getText().contains("treat any estimate with a flag (⚠) as unreliable"));
        // σ is the model's: the note gives the σ̂-scaled standard errors, as the API's standardErrorScaled.
        List<Double> scaled = new ArrayList<>();
        estimate.get("result").get("states").forEach(st -> scaled.add(st.get("standardErrorScaled").asDouble()));
        List<Double> shown = browser.findAll("[data-field='mismatchNote'] .num[data-field='standardErrorScaled']").stream()
                .map(e -> Double.parseDouble(e.getAttribute("data-value"))).toList();
        assertEquals(scaled, shown);
        // Both tests fire on this trace (χ² p and Ljung–Box p are 0 in the API's answer).
        assertTrue(browser.find(".verdict").getText().contains("The model does not explain this trace: its residuals are too"
                + " large for the stated noise, and correlated in time on return_air, supply_air (Ljung–Box test)."),
                browser.find(".verdict").getText());
        JsonNode trend = server.get("/v1/units/" + FLAGGED + "/trend?state=cargo_core&model=reefer-40").json();
        JsonNode drawn = plot(browser.find("section[data-section='trend'] figure.plot"));
        assertEquals(List.of(trend.get("points").get(0).get("estimate").asDouble()),
                numbers(drawn.get("series").get("cargo_core, flagged: unreliable")));
        assertEquals(java.util.Collections.singletonList(null), numbers(drawn.get("series").get("cargo_core")));
        assertTrue(browser.find("section[data-section='trend'] .plot-note").getText().contains("⚠ 1 flagged, drawn as rings"));
        browser.assertNoConsoleErrors();
    }

    @Test
    void with_no_sigma_given_the_errors_and_the_band_are_the_residuals_sigma() throws Exception {
        JsonNode estimate = latest(NO_SIGMA);
        open(NO_SIGMA);
        double scale = estimate.get("result").get("sigmaScale").asDouble();
        for (JsonNode state : estimate.get("result").get("states")) {
            WebElement row = browser.find(".state-table tr[data-state='" + state.get("name").asText() + "']");
            // The interval is t × σ̂ × SE: the column shows the σ̂-scaled error it is built on.
            assertEquals(state.get("standardErrorScaled").asDouble(), value(row, "standardError"), state.toString());
        }
        WebElement panel = browser.find(".channel[data-output='return_air']");
        JsonNode drawn = plot(panel.findElement(org.openqa.selenium.By.cssSelector("figure.plot")));
        List<Double> fitted = numbers(drawn.get("series").get("fitted"));
        List<Double> upper = numbers(drawn.get("series").get("fitted upper"));
        int k = fitted.indexOf(fitted.stream().filter(java.util.Objects::nonNull).findFirst().orElseThrow());
        assertEquals(2 * 1.0 * scale, upper.get(k) - fitted.get(k), 1e-9 * Math.abs(upper.get(k)), "±2σ̂ with σ = 1 × σ scale");
        assertTrue(panel.getText().contains("estimated from the residuals (no σ given)"), panel.getText());
        assertTrue(browser.find(".verdict").getText().contains("No noise σ was given for return_air, supply_air: it was"
                + " estimated from the residuals"), browser.find(".verdict").getText());
        browser.assertNoConsoleErrors();
    }

    @Test
    void choosing_a_state_by_keyboard_plots_its_trend_as_the_trend_route_gives_it() throws Exception {
        open(HEALTHY);
        WebElement section = browser.find("section[data-section='trend']");
        assertEquals("cargo_core", section.getAttribute("data-trend-state"));

        browser.find("#trend-state").sendKeys("wall");
        new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d ->
                "wall".equals(section.getAttribute("data-trend-state")) && "ready".equals(section.getAttribute("data-trend")));

        JsonNode trend = server.get("/v1/units/" + HEALTHY + "/trend?state=wall&model=reefer-40").json();
        JsonNode drawn = plot(browser.find("section[data-section='trend'] figure.plot"));
        List<Double> times = new ArrayList<>();
        List<Double> estimates = new ArrayList<>();
        List<Double> lower = new ArrayList<>();
        trend.get("points").forEach(p -> {
            times.add(Instant.parse(p.get("windowStart").asText()).toEpochMilli() / 1000.0);
            estimates.add(p.get("estimate").asDouble());
            lower.add(p.get("lower").asDouble());
        });
        assertEquals(3, times.size());
        assertEquals(times, numbers(drawn.get("x")));
        assertEquals(estimates, numbers(drawn.get("series").get("wall")));
        assertEquals(lower, numbers(drawn.get("series").get("wall lower")));
        assertEquals(1, browser.findAll("section[data-section='trend'] figure.plot canvas").size());
        browser.assertNoConsoleErrors();
    }
}
