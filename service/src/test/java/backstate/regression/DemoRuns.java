package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.api.ApiServer;
import backstate.cli.DemoLoader;
import backstate.config.Settings;
import backstate.formats.CheckedModels;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.jobs.ProgressReporting;
import backstate.solving.StoredTraceSolver;
import backstate.store.Database;
import backstate.store.JobRow;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Clock;
import java.time.Duration;
import java.util.List;
import java.util.Map;

/**
 * The demo fleet (family reefer-40, versions 1 and 2, 20 stored traces) on a store, behind an API
 * with no workers: tests start regression runs through the API and work their jobs themselves,
 * or with worker pools of their own. The demo's estimate jobs are failed at once, so the queue
 * holds only what the runs put there.
 */
final class DemoRuns implements AutoCloseable {
    static final int TRACES = 20;
    static final Map<String, Object> V1_AGAINST_V2 = Map.of("family", "reefer-40", "baseline", 1, "candidate", 2);

    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    final Database store;
    final Clock clock;
    private final HttpClient http = HttpClient.newHttpClient();
    private final ApiServer api;
    private final String base;

    DemoRuns(Database store, Clock clock) throws Exception {
        this.store = store;
        this.clock = clock;
        this.api = new ApiServer(new ApiServer.Wiring(store, mapper, clock,
                new PrometheusMeterRegistry(PrometheusConfig.DEFAULT), Limits.DEFAULTS, Settings.DEFAULT_MAX_BODY,
                10_000, store.queue()::queuedCount, () -> { })).start("127.0.0.1", 0);
        this.base = "http://127.0.0.1:" + api.port();
        new DemoLoader(base).load();
        for (ClaimedJob estimate : store.queue().claimNext(1000, clock.instant())) {
            store.queue().failIfRunning(estimate.id(), estimate.attempt(), "not under test", null, clock.instant());
        }
    }

    /** A handler that splits runs of more than {@code tracesPerChunk} traces, working through {@code queue}. */
    RegressionJobHandler handler(JobQueue queue, int tracesPerChunk) {
        return handler(store, queue, tracesPerChunk);
    }

    /** As {@link #handler(JobQueue, int)}, on another replica's store. */
    RegressionJobHandler handler(Database replica, JobQueue queue, int tracesPerChunk) {
        return new RegressionJobHandler(replica.regressions(), replica.jobs(), replica.models(), queue,
                solver(replica), mapper, Limits.DEFAULTS, clock,
                new Chunking(tracesPerChunk, Duration.ofMillis(20), Duration.ofSeconds(10)));
    }

    /** A handler that runs every run in one piece. */
    RegressionJobHandler whole() {
        return new RegressionJobHandler(store.regressions(), store.models(), store.queue(), solver(store), mapper,
                Limits.DEFAULTS, clock);
    }

    StoredTraceSolver solver(Database replica) {
        return new StoredTraceSolver(replica.traces(), replica.models(), new CheckedModels(mapper, Limits.DEFAULTS),
                mapper);
    }

    /** Starts a run of v1 against v2 over every demo trace; returns its ID. */
    String startRun() throws Exception {
        JsonNode run = send(HttpRequest.newBuilder(URI.create(base + "/v1/regressions"))
                .header("Content-Type", "application/json")
                .POST(HttpRequest.BodyPublishers.ofString(mapper.writeValueAsString(V1_AGAINST_V2))), 202);
        assertEquals(TRACES, run.get("progress").get("total").asInt());
        return run.get("id").asText();
    }

    /** The result of a run of the same request in one piece, as the API shows it. */
    JsonNode resultInOnePiece() throws Exception {
        String id = startRun();
        ClaimedJob job = claim(id);
        JobOutcome.Succeeded done = (JobOutcome.Succeeded) whole().handle(job);
        store.queue().completeIfRunning(id, job.attempt(), null, done.resultJsonOrNull(), clock.instant());
        return run(id).get("result");
    }

    JsonNode run(String id) throws Exception {
        return send(HttpRequest.newBuilder(URI.create(base + "/v1/regressions/" + id)).GET(), 200);
    }

    JsonNode cancel(String id, int expected) throws Exception {
        return send(HttpRequest.newBuilder(URI.create(base + "/v1/regressions/" + id + "/cancel"))
                .POST(HttpRequest.BodyPublishers.noBody()), expected);
    }

    /** Claims the queued job {@code id}, and with it every job queued before it. */
    ClaimedJob claim(String id) {
        return store.queue().claimNext(1000, clock.instant()).stream().filter(j -> j.id().equals(id)).findFirst()
                .orElseThrow(() -> new AssertionError("job " + id + " was not queued"));
    }

    /** Works a claimed job through the handler and records its outcome, as a worker's runner does. */
    JobOutcome work(RegressionJobHandler handler, ClaimedJob job) throws Exception {
        JobOutcome outcome = handler.handle(job);
        if (outcome instanceof JobOutcome.Succeeded done) {
            store.queue().completeIfRunning(job.id(), job.attempt(), null, done.resultJsonOrNull(), clock.instant());
        } else {
            store.queue().failIfRunning(job.id(), job.attempt(), ((JobOutcome.Failed) outcome).error(), null,
                    clock.instant());
        }
        return outcome;
    }

    /** The chunk jobs of run {@code runId} split {@code tracesPerChunk} traces a chunk, by index. */
    List<JobRow> chunks(String runId, int tracesPerChunk) throws Exception {
        RegressionParams params = mapper.readValue(store.jobs().findJob(runId).orElseThrow().paramsJson(),
                RegressionParams.class);
        return ChunkPlan.of(runId, params.traceIds().size(), tracesPerChunk).chunks().stream()
                .map(c -> store.jobs().findJob(c.id()).orElseThrow(() -> new AssertionError("chunk " + c + " missing")))
                .toList();
    }

    /** The store's queue, telling {@code onProgress} of each progress write (job ID, done) after making it. */
    JobQueue watching(ProgressReporting.Hook onProgress) {
        return ProgressReporting.reportingTo(store.queue(), onProgress);
    }

    private JsonNode send(HttpRequest.Builder request, int expected) throws IOException, InterruptedException {
        HttpResponse<String> r = http.send(request.timeout(Duration.ofSeconds(30)).build(),
                HttpResponse.BodyHandlers.ofString());
        assertEquals(expected, r.statusCode(), r.body());
        return mapper.readTree(r.body());
    }

    @Override
    public void close() {
        api.close();
        store.close();
    }
}
