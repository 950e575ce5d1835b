package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * Damaged rows, written from outside the service into the demo fleet's SQLite file: a stored
 * estimate document that is not JSON, and a trace payload that does not decode. Each damaged item
 * answers the problem {@code /problems/stored-data-corrupt} naming it; every other item, and the
 * service, go on as before. The check on JSON is Jackson's own parser (RFC 8259 syntax): the
 * answer body must parse as one JSON document.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class StoredCorruptionTest {
    static final String FAMILY = "reefer-40";
    /** Cut mid-value: not JSON by RFC 8259 section 2 (an object must close). */
    static final String GARBAGE_JSON = "{\"chiSquare\": 12.5, \"x0\": [1.0, \u0000garbage";
    /** Format byte 2, then n = 2^31 - 1 samples in a 9-byte payload: the codec's size check refuses it. */
    static final byte[] GARBAGE_PAYLOAD = {2, 0x7f, (byte) 0xff, (byte) 0xff, (byte) 0xff, 0, 0, 0, 2, 0};

    TestServer server;
    List<String[]> estimates;
    int copyOfV1;

    @BeforeAll
    void start(@TempDir Path dir) throws Exception {
        server = new TestServer(dir);
        new DemoLoader(server.base()).load();
        awaitNoJobs();
        TestServer.Reply published = server.postJson("/v1/models/" + FAMILY + "/versions", DemoVersions.v1(server.mapper));
        assertEquals(201, published.status(), published.body());
        copyOfV1 = published.json().get("version").asInt();
        estimates = estimatesByUnit();
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @Test
    void a_garbage_stored_estimate_answers_a_problem_naming_it_and_the_others_still_answer_json() throws Exception {
        String[] damaged = estimates.get(0);
        String[] sound = estimates.get(1);
        execute("UPDATE estimates SET summary_json = ? WHERE id = ?", GARBAGE_JSON, damaged[0]);

        TestServer.Reply reply = server.get("/v1/estimates/" + damaged[0]);
        assertCorruptProblem(reply, "estimate " + damaged[0]);
        TestServer.Reply latest = server.get("/v1/units/" + damaged[1] + "/estimates/latest");
        assertCorruptProblem(latest, "estimate " + damaged[0]);

        TestServer.Reply other = server.get("/v1/estimates/" + sound[0]);
        assertEquals(200, other.status(), other.body());
        assertEquals(sound[0], other.json().get("id").asText());
        assertTrue(other.json().get("result").isObject(), other.body());
        assertEquals(200, server.get("/healthz").status());
        assertEquals(200, server.get("/readyz").status());
    }

    @Test
    void a_corrupt_trace_payload_answers_a_problem_on_its_series_and_a_regression_run_reports_its_unit_not_compared()
            throws Exception {
        String[] damaged = estimates.get(2);
        String[] sound = estimates.get(3);
        JsonNode before = runV1AgainstItsCopy().get("result").get("summary");
        execute("UPDATE traces SET payload = ? WHERE id = ?", GARBAGE_PAYLOAD, damaged[2]);

        assertCorruptProblem(server.get("/v1/estimates/" + damaged[0] + "/series"), "trace " + damaged[2]);
        TestServer.Reply soundSeries = server.get("/v1/estimates/" + sound[0] + "/series?maxPoints=10");
        assertEquals(200, soundSeries.status(), soundSeries.body());

        JsonNode run = runV1AgainstItsCopy();
        assertEquals("succeeded", run.get("state").asText(), run.toString());
        JsonNode result = run.get("result");
        assertEquals(20, result.get("tracesDone").asInt());
        JsonNode summary = result.get("summary");
        assertEquals(20, summary.get("units").asInt());
        assertEquals(before.get("compared").asInt() - 1, summary.get("compared").asInt(), summary.toString());
        assertEquals(before.get("notCompared").asInt() + 1, summary.get("notCompared").asInt(), summary.toString());
        JsonNode unit = RegressionRunTest.unitsById(result).get(damaged[1]);
        assertFalse(unit.get("compared").asBoolean(), unit.toString());
        assertEquals("trace " + damaged[2] + " could not be read: its stored payload is damaged",
                unit.get("reasons").get(0).asText());
        JsonNode trace = unit.get("traces").get(0);
        assertEquals("unreadable", trace.get("baseline").get("status").asText());
        assertEquals("unreadable", trace.get("candidate").get("status").asText());
        assertEquals(List.of(), OpenApiContract.load().schemaErrors("/components/schemas/Regression", run),
                "the run with an unreadable trace against the contract");
        // v1 against a copy of itself: every readable unit is unchanged, so the run passes on the others.
        assertTrue(run.get("pass").asBoolean(), run.toString());
    }

    /**
     * A trace damaged between its post and its solve: the job is queued here by hand (one row,
     * as the intake writes it) for a trace whose payload was overwritten, so the worker meets
     * the damage. It must fail on its first attempt, saying in words which trace is damaged,
     * rather than retry the same bytes or hang {@code running}.
     */
    @Test
    void an_estimate_job_for_a_corrupt_trace_fails_at_once_naming_the_trace() throws Exception {
        String[] damaged = estimates.get(4);
        execute("UPDATE traces SET payload = ? WHERE id = ?", GARBAGE_PAYLOAD, damaged[2]);
        String jobId = "corrupt-trace-job";
        execute("INSERT INTO jobs (id, kind, state, trace_id, params_json, attempt, created_at, progress_done, progress_total)"
                + " VALUES (?, 'estimate', 'queued', ?, NULL, 0, ?, 0, 0)", jobId, damaged[2], System.currentTimeMillis());

        JsonNode job = server.awaitJob(jobId);
        assertEquals("failed", job.get("state").asText(), job.toString());
        assertEquals(1, job.get("attempt").asInt(), job.toString());
        assertEquals(List.of("attempt 1: trace " + damaged[2] + " is damaged in storage and cannot be solved"),
                server.mapper.convertValue(job.get("errors"), List.class), job.toString());
        assertEquals(200, server.get("/readyz").status(), "one damaged item does not make the database unready");
    }

    private JsonNode runV1AgainstItsCopy() throws InterruptedException {
        TestServer.Reply accepted = server.postJson("/v1/regressions", Map.of("family", FAMILY, "baseline", 1,
                "candidate", copyOfV1, "traces", RegressionRunTest.LATEST));
        assertEquals(202, accepted.status(), accepted.body());
        return server.awaitRegression(accepted.json().get("id").asText());
    }

    private void awaitNoJobs() throws Exception {
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        while (System.nanoTime() < deadline) {
            try (Connection c = server.database().connect();
                 PreparedStatement s = c.prepareStatement("SELECT COUNT(*) FROM jobs WHERE state IN ('queued', 'running')");
                 ResultSet rs = s.executeQuery()) {
                rs.next();
                if (rs.getInt(1) == 0) {
                    return;
                }
            }
            Thread.sleep(20);
        }
        throw new AssertionError("the demo fleet's jobs did not finish within 60 s");
    }

    static void assertCorruptProblem(TestServer.Reply reply, String item) {
        assertEquals(500, reply.status(), reply.body());
        assertEquals(Problem.MEDIA_TYPE, reply.contentType(), reply.body());
        JsonNode problem = reply.json();
        assertEquals("/problems/stored-data-corrupt", problem.get("type").asText(), reply.body());
        assertEquals(item + " is damaged in storage and cannot be shown; the operator has it in the log",
                problem.get("detail").asText());
    }

    /** Estimate ID, unit ID and trace ID of each demo unit's estimate, by unit. */
    private List<String[]> estimatesByUnit() throws Exception {
        List<String[]> rows = new ArrayList<>();
        try (Connection c = server.database().connect();
             PreparedStatement s = c.prepareStatement("SELECT id, unit_id, trace_id FROM estimates ORDER BY unit_id");
             ResultSet rs = s.executeQuery()) {
            while (rs.next()) {
                rows.add(new String[] {rs.getString(1), rs.getString(2), rs.getString(3)});
            }
        }
        assertTrue(rows.size() >= 4, "the demo fleet's estimates: " + rows.size());
        return rows;
    }

    private void execute(String sql, Object... values) throws Exception {
        try (Connection c = server.database().connect(); PreparedStatement s = c.prepareStatement(sql)) {
            for (int i = 0; i < values.length; i++) {
                s.setObject(i + 1, values[i]);
            }
            assertEquals(1, s.executeUpdate(), sql);
        }
    }
}
