package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** Each bad regression request gets the right 4xx problem naming the field, and queues nothing. */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class BadRegressionRequestsTest {
    TestServer server;
    Path db;
    int outputRenamed;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        db = dir.resolve("test.db");
        new DemoLoader(server.base()).load();
        TestServer.Reply r = server.postJson("/v1/models/reefer-40/versions", DemoVersions.v1WithOutputRenamed(server.mapper));
        assertEquals(201, r.status(), r.body());
        outputRenamed = r.json().get("version").asInt();
        assertEquals(3, outputRenamed, "the request table below names version 3");
    }

    @AfterAll
    void stop() {
        server.close();
    }

    static Stream<Arguments> badRequests() {
        String ok = "\"family\":\"reefer-40\",\"baseline\":1,";
        return Stream.of(
                Arguments.of("malformed JSON", "{\"family\":", 400, "body"),
                Arguments.of("unknown field", "{" + ok + "\"candidate\":2,\"tolerance\":{}}", 400, "body"),
                Arguments.of("no family", "{\"baseline\":1,\"candidate\":2}", 400, "family"),
                Arguments.of("no baseline", "{\"family\":\"reefer-40\",\"candidate\":2}", 400, "baseline"),
                Arguments.of("version not a number", "{" + ok + "\"candidate\":\"two\"}", 400, "body.candidate"),
                Arguments.of("version zero", "{" + ok + "\"candidate\":0}", 400, "candidate"),
                Arguments.of("baseline = candidate", "{" + ok + "\"candidate\":1}", 400, "candidate"),
                Arguments.of("unknown family", "{\"family\":\"reefer-99\",\"baseline\":1,\"candidate\":2}", 422, "family"),
                Arguments.of("unknown candidate version", "{" + ok + "\"candidate\":99}", 422, "candidate"),
                Arguments.of("unknown baseline version", "{\"family\":\"reefer-40\",\"baseline\":98,\"candidate\":2}", 422, "baseline"),
                Arguments.of("other output channels", "{" + ok + "\"candidate\":3}", 422, "candidate"),
                Arguments.of("empty unit list", "{" + ok + "\"candidate\":2,\"traces\":{\"units\":[]}}", 400, "traces.units"),
                Arguments.of("bad unit ID", "{" + ok + "\"candidate\":2,\"traces\":{\"units\":[\"RCX-1\",\"no spaces\"]}}", 400, "traces.units[1]"),
                Arguments.of("unit without traces", "{" + ok + "\"candidate\":2,\"traces\":{\"units\":[\"RCX-85159\",\"RCX-00000\"]}}", 422, "traces.units"),
                Arguments.of("latest zero", "{" + ok + "\"candidate\":2,\"traces\":{\"latestPerUnit\":0}}", 400, "traces.latestPerUnit"),
                Arguments.of("time not RFC 3339", "{" + ok + "\"candidate\":2,\"traces\":{\"receivedFrom\":\"yesterday\"}}", 400, "traces.receivedFrom"),
                Arguments.of("window backwards", "{" + ok + "\"candidate\":2,\"traces\":{\"receivedFrom\":\"2030-01-02T00:00:00Z\",\"receivedTo\":\"2030-01-01T00:00:00Z\"}}", 400, "traces.receivedTo"),
                Arguments.of("time beyond the millisecond range", "{" + ok + "\"candidate\":2,\"traces\":{\"receivedTo\":\"+1000000000-01-01T00:00:00Z\"}}", 400, "traces.receivedTo"),
                Arguments.of("no traces in window", "{" + ok + "\"candidate\":2,\"traces\":{\"receivedTo\":\"2000-01-01T00:00:00Z\"}}", 422, "traces"),
                Arguments.of("share above 1", "{" + ok + "\"candidate\":2,\"tolerances\":{\"maxWorseShare\":1.5}}", 400, "tolerances.maxWorseShare"),
                Arguments.of("negative chi2 tolerance", "{" + ok + "\"candidate\":2,\"tolerances\":{\"maxChi2PerDofIncrease\":-0.1}}", 400, "tolerances.maxChi2PerDofIncrease"),
                Arguments.of("negative x0 tolerance", "{" + ok + "\"candidate\":2,\"tolerances\":{\"maxX0ShiftSe\":-1}}", 400, "tolerances.maxX0ShiftSe"));
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("badRequests")
    void bad_request_is_refused_naming_the_field_and_queues_nothing(String name, String body, int status,
                                                                     String field) {
        long runs = Database.count(db, "regressions");
        TestServer.Reply r = server.post("/v1/regressions", "application/json", body.getBytes(StandardCharsets.UTF_8));
        assertEquals(status, r.status(), r.body());
        assertTrue(r.contentType().startsWith("application/problem+json"), r.contentType());
        JsonNode errors = r.json().get("errors");
        assertTrue(errors != null && errors.toString().contains("\"field\":\"" + field), r.body());
        assertEquals(runs, Database.count(db, "regressions"));
    }

    @Test
    void mismatched_outputs_are_named_channel_by_channel() {
        TestServer.Reply r = server.postJson("/v1/regressions", java.util.Map.of("family", "reefer-40",
                "baseline", 1, "candidate", outputRenamed));
        String detail = r.json().get("errors").get(0).get("detail").asText();
        assertEquals("version 3 has outputs [return_air, supply_air_temp], baseline 1 has [return_air, supply_air]"
                + " (only in baseline: [supply_air], only in candidate: [supply_air_temp]); expected the same output"
                + " channels", detail);
    }

    @Test
    void json_is_required() {
        TestServer.Reply r = server.post("/v1/regressions", "text/csv", "family\nreefer-40\n".getBytes(StandardCharsets.UTF_8));
        assertEquals(415, r.status(), r.body());
    }

    @Test
    void unknown_run_is_404_and_a_finished_run_cannot_be_cancelled() throws Exception {
        assertEquals(404, server.get("/v1/regressions/no-such-run").status());
        assertEquals(404, server.post("/v1/regressions/no-such-run/cancel", null, new byte[0]).status());
        TestServer.Reply started = server.postJson("/v1/regressions", java.util.Map.of("family", "reefer-40",
                "baseline", 1, "candidate", 2, "traces", java.util.Map.of("units", java.util.List.of("RCX-85159"))));
        String id = started.json().get("id").asText();
        JsonNode job = server.awaitJob(id);
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        TestServer.Reply refused = server.post("/v1/regressions/" + id + "/cancel", null, new byte[0]);
        assertEquals(409, refused.status(), refused.body());
        assertEquals("regression " + id + " is in state succeeded; only a queued or running run can be cancelled",
                refused.json().get("detail").asText());
        // A job ID of another kind is not a regression.
        String estimateJob = server.post("/v1/units/RCX-85159/traces?model=reefer-40&version=1", "text/csv",
                java.nio.file.Files.readAllBytes(DemoVersions.DEMO.resolve("traces/RCX-85159.csv"))).json()
                .get("jobId").asText();
        assertEquals(404, server.get("/v1/regressions/" + estimateJob).status());
        assertEquals(400, server.get("/v1/regressions?limit=0").status());
        assertEquals(400, server.get("/v1/regressions?cursor=%21%21").status());
    }
}
