package backstate.api;

import backstate.auth.ApiKeys;
import backstate.config.Settings;
import backstate.config.UploadLimits;
import backstate.formats.CheckedModels;
import backstate.formats.Limits;
import backstate.intake.TraceIntake;
import backstate.solving.StoredTraceSolver;
import backstate.store.Database;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.Javalin;
import io.javalin.http.Handler;
import io.javalin.http.HandlerType;
import io.javalin.http.staticfiles.Location;
import io.javalin.json.JavalinJackson;
import io.micrometer.core.instrument.Timer;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.security.SecureRandom;
import java.time.Clock;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.function.IntSupplier;

/** The HTTP edge: every route in one table, one error mapper, JSON by Jackson, latency by Micrometer. */
public final class ApiServer implements AutoCloseable {
    /**
     * Request latency ({@code backstate_http_latency_seconds}): a histogram whose buckets a
     * dashboard or alert turns into quantiles, tagged by the matched route template (never the
     * raw path, so unit IDs cannot multiply the series), method and status.
     */
    static final String HTTP_LATENCY = "backstate.http.latency";
    /** Where the console's static files are served; the console page itself is {@code GET /}. */
    public static final String CONSOLE_PATH = "/console";
    /** The histogram's buckets span 1 ms to 30 s: a post is answered in milliseconds, a slow series read in seconds. */
    static final Duration LATENCY_RANGE_FROM = Duration.ofMillis(1);
    static final Duration LATENCY_RANGE_TO = Duration.ofSeconds(30);

    private final Javalin app;
    private final List<Route> routes;
    private final SeriesSolves series;

    /**
     * What the routes need; wired by hand in App. {@code intake} takes trace posts, {@code stored}
     * rebuilds series on the {@code series} pool (which {@link #close()} shuts down).
     */
    public record Wiring(Database database, ObjectMapper mapper, Clock clock, PrometheusMeterRegistry registry, Limits limits,
                         long maxBodyBytes, int maxQueued, IntSupplier queued, Runnable wakeWorkers,
                         ApiKeys keys, boolean auth, TraceIntake intake, StoredTraceSolver stored, SeriesSolves series) {

        /** Access control off and no workers here (tests that drive the API directly); key management still works on the store. */
        public Wiring(Database database, ObjectMapper mapper, Clock clock, PrometheusMeterRegistry registry, Limits limits,
                      long maxBodyBytes, int maxQueued, IntSupplier queued, Runnable wakeWorkers) {
            this(database, mapper, clock, registry, limits, maxBodyBytes, maxQueued, queued, wakeWorkers,
                    new CheckedModels(mapper, limits));
        }

        private Wiring(Database database, ObjectMapper mapper, Clock clock, PrometheusMeterRegistry registry,
                       Limits limits, long maxBodyBytes, int maxQueued, IntSupplier queued, Runnable wakeWorkers,
                       CheckedModels models) {
            this(database, mapper, clock, registry, limits, maxBodyBytes, maxQueued, queued, wakeWorkers,
                    new ApiKeys(database.keys(), clock, new SecureRandom()), false,
                    new TraceIntake(database.traces(), database.models(), models, limits, mapper, clock, maxQueued,
                            wakeWorkers),
                    new StoredTraceSolver(database.traces(), database.models(), models, mapper),
                    new SeriesSolves(Settings.DEFAULT_SERIES_THREADS, Settings.DEFAULT_SERIES_QUEUE));
        }
    }

    /** With the default upload limits ({@link UploadLimits#DEFAULTS}). */
    public ApiServer(Wiring w) {
        this(w, UploadLimits.DEFAULTS);
    }

    /** Request bodies are read under {@code uploads}: caps on uploads at once, a minimum rate and a longest time. */
    public ApiServer(Wiring w, UploadLimits uploads) {
        this(w, uploads, Settings.DEFAULT_READ_CONCURRENCY);
    }

