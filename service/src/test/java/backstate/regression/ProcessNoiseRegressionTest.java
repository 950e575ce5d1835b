package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * "Does adding process noise explain the fleet better?": the demo's reefer-40 v1 as baseline and
 * the same model with the door's heat as process noise (test-data/demo/door-openings) as candidate,
 * over the door-openings unit, posted with the default (sampled) options. The candidate is solved
 * with the process-noise formulation, and the run shows the baseline's {@code model_mismatch}
 * removed (DemoProcessNoiseTest checks the two fits themselves).
 */
class ProcessNoiseRegressionTest {
    static final Path DEMO = Path.of(System.getProperty("backstate.testData", "../test-data")).resolve("demo");

    @Test
    void a_candidate_with_process_noise_removes_the_mismatch_of_the_door_openings_unit() throws IOException {
        ModelDocument baseline = model(DEMO.resolve("models/reefer-40.v1.json"));
        ModelDocument candidate = model(DEMO.resolve("door-openings/reefer-40-noise.v1.json"));
        ParsedTrace stored;
        try (InputStream in = Files.newInputStream(DEMO.resolve("door-openings/RCX-61530.csv"))) {
            stored = new TraceReader(Limits.DEFAULTS).readCsv(in, baseline, TraceOptions.NONE);
        }
        RegressionResult.VersionInfo b = new RegressionResult.VersionInfo(1, "active", List.of(), List.of());
        RegressionResult.VersionInfo c = new RegressionResult.VersionInfo(2, "draft", List.of(), List.of(),
                VersionPair.PROCESS_NOISE);
        RegressionReport report = new RegressionReport("reefer-40", b, c, Tolerances.resolve(null), 1);
        new VersionPair(baseline, candidate, Limits.DEFAULTS).compare(report, "RCX-61530", "t1",
                "2026-12-02T12:00:00Z", 1, baseline, stored);
        RegressionResult result = report.build(true);
        RegressionResult.TraceResult trace = result.units().get(0).traces().get(0);
        assertTrue(trace.baseline().flags().contains("model_mismatch"), "baseline " + trace.baseline());
        assertTrue(trace.flagsRemoved().contains("model_mismatch"), "removed " + trace.flagsRemoved());
        assertEquals("solved", trace.candidate().status(), trace.candidate().message());
        assertEquals("process_noise", result.candidate().formulation());
    }

    private static ModelDocument model(Path file) throws IOException {
        return Json.mapper(Limits.DEFAULTS).readValue(file.toFile(), ModelDocument.class);
    }
}
