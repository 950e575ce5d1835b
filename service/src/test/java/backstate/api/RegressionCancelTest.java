package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import backstate.config.Settings;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.jobs.ProgressReporting;
import backstate.regression.RegressionJobHandler;
import backstate.solving.StoredTraceSolver;
import backstate.formats.CheckedModels;
import backstate.store.SqliteDatabase;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.function.IntConsumer;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Cancelling and following regression runs without a worker pool: the API runs on a real
 * store, and each test claims the run's job and drives its handler itself, so "while queued",
 * "while running, after trace k" and "progress after every trace" happen in a fixed order
 * rather than by timing.
 */
class RegressionCancelTest {
    static final int TRACES = 20;

    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    final HttpClient http = HttpClient.newHttpClient();
    SqliteDatabase store;
    ApiServer api;
    String base;

    @BeforeEach
    void start(@TempDir Path dir) throws Exception {
        store = new SqliteDatabase(dir.resolve("test.db"), Clock.systemUTC());
        api = new ApiServer(new ApiServer.Wiring(store, mapper, Clock.systemUTC(),
                new PrometheusMeterRegistry(PrometheusConfig.DEFAULT), Limits.DEFAULTS, Settings.DEFAULT_MAX_BODY,
                10_000, store.queue()::queuedCount, () -> { })).start("127.0.0.1", 0);
        base = "http://127.0.0.1:" + api.port();
        new DemoLoader(base).load(); // 20 traces; their estimate jobs stay queued
    }

    @AfterEach
    void stop() {
        api.close();
        store.close();
    }

    @Test
    void a_queued_run_is_cancelled_at_once_by_either_cancel_route() throws Exception {
        String first = startRun();
        JsonNode cancelled = post("/v1/regressions/" + first + "/cancel", 200);
        assertEquals("cancelled", cancelled.get("state").asText());
        assertFalse(cancelled.has("result"));
        assertEquals("cancelled", get("/v1/regressions/" + first).get("state").asText());
        JsonNode again = post("/v1/regressions/" + first + "/cancel", 409);
        assertEquals("/problems/conflict", again.get("type").asText());

        String second = startRun();
        post("/v1/jobs/" + second + "/cancel", 200);
        assertEquals("cancelled", get("/v1/regressions/" + second).get("state").asText());
    }

    @Test
    void a_running_run_stops_after_the_trace_in_hand_and_keeps_its_partial_result() throws Exception {
        String id = startRun();
        ClaimedJob job = claim(id);
        List<Integer> progress = new ArrayList<>();
        JobQueue queue = reportingTo(done -> {
            progress.add(done);
            if (done == 5) {
                try {
                    JsonNode requested = post("/v1/regressions/" + id + "/cancel", 202);
                    assertEquals("running", requested.get("state").asText());
                    assertTrue(requested.get("cancelRequested").asBoolean());
                } catch (Exception e) {
                    throw new AssertionError(e);
                }
            }
        });
        JobOutcome outcome = handler(queue).handle(job);

        assertEquals(List.of(0, 1, 2, 3, 4, 5), progress);
        assertEquals("cancelled on request after 5 of 20 traces", ((JobOutcome.Failed) outcome).error());
        JsonNode run = get("/v1/regressions/" + id);
        assertEquals("cancelled", run.get("state").asText());
        assertEquals(5, run.get("progress").get("done").asInt());
        JsonNode result = run.get("result");
        assertFalse(result.get("complete").asBoolean());
        assertEquals(5, result.get("tracesDone").asInt());
        assertEquals(5, result.get("units").size());
        assertFalse(result.has("verdict"));
        assertFalse(run.has("pass"));
        // What the worker's runner does next with the handler's outcome is refused: the job stays cancelled.
        assertFalse(store.queue().failIfRunning(id, job.attempt(), outcome.toString(), null, Clock.systemUTC().instant()));
        assertEquals("cancelled", get("/v1/regressions/" + id).get("state").asText());
    }

