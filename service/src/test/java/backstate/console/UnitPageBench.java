package backstate.console;

import backstate.api.TestServer;
import backstate.reliability.ReeferTraces;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Locale;

/**
 * Time to render the unit page of a unit whose newest trace has 10⁶ samples (the demo model's
 * simulated reefer trace, {@link ReeferTraces}), in headless Chromium: from navigation start to
 * the page ready with every plot drawn (the page's own {@code unit-drawn} performance mark, read
 * as milliseconds since navigation start). The page asks the series route for a decimated series
 * (maxPoints), so the time is mostly the service's one solve of the stored trace. Prints a small
 * Markdown table and asserts nothing; never run by the test suite.
 *
 * <p>Run: {@code cd service && mvn -B -o -q test-compile && java -cp target/classes:target/test-classes:$(cat cp.txt)
 * backstate.console.UnitPageBench [samples] [repeats]} with cp.txt from {@code mvn dependency:build-classpath
 * -Dmdep.includeScope=test -Dmdep.outputFile=cp.txt}.
 */
public final class UnitPageBench {
    private static final String UNIT = "RCX-BENCH1";

    private UnitPageBench() {
    }

    public static void main(String[] args) throws Exception {
        int samples = args.length > 0 ? Integer.parseInt(args[0]) : 1_000_000;
        int repeats = args.length > 1 ? Integer.parseInt(args[1]) : 5;
        Path dir = Files.createTempDirectory("backstate-unit-bench");
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            server.publishDemoModels();
            long posting = System.nanoTime();
            UnitPageTest.postTrace(server, UNIT, new ReeferTraces(TestServer.TEST_DATA).csv(samples, 7),
                    Instant.parse("2026-11-30T00:00:00Z"));
            double solved = (System.nanoTime() - posting) / 1e9;
            browser.visit(server.base() + "/#/units/" + UNIT); // warm-up: JIT, module cache; untimed
            List<Double> times = new ArrayList<>();
            for (int i = 0; i < repeats; i++) {
                browser.driver.get("about:blank");
                browser.visit(server.base() + "/#/units/" + UNIT);
                times.add(((Number) browser.driver.executeScript(
                        "return performance.getEntriesByName('unit-drawn')[0].startTime")).doubleValue());
            }
            browser.assertNoConsoleErrors();
            JsonNode plotted = UnitPageTest.plot(browser.find("[data-output='return_air'] figure.plot"));
            int canvases = browser.findAll("figure.time-plot canvas").size();
            Collections.sort(times);
            System.out.printf(Locale.ROOT, "unit page of a %d-sample trace, headless Chromium, %d cores (upload + solve took %.1f s)%n%n",
                    samples, Runtime.getRuntime().availableProcessors(), solved);
            System.out.println("| measure | value |");
            System.out.println("|---|---|");
            System.out.printf(Locale.ROOT, "| navigation → ready, plots drawn: median of %d | %.0f ms |%n", repeats, times.get(repeats / 2));
            System.out.printf(Locale.ROOT, "| min / max | %.0f / %.0f ms |%n", times.get(0), times.get(repeats - 1));
            System.out.printf(Locale.ROOT, "| points plotted per series | %d |%n", plotted.get("x").size());
            System.out.printf(Locale.ROOT, "| plots drawn (canvases) | %d |%n", canvases);
        }
    }
}
