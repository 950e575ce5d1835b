package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.time.Instant;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The demo loader declares a recording start on the demo traces ({@link DemoLoader#DEMO_START},
 * 2026-11-30T00:00:00Z), so the fleet sits in plausible recording time instead of on 1970-01-01. Expected values: the demo files' first and last sample
 * times (test-data/demo/traces) added to the start by hand, and the estimate of fleet.json (numpy,
 * test-data/demo/generate_demo.py), which a shift of the clock must not change.
 */
class DemoRecordingStartTest {
    static final Instant START = DemoLoader.DEMO_START;

    @Test
    void a_declared_start_places_the_recordings_and_leaves_the_estimates_alone(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir)) {
            DemoLoader loader = new DemoLoader(server.base());
            loader.load();
            awaitEstimates(server, 20);
            // RCX-85159.csv: first sample 43 200 s, last 64 800 s.
            JsonNode csv = server.get("/v1/units/RCX-85159/estimates/latest").json();
            assertEquals("2026-11-30T12:00:00Z", csv.get("windowStart").asText());
            assertEquals("2026-11-30T18:00:00Z", csv.get("windowEnd").asText());
            // RCX-94263.json: first sample 79 620 s = 22:07:00.
            assertEquals("2026-11-30T22:07:00Z",
                    server.get("/v1/units/RCX-94263/estimates/latest").json().get("windowStart").asText());
            JsonNode reference = server.mapper.readTree(TestServer.TEST_DATA.resolve("demo/fleet.json").toFile())
                    .get("units").get(0);
            assertEquals("RCX-85159", reference.get("unitId").asText());
            JsonNode states = csv.get("result").get("states");
            for (int i = 0; i < states.size(); i++) {
                double want = reference.get("referenceEstimate").get(i).asDouble();
                assertEquals(want, states.get(i).get("estimate").asDouble(), 1e-9 * Math.max(1, Math.abs(want)),
                        "state " + i + " as numpy gives it");
            }

            loader.load(); // a restart on the same database posts nothing again
            assertEquals(1, server.get("/v1/units/RCX-85159/estimates").json().get("items").size());
        }
    }

    private static void awaitEstimates(TestServer server, int count) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
        while (System.nanoTime() < deadline) {
            JsonNode v = server.get("/v1/fleet/reefer-40/summary?version=1").json().get("versions");
            if (v.size() > 0 && v.get(0).get("estimates").asInt() == count) {
                return;
            }
            Thread.sleep(50);
        }
        throw new AssertionError("the demo fleet was not solved within 60 s");
    }
}
