package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * End to end through a real server: publish the demo model, post traces as JSON, CSV and gzip,
 * wait for the job, read the estimate by unit ID, and compare it with numpy's least-squares
 * answer stored in test-data/demo/fleet.json (generate_demo.py: numpy.linalg.lstsq on the stacked
 * weighted matrix, independent of our code).
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class TraceLifecycleTest {
    /** numpy lstsq vs our QR on a κ ≈ 1e3 problem with 4-decimal data: agreement to 1e-9 relative is ample margin over κ·eps. */
    static final double REFERENCE_TOLERANCE = 1e-9;

    Path dir;
    TestServer server;
    JsonNode fleet;

    @BeforeAll
    void start(@TempDir Path folder) throws Exception {
        dir = folder;
        server = new TestServer(dir);
        server.publishDemoModels();
        fleet = server.mapper.readTree(TestServer.TEST_DATA.resolve("demo/fleet.json").toFile());
    }

    @AfterAll
    void stop() {
        server.close();
    }

    JsonNode unit(String scenario, String extension) {
        for (JsonNode u : fleet.get("units")) {
            if (u.get("scenario").asText().equals(scenario) && u.get("trace").asText().endsWith(extension)) {
                return u;
            }
        }
        throw new AssertionError("no demo unit " + scenario + " " + extension);
    }

    byte[] traceBytes(JsonNode unit) throws Exception {
        return Files.readAllBytes(TestServer.TEST_DATA.resolve("demo").resolve(unit.get("trace").asText()));
    }

    JsonNode submitAndSolve(JsonNode unit, String contentType, byte[] body, String... headers) throws Exception {
        String id = unit.get("unitId").asText();
        TestServer.Reply accepted = server.post("/v1/units/" + id + "/traces?model=reefer-40&version=1", contentType, body, headers);
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        TestServer.Reply estimate = server.get("/v1/estimates/" + job.get("estimateId").asText());
        assertEquals(200, estimate.status(), estimate.body());
        return estimate.json();
    }

    static void assertMatchesReference(JsonNode unit, JsonNode estimate) {
        JsonNode states = estimate.get("result").get("states");
        for (int i = 0; i < 4; i++) {
            double expected = unit.get("referenceEstimate").get(i).asDouble();
            double got = states.get(i).get("estimate").asDouble();
            assertEquals(expected, got, REFERENCE_TOLERANCE * Math.max(1.0, Math.abs(expected)), "x0[" + i + "]");
            double expectedSe = unit.get("referenceStdErrors").get(i).asDouble();
            assertEquals(expectedSe, states.get(i).get("standardError").asDouble(), REFERENCE_TOLERANCE * expectedSe, "se[" + i + "]");
        }
        assertEquals(unit.get("referenceChiSquare").asDouble(), estimate.get("result").get("residuals").get("chiSquare").asDouble(),
                1e-8 * unit.get("referenceChiSquare").asDouble());
    }

    @Test
    void csv_trace_is_solved_and_matches_numpy_least_squares() throws Exception {
        JsonNode unit = unit("normal", ".csv");
        JsonNode estimate = submitAndSolve(unit, "text/csv", traceBytes(unit));
        assertMatchesReference(unit, estimate);
        assertEquals(unit.get("unitId").asText(), estimate.get("unitId").asText());
        assertTrue(estimate.get("caution").asText().contains("never replace"));
    }

    @Test
    void json_trace_with_gaps_is_solved_and_matches_numpy_least_squares() throws Exception {
        JsonNode unit = unit("gaps", ".json");
        assertMatchesReference(unit, submitAndSolve(unit, "application/json", traceBytes(unit)));
    }

    @Test
    void gzip_csv_trace_is_solved_like_the_plain_one() throws Exception {
        JsonNode unit = unit("non-uniform", ".json");
        ByteArrayOutputStream zipped = new ByteArrayOutputStream();
        try (GZIPOutputStream gz = new GZIPOutputStream(zipped)) {
            gz.write(traceBytes(unit));
        }
        assertMatchesReference(unit, submitAndSolve(unit, "application/json", zipped.toByteArray(), "Content-Encoding", "gzip"));
    }

    /** RFC 1952 §2.2: a gzip file is a series of members, as {@code gzip part1 >> f; gzip part2 >> f} writes. */
    @Test
    void gzip_body_of_two_members_is_read_whole() throws Exception {
        JsonNode unit = unit("non-uniform", ".json");
        byte[] plain = traceBytes(unit);
        int half = plain.length / 2;
        ByteArrayOutputStream zipped = new ByteArrayOutputStream();
        for (int[] part : new int[][] {{0, half}, {half, plain.length}}) {
            try (GZIPOutputStream gz = new GZIPOutputStream(zipped) {
                @Override
                public void close() throws IOException {
                    finish(); // ends the member, leaves the shared buffer open for the next one
                }
            }) {
                gz.write(plain, part[0], part[1] - part[0]);
            }
        }
        assertMatchesReference(unit, submitAndSolve(unit, "application/json", zipped.toByteArray(), "Content-Encoding", "gzip"));
    }

    @Test
    void latest_estimate_by_unit_is_the_newest_and_history_pages_through_all() throws Exception {
        JsonNode unit = unit("gaps", ".csv");
        String id = unit.get("unitId").asText();
        JsonNode first = submitAndSolve(unit, "text/csv", traceBytes(unit));
        JsonNode second = submitAndSolve(unit, "text/csv", traceBytes(unit));
        JsonNode latest = server.get("/v1/units/" + id + "/estimates/latest").json();
        assertEquals(second.get("id").asText(), latest.get("id").asText());
        JsonNode page1 = server.get("/v1/units/" + id + "/estimates?limit=1").json();
        assertEquals(second.get("id").asText(), page1.get("items").get(0).get("id").asText());
        String cursor = page1.get("nextCursor").asText();
        JsonNode page2 = server.get("/v1/units/" + id + "/estimates?limit=1&cursor=" + cursor).json();
        assertEquals(first.get("id").asText(), page2.get("items").get(0).get("id").asText());
    }

    /** A gateway that lost the 202 and retries after the version was retired gets the first post's job, not 409. */
    @Test
    void retry_after_the_version_is_retired_replays_the_first_post_and_a_new_post_is_refused() throws Exception {
        assertEquals(201, server.postJson("/v1/models", Map.of("name", "reefer-retiring", "description", "retired mid-retry")).status());
        assertEquals(201, server.post("/v1/models/reefer-retiring/versions", "application/json",
                Files.readAllBytes(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json"))).status());
        JsonNode unit = unit("normal", ".csv");
        String path = "/v1/units/" + unit.get("unitId").asText() + "/traces?model=reefer-retiring&version=1";
        TestServer.Reply first = server.post(path, "text/csv", traceBytes(unit), "Idempotency-Key", "gw-retire-1");
        assertEquals(202, first.status(), first.body());
        assertEquals(200, server.post("/v1/models/reefer-retiring/versions/1/retire", null, new byte[0]).status());
        long traces = Database.count(dir.resolve("test.db"), "traces");

        TestServer.Reply retry = server.post(path, "text/csv", traceBytes(unit), "Idempotency-Key", "gw-retire-1");
        assertEquals(202, retry.status(), retry.body());
        assertEquals(first.json().get("jobId"), retry.json().get("jobId"));
        assertEquals("true", retry.headers().firstValue("Backstate-Replayed").orElse(""));

        TestServer.Reply fresh = server.post(path, "text/csv", traceBytes(unit), "Idempotency-Key", "gw-retire-2");
        assertEquals(409, fresh.status(), fresh.body());
        TestServer.Reply otherBody = server.post(path, "text/csv", "no,such,columns\n1,2,3\n".getBytes(StandardCharsets.UTF_8),
                "Idempotency-Key", "gw-retire-1");
        assertEquals(409, otherBody.status(), "a body that does not read was never taken: " + otherBody.body());
        byte[] edited = new String(traceBytes(unit), StandardCharsets.UTF_8).replaceFirst("\n([^\n]*)$", "\n")
                .getBytes(StandardCharsets.UTF_8);
        TestServer.Reply reused = server.post(path, "text/csv", edited, "Idempotency-Key", "gw-retire-1");
        assertEquals(422, reused.status(), "the key with another readable request: " + reused.body());
        assertEquals(traces, Database.count(dir.resolve("test.db"), "traces"));
    }

    @Test
    void retried_post_with_same_idempotency_key_returns_first_job_without_a_second_trace() throws Exception {
        JsonNode unit = unit("normal", ".json");
        String path = "/v1/units/" + unit.get("unitId").asText() + "/traces?model=reefer-40&version=1";
        Path db = dir.resolve("test.db");
        long tracesBefore = Database.count(db, "traces");
        TestServer.Reply first = server.post(path, "application/json", traceBytes(unit), "Idempotency-Key", "gw-42-0001");
        TestServer.Reply retry = server.post(path, "application/json", traceBytes(unit), "Idempotency-Key", "gw-42-0001");
        assertEquals(202, first.status());
        assertEquals(202, retry.status());
        assertEquals(first.json().get("jobId"), retry.json().get("jobId"));
        assertEquals("true", retry.headers().firstValue("Backstate-Replayed").orElse(""));
        assertEquals(tracesBefore + 1, Database.count(db, "traces"));
        // The demo file's times count from its recording's start (no "start"): dated 1970, with a warning, twice.
        assertEquals(first.json().get("warnings"), retry.json().get("warnings"));
        assertEquals("time", first.json().get("warnings").get(0).get("field").asText());
    }

    @Test
    void a_window_before_2000_is_accepted_with_a_time_warning_and_a_dated_one_without() throws Exception {
        JsonNode unit = unit("normal", ".json");
        String path = "/v1/units/" + unit.get("unitId").asText() + "/traces?model=reefer-40&version=1";
        ObjectNode body = (ObjectNode) server.mapper.readTree(traceBytes(unit));
        double first = body.get("time").get(0).asDouble();
        TestServer.Reply plain = server.post(path, "application/json", server.mapper.writeValueAsBytes(body));
        assertEquals(202, plain.status(), plain.body());
        JsonNode warnings = plain.json().get("warnings");
        assertEquals(1, warnings.size(), warnings.toString());
        assertEquals("time", warnings.get(0).get("field").asText());
        assertEquals("the window starts at " + java.time.Instant.ofEpochSecond((long) first) + ", before 2000: plain-number"
                + " times are seconds since 1970-01-01T00:00:00Z; if these count from the recording's start, declare that"
                + " start (JSON \"start\", CSV header \"time since <RFC 3339 time>\")", warnings.get(0).get("detail").asText());
        body.put("start", "2026-12-01T06:00:00+02:00");
        TestServer.Reply dated = server.post(path, "application/json", server.mapper.writeValueAsBytes(body));
        assertEquals(202, dated.status(), dated.body());
        assertEquals(0, dated.json().get("warnings").size(), dated.body());
        assertTrue(dated.json().get("warnings").isArray());
    }

    /**
     * An output with no value in the window (a dead sensor) is named in the 202's warnings, in the
     * body's terms, and the estimate agrees: that channel has no samples and the other carries it.
     */
    @Test
    void an_output_with_no_value_in_the_window_is_named_in_a_warning_and_the_estimate_rests_on_the_other()
            throws Exception {
        JsonNode unit = unit("normal", ".json");
        String path = "/v1/units/DEAD-" + unit.get("unitId").asText() + "/traces?model=reefer-40&version=1";
        ObjectNode body = (ObjectNode) server.mapper.readTree(traceBytes(unit));
        body.put("start", "2026-12-01T06:00:00Z");
        ObjectNode outputs = (ObjectNode) body.get("outputs");
        int samples = body.get("time").size();
        ArrayNode dead = outputs.putArray("supply_air");
        for (int k = 0; k < samples; k++) {
            dead.addNull();
        }
        TestServer.Reply accepted = server.post(path, "application/json", server.mapper.writeValueAsBytes(body));
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode warnings = accepted.json().get("warnings");
        assertEquals(1, warnings.size(), warnings.toString());
        assertEquals("outputs.supply_air", warnings.get(0).get("field").asText());
        assertEquals("no value in the window: every sample of this output is missing, so the estimate rests on the"
                + " other outputs", warnings.get(0).get("detail").asText());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        JsonNode channels = server.get("/v1/estimates/" + job.get("estimateId").asText()).json()
                .get("result").get("residuals").get("channels");
        assertEquals("supply_air", channels.get(1).get("output").asText());
        assertEquals(0, channels.get(1).get("samples").asInt());
        assertEquals(samples, channels.get(0).get("samples").asInt());

        String csv = "time since 2026-12-01T06:00:00Z,return_air,supply_air,cooling_power,ambient\n"
                + "0,2.7,,6.4,27.1\n60,2.6,,6.4,27.1\n120,2.5,,6.4,27.1\n";
        JsonNode csvWarnings = server.post(path, "text/csv", csv.getBytes(java.nio.charset.StandardCharsets.UTF_8))
                .json().get("warnings");
        assertEquals(1, csvWarnings.size(), csvWarnings.toString());
        assertEquals("column supply_air", csvWarnings.get(0).get("field").asText());
    }

    @Test
    void sensor_offset_unit_is_flagged_model_mismatch_and_offsets_option_recovers_it() throws Exception {
        JsonNode unit = unit("sensor-offset", ".csv");
        JsonNode plain = submitAndSolve(unit, "text/csv", traceBytes(unit));
        assertTrue(plain.get("flags").toString().contains("model_mismatch"), plain.get("flags").toString());
        String id = unit.get("unitId").asText();
        TestServer.Reply accepted = server.post("/v1/units/" + id + "/traces?model=reefer-40&version=1&estimateOffsets=true",
                "text/csv", traceBytes(unit));
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        JsonNode withOffsets = server.get("/v1/estimates/" + job.get("estimateId").asText()).json();
        JsonNode offset = withOffsets.get("result").get("offsets").get(0);
        assertEquals("return_air", offset.get("name").asText());
        // The demo generator put a +1.5 °C or −2.0 °C offset on return_air (test-data/demo/README.md);
        // with the offset estimated, the interval must cover the injected value.
        double injected = unit.get("fault").asText().contains("-2.0") || unit.get("fault").asText().contains("−2.0") ? -2.0 : 1.5;
        assertTrue(offset.get("lower").asDouble() <= injected && injected <= offset.get("upper").asDouble(),
                "offset interval " + offset + " should cover " + injected);
    }

    @Test
    void few_samples_unit_is_flagged() throws Exception {
        JsonNode unit = unit("few-samples", ".csv");
        JsonNode estimate = submitAndSolve(unit, "text/csv", traceBytes(unit));
        assertTrue(estimate.get("flags").toString().contains("few_samples"), estimate.get("flags").toString());
    }

    @Test
    void series_is_decimated_to_at_most_the_requested_points() throws Exception {
        JsonNode unit = unit("normal", ".csv");
        JsonNode estimate = submitAndSolve(unit, "text/csv", traceBytes(unit));
        JsonNode series = server.get("/v1/estimates/" + estimate.get("id").asText() + "/series?maxPoints=50").json();
        // 361 samples with stride ceil(361/50) = 8 keep samples 0, 8, …, 360: 46 points.
        assertEquals(46, series.get("points").asInt());
        assertEquals(46, series.get("fitted").get("return_air").size());
        assertEquals(43200.0, series.get("time").get(0).asDouble());
    }

    /** A long trace (10⁵ samples) gets the estimate the offline path computes from the same CSV (DocumentSolver, as `solve`). */
    @Test
    void a_long_trace_gets_the_estimate_of_the_offline_solve() throws Exception {
        int samples = 100_000;
        byte[] csv = new backstate.reliability.ReeferTraces(TestServer.TEST_DATA).csv(samples, 11);
        TestServer.Reply accepted = server.post("/v1/units/RCX-LONG1/traces?model=reefer-40&version=1", "text/csv", csv);
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        JsonNode estimate = server.get("/v1/estimates/" + job.get("estimateId").asText()).json();

        backstate.formats.ModelDocument model = server.mapper.readValue(
                TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json").toFile(), backstate.formats.ModelDocument.class);
        backstate.formats.ParsedTrace parsed = new backstate.formats.TraceReader(backstate.formats.Limits.DEFAULTS)
                .readCsv(new java.io.ByteArrayInputStream(csv), model, backstate.formats.TraceOptions.NONE);
        var offline = (backstate.formats.DocumentSolver.Outcome.Solved) backstate.formats.DocumentSolver.solve(model, parsed,
                false, backstate.formats.Limits.DEFAULTS);
        JsonNode expected = server.mapper.readTree(server.mapper.writeValueAsString(offline.document()));
        assertEquals(expected, estimate.get("result"));
    }

    @Test
    void retired_version_takes_no_new_traces() throws Exception {
        TestServer.Reply published = server.post("/v1/models/reefer-40/versions", "application/json",
                Files.readAllBytes(TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json")));
        int version = published.json().get("version").asInt();
        assertEquals(200, server.post("/v1/models/reefer-40/versions/" + version + "/retire", null, new byte[0]).status());
        JsonNode unit = unit("normal", ".csv");
        TestServer.Reply refused = server.post("/v1/units/X1/traces?model=reefer-40&version=" + version, "text/csv", traceBytes(unit));
        assertEquals(409, refused.status());
        assertEquals("/problems/conflict", refused.json().get("type").asText());
    }
}