    /** As above, with at most {@code readConcurrency} API reads answered at once ({@link ReadAdmission}). */
    public ApiServer(Wiring w, UploadLimits uploads, int readConcurrency) {
        this.routes = routes(w);
        ReadAdmission reads = new ReadAdmission(readConcurrency, w.registry());
        this.series = w.series();
        ProblemMapper problems = new ProblemMapper(w.mapper());
        AccessGuard guard = new AccessGuard(w.keys(), w.database().keys(), w.auth());
        this.app = Javalin.create(config -> {
            config.startup.showJavalinBanner = false;
            // The web console's scripts and styles, and uPlot from its WebJar: public files that hold
            // no data (every figure they show comes from /v1 with the caller's key).
            config.staticFiles.add(files -> {
                files.hostedPath = CONSOLE_PATH;
                files.directory = "/console";
                files.location = Location.CLASSPATH;
            });
            config.staticFiles.enableWebjars();
            config.jsonMapper(new JavalinJackson(w.mapper(), false));
            config.appData(Uploads.KEY, new Uploads(uploads));
            config.http.maxRequestSize = w.maxBodyBytes();
            config.http.prefer405over404 = true;
            // One spelling per resource: "/v1/models/" is not "/v1/models" (404, as the contract says).
            config.router.ignoreTrailingSlashes = false;
            config.jetty.modifyServer(server -> {
                server.setErrorHandler(new ProtocolErrors(w.mapper()));
                StopDrain.install(server);
            });
            config.requestLogger.http((ctx, ms) -> Timer.builder(HTTP_LATENCY)
                    .description("time from request to answer, by route template, method and status")
                    .tag("method", ctx.method().name())
                    .tag("route", matchedPath(ctx))
                    .tag("status", Integer.toString(ctx.statusCode()))
                    .publishPercentileHistogram()
                    .minimumExpectedValue(LATENCY_RANGE_FROM)
                    .maximumExpectedValue(LATENCY_RANGE_TO)
                    .register(w.registry()).record((long) (ms * 1_000_000L), TimeUnit.NANOSECONDS));
            // Answers over Javalin's size threshold are gzipped when the client accepts it, so every
            // answer may differ by Accept-Encoding; caches must know (RFC 9110 §12.5.5).
            config.routes.before(ctx -> ctx.header("Vary", "Accept-Encoding"));
            problems.register(config.routes);
            for (Route r : routes) {
                config.routes.addEndpoint(endpoint(r, guard, reads));
                // Javalin answers HEAD on a GET route with an empty 200 without running any handler,
                // so a protected GET would answer HEAD to anyone: HEAD runs the GET, guard and all
                // (Jetty sends no body for HEAD).
                if (r.method() == HandlerType.GET) {
                    config.routes.addEndpoint(endpoint(new Route(HandlerType.HEAD, r.path(), r.access(), r.handler(), r.query()),
                            guard, reads));
                }
            }
        });
    }

    /**
     * A route's handler behind its access check, then, for API reads, read admission (a refused key
     * never waits), then the query string's checks (no parameter twice, no broken escape, on an
     * API route no parameter it does not read).
     */
    private static io.javalin.router.Endpoint endpoint(Route r, AccessGuard guard, ReadAdmission reads) {
        Handler checked = QueryStrings.checked(r);
        Route admitted = new Route(r.method(), r.path(), r.access(), ReadAdmission.counts(r) ? reads.admitted(checked) : checked,
                r.query());
        return new io.javalin.router.Endpoint(r.method(), r.path(), guard.wrap(admitted), java.util.Set.of());
    }

    /**
     * The route template that served a request: Javalin's catch-all "*" for unknown paths, 405s and
     * static files, "unmatched" if no endpoint was visited at all (Javalin 7's ctx.endpoint() throws then).
     */
    private static String matchedPath(io.javalin.http.Context ctx) {
        List<io.javalin.router.Endpoint> visited = ctx.endpoints().list();
        return visited.isEmpty() ? "unmatched" : visited.get(visited.size() - 1).path;
    }

