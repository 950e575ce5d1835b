package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * Process noise over HTTP: a model version carries it, a CSV trace chooses the formulation by query
 * parameter, the estimate names the formulation and carries the innovations; a bad matrix is a 400
 * naming its entry, and choosing the formulation for a version without process noise a 422 naming
 * it. Data: the door-openings demo (test-data/demo/door-openings, invented).
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class ProcessNoiseRoutesTest {
    static final Path DOOR = TestServer.TEST_DATA.resolve("demo/door-openings");
    TestServer server;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        server.publishDemoModels();
        assertEquals(201, server.postJson("/v1/models", Map.of("name", "reefer-noise", "description", "door demo")).status());
        TestServer.Reply published = server.post("/v1/models/reefer-noise/versions", "application/json",
                Files.readAllBytes(DOOR.resolve("reefer-40-noise.v1.json")));
        assertEquals(201, published.status(), published.body());
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @Test
    void a_trace_solved_with_process_noise_says_so_and_reports_innovations() throws Exception {
        TestServer.Reply accepted = server.post("/v1/units/RCX-61530/traces?model=reefer-noise&version=1"
                + "&formulation=process_noise", "text/csv", Files.readAllBytes(DOOR.resolve("RCX-61530.csv")));
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        JsonNode result = server.get("/v1/estimates/" + job.get("estimateId").asText()).json().get("result");
        assertEquals("process_noise", result.get("formulation").asText());
        assertEquals(2, result.get("innovations").size());
        assertFalse(result.get("flags").toString().contains("model_mismatch"), result.get("flags").toString());
        assertEquals(4, result.get("windowEnd").get("states").size());
        JsonNode air = server.get("/v1/estimates/" + job.get("estimateId").asText() + "/series?maxPoints=1000").json()
                .get("state").get("air");
        JsonNode se = air.get("standardError");
        assertEquals(361, se.size());
        // The band starts at x̂0's standard error and ends at the window end's (both smoothed).
        assertEquals(result.get("states").get(1).get("standardError").asDouble(), se.get(0).asDouble(), 1e-12);
        assertEquals(result.get("windowEnd").get("states").get(1).get("standardError").asDouble(), se.get(360).asDouble(),
                1e-12);
    }

    @Test
    void with_process_noise_a_reference_time_between_samples_is_refused_at_the_post_in_recording_time() throws Exception {
        // The door trace's samples are a minute apart from 43200 s (1970-01-01T12:00:00Z); 30 s after it is between two.
        TestServer.Reply refused = server.post("/v1/units/RCX-61530/traces?model=reefer-noise&version=1"
                + "&formulation=process_noise&referenceTime=43230", "text/csv", Files.readAllBytes(DOOR.resolve("RCX-61530.csv")));
        assertEquals(422, refused.status(), refused.body());
        JsonNode error = refused.json().get("errors").get(0);
        assertEquals("referenceTime", error.get("field").asText());
        assertEquals("got 1970-01-01T12:00:30Z, expected the time of a sample: with process noise the smoothed state is"
                + " computed at sample times", error.get("detail").asText());
    }

    /**
     * The question a team asks with a regression run: does process noise explain the unit better?
     * Family reefer-door holds the deterministic demo model as version 1 and the same model with
     * process noise as version 2; the door-openings trace, solved under version 1, is flagged
     * {@code model_mismatch}, and the run re-solves it under version 2 with the process-noise
     * formulation, which removes the flag. The same comparison as ProcessNoiseRegressionTest,
     * through the routes, the job and the stored result.
     */
    @Test
    void a_regression_run_to_a_version_with_process_noise_solves_with_it_and_removes_the_mismatch() throws Exception {
        assertEquals(201, server.postJson("/v1/models", Map.of("name", "reefer-door", "description", "door demo")).status());
        for (Path version : new Path[] {TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json"),
                DOOR.resolve("reefer-40-noise.v1.json")}) {
            TestServer.Reply published = server.post("/v1/models/reefer-door/versions", "application/json",
                    Files.readAllBytes(version));
            assertEquals(201, published.status(), published.body());
        }
        TestServer.Reply accepted = server.post("/v1/units/RCX-61530/traces?model=reefer-door&version=1", "text/csv",
                Files.readAllBytes(DOOR.resolve("RCX-61530.csv")));
        assertEquals(202, accepted.status(), accepted.body());
        assertEquals("succeeded", server.awaitJob(accepted.json().get("jobId").asText()).get("state").asText());

        TestServer.Reply run = server.postJson("/v1/regressions", Map.of("family", "reefer-door", "baseline", 1,
                "candidate", 2, "traces", RegressionRunTest.LATEST));
        assertEquals(202, run.status(), run.body());
        JsonNode result = finished(run.json().get("id").asText()).get("result");
        assertEquals("process_noise", result.get("candidate").get("formulation").asText(), result.toString());
        JsonNode trace = result.get("units").get(0).get("traces").get(0);
        assertTrue(trace.get("baseline").get("flags").toString().contains("model_mismatch"), trace.toString());
        assertEquals("solved", trace.get("candidate").get("status").asText(), trace.toString());
        assertTrue(trace.get("flagsRemoved").toString().contains("model_mismatch"), trace.toString());
    }

    /**
     * Planning a version with process noise predicts with it: disturbances keep adding uncertainty
     * that more samples cannot remove, so every state's predicted standard error is above the
     * deterministic version's for the same plan (the noise-free model is the same document without
     * {@code processNoise}); NoisePlanSweepTest checks the noisy figures against NumPy.
     */
    @Test
    void a_plan_for_a_version_with_process_noise_predicts_wider_standard_errors_than_without() {
        String plan = """
                { "samplePeriod": 60, "horizons": [3600, 21600], "outputSubsets": [["return_air","supply_air"]] }""";
        JsonNode noisy = planOf("/v1/models/reefer-noise/versions/1/plans", plan);
        JsonNode exact = planOf("/v1/models/reefer-40/versions/1/plans", plan);
        for (int h = 0; h < 2; h++) {
            JsonNode withNoise = noisy.get("subsets").get(0).get("horizons").get(h).get("standardErrors");
            JsonNode without = exact.get("subsets").get(0).get("horizons").get(h).get("standardErrors");
            assertEquals(4, without.size());
            assertEquals(without.size(), withNoise.size());
            for (java.util.Iterator<String> states = without.fieldNames(); states.hasNext(); ) {
                String state = states.next();
                assertTrue(withNoise.get(state).asDouble() > without.get(state).asDouble(),
                        "horizon " + h + ", state " + state + ": " + withNoise + " against " + without);
            }
        }
    }

    private JsonNode planOf(String route, String body) {
        TestServer.Reply r = server.post(route, "application/json", body.getBytes(StandardCharsets.UTF_8));
        assertEquals(200, r.status(), r.body());
        return r.json();
    }

    private JsonNode finished(String regressionId) throws InterruptedException {
        JsonNode run = server.awaitRegression(regressionId);
        assertEquals("succeeded", run.path("state").asText(), run.toString());
        return run;
    }

    @Test
    void an_asymmetric_process_noise_matrix_is_a_400_naming_its_entry() throws Exception {
        ObjectNode doc = (ObjectNode) server.mapper.readTree(DOOR.resolve("reefer-40-noise.v1.json").toFile());
        doc.set("processNoise", server.mapper.readTree(
                "{\"matrix\": [[0, 0, 0, 0], [0, 0.006, 0.001, 0], [0, 0, 0, 0], [0, 0, 0, 0]]}"));
        TestServer.Reply r = server.post("/v1/models/reefer-noise/versions", "application/json",
                server.mapper.writeValueAsString(doc).getBytes(StandardCharsets.UTF_8));
        assertEquals(400, r.status(), r.body());
        assertTrue(r.body().contains("processNoise.matrix[1][2]"), r.body());
    }

    @Test
    void process_noise_for_a_version_without_it_is_a_422_naming_the_formulation() throws Exception {
        TestServer.Reply r = server.post("/v1/units/RCX-61530/traces?model=reefer-40&version=1&formulation=process_noise",
                "text/csv", Files.readAllBytes(DOOR.resolve("RCX-61530.csv")));
        assertEquals(422, r.status(), r.body());
        assertTrue(r.body().contains("\"formulation\""), r.body());
    }
}
