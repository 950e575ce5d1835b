package backstate.console;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Map;
import org.openqa.selenium.OutputType;

/**
 * Writes the README's console screenshots, console-unit.png (the unit page of a flagged demo unit)
 * and console-fleet.png (the fleet page), at exactly 1280×800 CSS pixels, from a running demo
 * server, through the same headless Chromium harness as the console tests. Run by
 * docs/images/make-screenshots.sh; arguments: BASE_URL OUT_DIR [UNIT_ID].
 */
public final class ReadmeScreenshots {
    static final int WIDTH = 1280;
    static final int HEIGHT = 800;
    static final String FAMILY = "reefer-40";
    /** A hang guard while the demo's estimates are solved, not a timing target. */
    static final Duration READY_WAIT = Duration.ofSeconds(120);

    private final HttpClient http = HttpClient.newHttpClient();
    private final ObjectMapper mapper = new ObjectMapper();
    private final String base;

    private ReadmeScreenshots(String base) {
        this.base = base;
    }

    public static void main(String[] args) throws Exception {
        if (args.length < 2) {
            System.err.println("usage: ReadmeScreenshots BASE_URL OUT_DIR [UNIT_ID]");
            System.exit(2);
        }
        ReadmeScreenshots shots = new ReadmeScreenshots(args[0]);
        Path out = Files.createDirectories(Path.of(args[1]));
        shots.awaitEveryTraceEstimated();
        String unit = args.length > 2 ? args[2] : shots.firstFlaggedUnit();
        try (ConsoleBrowser browser = ConsoleBrowser.open(WIDTH, HEIGHT)) {
            browser.driver.executeCdpCommand("Emulation.setDeviceMetricsOverride",
                    Map.of("width", WIDTH, "height", HEIGHT, "deviceScaleFactor", 1, "mobile", false));
            shots.capture(browser, "/#/units/" + unit, out.resolve("console-unit.png"));
            shots.capture(browser, "/#/fleet", out.resolve("console-fleet.png"));
        }
        System.out.println("wrote " + out.resolve("console-unit.png") + " (unit " + unit + ") and " + out.resolve("console-fleet.png"));
        System.exit(0);
    }

    private void capture(ConsoleBrowser browser, String route, Path file) throws IOException {
        browser.visit(base + route);
        browser.driver.executeScript("window.scrollTo(0, 0); document.activeElement?.blur();");
        // Plots settle in the next frames (uPlot sizes and paints on animation frames).
        browser.driver.executeAsyncScript(
                "const done = arguments[0]; requestAnimationFrame(() => requestAnimationFrame(() => setTimeout(done, 200)));");
        for (String error : browser.consoleErrors()) {
            System.err.println("browser console on " + route + ": " + error);
        }
        Files.write(file, browser.driver.getScreenshotAs(OutputType.BYTES));
    }

    /** The demo posts its traces at start; its workers solve them shortly after. */
    private void awaitEveryTraceEstimated() throws IOException, InterruptedException {
        long deadline = System.nanoTime() + READY_WAIT.toNanos();
        while (System.nanoTime() < deadline) {
            JsonNode summary = get("/v1/fleet/" + FAMILY + "/summary");
            int traces = 0;
            int estimates = 0;
            for (JsonNode version : summary.path("versions")) {
                traces += version.path("traces").asInt();
                estimates += version.path("estimates").asInt();
            }
            if (traces > 0 && estimates >= traces) {
                return;
            }
            Thread.sleep(250);
        }
        throw new IllegalStateException("the demo's traces were not all estimated within " + READY_WAIT);
    }

    private String firstFlaggedUnit() throws IOException, InterruptedException {
        JsonNode units = get("/v1/fleet/" + FAMILY + "/units?flag=model_mismatch&limit=1").path("items");
        if (units.isEmpty()) {
            throw new IllegalStateException("no demo unit is flagged model_mismatch; give a unit ID as the third argument");
        }
        return units.get(0).get("unitId").asText();
    }

    private JsonNode get(String path) throws IOException, InterruptedException {
        HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(base + path)).timeout(Duration.ofSeconds(30))
                .GET().build(), HttpResponse.BodyHandlers.ofString());
        if (r.statusCode() == 404) {
            return mapper.createObjectNode();
        }
        if (r.statusCode() != 200) {
            throw new IllegalStateException("GET " + path + " answered " + r.statusCode() + ": " + r.body());
        }
        return mapper.readTree(r.body());
    }
}
