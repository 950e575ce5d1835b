package backstate.console;

import backstate.api.ApiServer;
import backstate.api.SeriesSolves;
import backstate.auth.ApiKeys;
import backstate.auth.FirstAdminKey;
import backstate.cli.DemoLoader;
import backstate.config.Secret;
import backstate.config.Settings;
import backstate.formats.CheckedModels;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.intake.TraceIntake;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.jobs.ProgressReporting;
import backstate.regression.RegressionJobHandler;
import backstate.solving.StoredTraceSolver;
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
import java.security.SecureRandom;
import java.time.Clock;
import java.time.Duration;
import java.util.Map;
import java.util.Optional;
import java.util.function.IntConsumer;

/**
 * The demo fleet (reefer-40 v1 and v2, 20 stored traces) behind the real API with no worker
 * pool, optionally with access control on: a console test starts a regression run, the run stays
 * queued until the test claims it, and the test works it trace by trace on its own thread. So
 * "the page shows 3 of 20" is checked while the run is held at 3, by order and not by timing.
 */
final class RegressionByHand implements AutoCloseable {
    static final int TRACES = 20;
    static final Map<String, Object> V1_AGAINST_V2 = Map.of("family", "reefer-40", "baseline", 1, "candidate", 2,
            "traces", Map.of("latestPerUnit", 1), "tolerances", Map.of("maxChi2PerDofIncrease", 1.0));

    final ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
    private final Clock clock = Clock.systemUTC();
    private final SqliteDatabase store;
    private final HttpClient http = HttpClient.newHttpClient();
    private final String adminKeyOrNull;
    private final ApiServer api;
    final String base;

    /** Keys off when {@code adminKeyOrNull} is null; else keys on with that admin key. */
    RegressionByHand(Path dir, String adminKeyOrNull) throws IOException, InterruptedException {
        this.store = new SqliteDatabase(dir.resolve("console.db"), clock);
        this.adminKeyOrNull = adminKeyOrNull;
        loadDemoWithKeysOff();
        ApiKeys keys = new ApiKeys(store.keys(), clock, new SecureRandom());
        if (adminKeyOrNull != null) {
            new FirstAdminKey(store.keys(), keys).ensure(Optional.of(new Secret(adminKeyOrNull)));
        }
        this.api = new ApiServer(wiring(keys, adminKeyOrNull != null)).start("127.0.0.1", 0);
        this.base = "http://127.0.0.1:" + api.port();
    }

    /** The demo loader posts without a key: it fills the store through a keys-off server first. */
    private void loadDemoWithKeysOff() throws IOException, InterruptedException {
        try (ApiServer open = new ApiServer(new ApiServer.Wiring(store, mapper, clock, registry(), Limits.DEFAULTS,
                Settings.DEFAULT_MAX_BODY, 10_000, store.queue()::queuedCount, () -> { })).start("127.0.0.1", 0)) {
            new DemoLoader("http://127.0.0.1:" + open.port()).load();
        }
        for (ClaimedJob estimate : store.queue().claimNext(1000, clock.instant())) {
            store.queue().failIfRunning(estimate.id(), estimate.attempt(), "not under test", null, clock.instant());
        }
    }

    private ApiServer.Wiring wiring(ApiKeys keys, boolean auth) {
        CheckedModels models = new CheckedModels(mapper, Limits.DEFAULTS);
        return new ApiServer.Wiring(store, mapper, clock, registry(), Limits.DEFAULTS, Settings.DEFAULT_MAX_BODY, 10_000,
                store.queue()::queuedCount, () -> { }, keys, auth,
                new TraceIntake(store.traces(), store.models(), models, Limits.DEFAULTS, mapper, clock, 10_000, () -> { }),
                solver(), new SeriesSolves(Settings.DEFAULT_SERIES_THREADS, Settings.DEFAULT_SERIES_QUEUE));
    }

    private static PrometheusMeterRegistry registry() {
        return new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    }

    private StoredTraceSolver solver() {
        return new StoredTraceSolver(store.traces(), store.models(), new CheckedModels(mapper, Limits.DEFAULTS), mapper);
    }

    /** Starts v1 against v2 over the demo fleet (as admin when keys are on) and returns the run's ID. */
    String startRun() throws IOException, InterruptedException {
        HttpResponse<String> r = send(HttpRequest.newBuilder(URI.create(base + "/v1/regressions"))
                .header("Content-Type", "application/json")
                .POST(HttpRequest.BodyPublishers.ofString(mapper.writeValueAsString(V1_AGAINST_V2))), adminKeyOrNull);
        if (r.statusCode() != 202) {
            throw new AssertionError("start run: " + r.statusCode() + " " + r.body());
        }
        return mapper.readTree(r.body()).get("id").asText();
    }

    /** GET as the admin (or without a key when keys are off). */
    JsonNode get(String path) throws IOException, InterruptedException {
        HttpResponse<String> r = send(HttpRequest.newBuilder(URI.create(base + path)).GET(), adminKeyOrNull);
        if (r.statusCode() != 200) {
            throw new AssertionError("GET " + path + ": " + r.statusCode() + " " + r.body());
        }
        return mapper.readTree(r.body());
    }

    /** POST a JSON body as the admin; answers the body of a 201. */
    JsonNode postAsAdmin(String path, String json) throws IOException, InterruptedException {
        HttpResponse<String> r = send(HttpRequest.newBuilder(URI.create(base + path)).header("Content-Type", "application/json")
                .POST(HttpRequest.BodyPublishers.ofString(json)), adminKeyOrNull);
        if (r.statusCode() != 201) {
            throw new AssertionError("POST " + path + ": " + r.statusCode() + " " + r.body());
        }
        return mapper.readTree(r.body());
    }

    private HttpResponse<String> send(HttpRequest.Builder request, String keyOrNull) throws IOException, InterruptedException {
        if (keyOrNull != null) {
            request.header("Authorization", "Bearer " + keyOrNull);
        }
        return http.send(request.timeout(Duration.ofSeconds(30)).build(), HttpResponse.BodyHandlers.ofString());
    }

    /**
     * Claims the run's job as a worker would and works it here, telling {@code afterTrace} each
     * progress count once it is stored (0 first); records the outcome as the worker pool does.
     */
    void work(String runId, IntConsumer afterTrace) throws Exception {
        ClaimedJob job = store.queue().claimNext(1000, clock.instant()).stream().filter(j -> j.id().equals(runId))
                .findFirst().orElseThrow(() -> new AssertionError("run " + runId + " was not queued"));
        RegressionJobHandler handler = new RegressionJobHandler(store.regressions(), store.models(), reportingTo(afterTrace),
                solver(), mapper, Limits.DEFAULTS, clock);
        JobOutcome outcome = handler.handle(job);
        if (outcome instanceof JobOutcome.Succeeded done) {
            store.queue().completeIfRunning(job.id(), job.attempt(), null, done.resultJsonOrNull(), clock.instant());
        } else if (outcome instanceof JobOutcome.Failed failed) {
            store.queue().failIfRunning(job.id(), job.attempt(), failed.error(), failed.detailsJsonOrNull(), clock.instant());
        }
    }

    /** The store's queue, telling {@code onProgress} each reported "done" count after recording it. */
    private JobQueue reportingTo(IntConsumer onProgress) {
        return ProgressReporting.reportingTo(store.queue(), onProgress);
    }

    @Override
    public void close() {
        api.close();
        store.close();
    }
}