    /** The route table: a reader sees the whole API here. */
    static List<Route> routes(Wiring w) {
        Database db = w.database();
        ModelRoutes models = new ModelRoutes(db.models(), w.mapper(), w.clock(), w.limits(), w.maxBodyBytes());
        TraceRoutes traces = new TraceRoutes(w.intake(), w.maxBodyBytes());
        JobRoutes jobs = new JobRoutes(db.jobs(), db.estimates(), w.mapper(), w.clock());
        EstimateRoutes estimates = new EstimateRoutes(db.estimates(), w.stored(), w.series());
        ServiceRoutes service = new ServiceRoutes(db, w.registry(), w.queued(), w.maxQueued());
        KeyRoutes keys = new KeyRoutes(w.keys(), w.mapper());
        RegressionRoutes regressions = new RegressionRoutes(db.models(), db.regressions(), db.jobs(), w.mapper(), w.clock(),
                w.maxBodyBytes(), w.maxQueued(), w.wakeWorkers());
        FleetRoutes fleet = new FleetRoutes(db.fleet(), db.estimates(), db.models(), w.mapper(), w.clock());
        PlanRoutes plans = new PlanRoutes(db.models(), w.mapper(), w.limits());
        HandlerType get = HandlerType.GET;
        HandlerType post = HandlerType.POST;
        return List.of(
                new Route(get, "/", Access.PUBLIC, service::index),
                new Route(get, "/healthz", Access.PUBLIC, service::health),
                new Route(get, "/readyz", Access.PUBLIC, service::ready),
                new Route(get, "/metrics", Access.PUBLIC, service::metrics),
                new Route(get, "/openapi.yaml", Access.PUBLIC, service::openapi),
                new Route(post, "/v1/keys", Access.ADMIN, keys::create),
                new Route(get, "/v1/keys", Access.ADMIN, keys::list),
                new Route(post, "/v1/keys/{keyId}/revoke", Access.ADMIN, keys::revoke),
                new Route(post, "/v1/models", Access.ADMIN, models::createFamily),
                new Route(get, "/v1/models", Access.ANY_KEY, models::listFamilies),
                new Route(get, "/v1/models/{family}", Access.ANY_KEY, models::getFamily),
                new Route(post, "/v1/models/{family}/versions", Access.ADMIN, models::publishVersion),
                new Route(get, "/v1/models/{family}/versions", Access.ANY_KEY, models::listVersions),
                new Route(get, "/v1/models/{family}/versions/{version}", Access.ANY_KEY, models::getVersion),
                new Route(post, "/v1/models/{family}/versions/{version}/retire", Access.ADMIN, models::retireVersion),
                new Route(post, "/v1/units/{unitId}/traces", Access.GATEWAY_FOR_UNIT, traces::submit,
                        List.of("model", "version", "formulation", "estimateOffsets", "referenceTime")),
                new Route(get, "/v1/units/{unitId}/estimates", Access.READER, estimates::history,
                        List.of("model", "version", "from", "to", "receivedFrom", "receivedTo", "flag", "limit", "cursor")),
                new Route(get, "/v1/units/{unitId}/estimates/latest", Access.READER, estimates::latest,
                        List.of("model", "version")),
                new Route(get, "/v1/jobs/{jobId}", Access.JOB_OF_UNIT, jobs::get),
                new Route(post, "/v1/jobs/{jobId}/cancel", Access.GATEWAY_FOR_JOB, jobs::cancel),
                new Route(get, "/v1/estimates/{estimateId}", Access.READER, estimates::get),
                new Route(get, "/v1/estimates/{estimateId}/series", Access.READER, estimates::series, List.of("maxPoints")),
                new Route(post, "/v1/regressions", Access.PIPELINE, regressions::create),
                new Route(get, "/v1/regressions", Access.READER, regressions::list, List.of("family", "limit", "cursor")),
                new Route(get, "/v1/regressions/{regressionId}", Access.READER, regressions::get),
                new Route(post, "/v1/regressions/{regressionId}/cancel", Access.ADMIN, regressions::cancel),
                new Route(get, "/v1/fleet/{family}/summary", Access.READER, fleet::summary,
                        List.of("from", "to", "receivedFrom", "receivedTo", "version", "staleAfter")),
                new Route(get, "/v1/fleet/{family}/units", Access.READER, fleet::units,
                        List.of("version", "flag", "sort", "limit", "cursor")),
                new Route(get, "/v1/units/{unitId}/trend", Access.READER, fleet::trend,
                        List.of("state", "model", "version", "from", "to", "receivedFrom", "receivedTo", "limit")),
                new Route(post, "/v1/models/{family}/versions/{version}/plans", Access.READER, plans::plan));
    }

    /** Method and path of every route, e.g. "GET /v1/jobs/{jobId}". */
    public List<String> routeKeys() {
        return routes.stream().map(r -> r.method().name() + " " + r.path()).toList();
    }

    /** The route table as registered, access rules included (the access matrix test walks it). */
    List<Route> routes() {
        return routes;
    }

    public ApiServer start(String host, int port) {
        app.start(host, port);
        return this;
    }

    public int port() {
        return app.port();
    }

    /** The series pool, for tests that fill it. */
    SeriesSolves series() {
        return series;
    }

    @Override
    public void close() {
        app.stop();
        series.close();
    }
}