    @Test
    void a_cancel_request_outlives_a_crash_and_stops_the_next_attempt_before_any_trace() throws Exception {
        String id = startRun();
        claim(id);
        post("/v1/regressions/" + id + "/cancel", 202);
        // The worker died: rescue puts the job back in the queue, and the next attempt claims it.
        assertTrue(store.queue().rescueStuck(Clock.systemUTC().instant().plus(Duration.ofMinutes(1))) >= 1);
        ClaimedJob second = claim(id);
        assertEquals(2, second.attempt());
        handler(reportingTo(done -> { })).handle(second);
        JsonNode run = get("/v1/regressions/" + id);
        assertEquals("cancelled", run.get("state").asText());
        assertEquals(0, run.get("result").get("tracesDone").asInt());
    }

    @Test
    void progress_is_reported_after_every_trace_until_done_equals_total() throws Exception {
        String id = startRun();
        ClaimedJob job = claim(id);
        List<Integer> progress = new ArrayList<>();
        JobOutcome outcome = handler(reportingTo(progress::add)).handle(job);

        List<Integer> expected = new ArrayList<>();
        for (int i = 0; i <= TRACES; i++) {
            expected.add(i);
        }
        assertEquals(expected, progress);
        JobOutcome.Succeeded done = assertInstanceOf(JobOutcome.Succeeded.class, outcome);
        assertTrue(store.queue().completeIfRunning(id, job.attempt(), null, done.resultJsonOrNull(), Clock.systemUTC().instant()));
        JsonNode run = get("/v1/regressions/" + id);
        assertEquals("succeeded", run.get("state").asText());
        assertEquals(TRACES, run.get("progress").get("done").asInt());
        assertEquals(TRACES, run.get("progress").get("total").asInt());
        assertEquals(TRACES, run.get("result").get("tracesDone").asInt());
        assertFalse(run.get("pass").asBoolean());
    }

    private RegressionJobHandler handler(JobQueue queue) {
        return new RegressionJobHandler(store.regressions(), store.models(), queue,
                new StoredTraceSolver(store.traces(), store.models(), new CheckedModels(mapper, Limits.DEFAULTS), mapper), mapper,
                Limits.DEFAULTS, Clock.systemUTC());
    }

    /** The store's queue, telling {@code onProgress} each reported "done" count after recording it. */
    private JobQueue reportingTo(IntConsumer onProgress) {
        return ProgressReporting.reportingTo(store.queue(), onProgress);
    }

    private String startRun() throws Exception {
        JsonNode run = post("/v1/regressions", Map.of("family", "reefer-40", "baseline", 1, "candidate", 2), 202);
        assertEquals("queued", run.get("state").asText());
        assertEquals(TRACES, run.get("progress").get("total").asInt());
        return run.get("id").asText();
    }

    /** Claims every queued job (the demo's estimate jobs among them) and returns the run's. */
    private ClaimedJob claim(String id) {
        return store.queue().claimNext(1000, Clock.systemUTC().instant()).stream().filter(j -> j.id().equals(id))
                .findFirst().orElseThrow(() -> new AssertionError("run " + id + " was not queued"));
    }

    private JsonNode get(String path) throws Exception {
        return send(HttpRequest.newBuilder(URI.create(base + path)).GET(), 200);
    }

    private JsonNode post(String path, int expected) throws Exception {
        return send(HttpRequest.newBuilder(URI.create(base + path)).POST(HttpRequest.BodyPublishers.noBody()), expected);
    }

    private JsonNode post(String path, Object body, int expected) throws Exception {
        return send(HttpRequest.newBuilder(URI.create(base + path)).header("Content-Type", "application/json")
                .POST(HttpRequest.BodyPublishers.ofString(mapper.writeValueAsString(body))), expected);
    }

    private JsonNode send(HttpRequest.Builder request, int expected) throws IOException, InterruptedException {
        HttpResponse<String> r = http.send(request.timeout(Duration.ofSeconds(30)).build(),
                HttpResponse.BodyHandlers.ofString());
        assertEquals(expected, r.statusCode(), r.body());
        return mapper.readTree(r.body());
    }
}
