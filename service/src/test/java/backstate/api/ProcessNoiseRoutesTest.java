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
