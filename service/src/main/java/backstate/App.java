package backstate;

import backstate.api.ApiServer;
import backstate.api.ProcessMeters;
import backstate.api.SeriesSolves;
import backstate.auth.ApiKeys;
import backstate.auth.FirstAdminKey;
import backstate.config.DatabaseTarget;
import backstate.config.Secret;
import backstate.config.Settings;
import backstate.formats.CheckedModels;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.intake.TraceIntake;
import backstate.jobs.HandlersByKind;
import backstate.jobs.JobHandler;
import backstate.jobs.WorkerPool;
import backstate.regression.Chunking;
import backstate.regression.RegressionJobHandler;
import backstate.solving.EstimateJobHandler;
import backstate.solving.StoredTraceSolver;
import backstate.store.Database;
import backstate.store.DatabaseFile;
import backstate.store.PostgresDatabase;
import backstate.store.PostgresSettings;
import backstate.store.SqliteDatabase;
import backstate.store.SqliteSettings;
import backstate.store.StoreException;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.FileDescriptor;
import java.io.FileOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.SecureRandom;
import java.time.Clock;
import java.time.Duration;
import java.util.Map;

/** Wiring only: config → database → migrations → queue → workers → HTTP. */
public final class App implements AutoCloseable {
    /** How often an idle worker looks for jobs that arrived without a wake-up (e.g. after a restart). */
    static final Duration IDLE_POLL = Duration.ofMillis(500);

    private final Database database;
    private final WorkerPool workers;
    private final ApiServer api;
    private final ProcessMeters processMeters;
    /** Makes the first admin key at start when keys are on; null with access control off. */
    private final FirstAdminKey firstAdminKey;

    public App(Settings settings, Clock clock) {
        Limits limits = new Limits(settings.maxSamples(), Limits.DEFAULTS.maxNameLength(), Limits.DEFAULTS.maxJsonDepth());
        ObjectMapper mapper = Json.mapper(limits);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        this.database = openDatabase(settings, clock, registry);
        this.processMeters = ProcessMeters.bind(registry, BuildInfo.version());
        CheckedModels models = new CheckedModels(mapper, limits);
        StoredTraceSolver stored = new StoredTraceSolver(database.traces(), database.models(), models, mapper);
        JobHandler handlers = new HandlersByKind(Map.of(
                "estimate", new EstimateJobHandler(stored, mapper, registry),
                "regression", new RegressionJobHandler(database.regressions(), database.jobs(), database.models(),
                        database.queue(), stored, mapper, limits, clock, Chunking.DEFAULTS)));
        WorkerPool.Policy claims = database.sharedByReplicas() ? WorkerPool.Policy.replicas(settings.jobLease())
                : WorkerPool.Policy.singleProcess(settings.jobLease());
        this.workers = new WorkerPool(database.queue(), handlers, settings.workers(), clock, IDLE_POLL, registry,
                WorkerPool.DEFAULT_SHUTDOWN_GRACE, WorkerPool.DEFAULT_STUCK_AFTER, claims);
        database.onJobsQueued(workers::wake);
        ApiKeys keys = new ApiKeys(database.keys(), clock, new SecureRandom());
        this.firstAdminKey = settings.auth() ? new FirstAdminKey(database.keys(), keys) : null;
        TraceIntake intake = new TraceIntake(database.traces(), database.models(), models, limits, mapper, clock,
                settings.maxQueued(), workers::wake);
        this.api = new ApiServer(new ApiServer.Wiring(database, mapper, clock, registry, limits, settings.maxBodyBytes(),
                settings.maxQueued(), database.queue()::queuedCount, workers::wake, keys, settings.auth(), intake, stored,
                new SeriesSolves(settings.seriesThreads(), settings.seriesQueue())), settings.uploads(),
                settings.readConcurrency());
    }

    /**
     * Starts the workers and the HTTP edge, then makes sure an admin key exists; if any of it fails (the
     * port is taken, a refused BACKSTATE_ADMIN_KEY), everything is closed again. The key comes last: a
     * key generated and printed by a start that then failed would never be printed again.
     */
    public App start(Settings settings) {
        try {
            workers.start();
            api.start(settings.host(), settings.port());
            if (firstAdminKey != null) {
                firstAdminKey.ensure(settings.adminKey());
            }
        } catch (RuntimeException e) {
            close();
            throw e;
        }
        return this;
    }

    /**
     * The SQLite file on a checked path, or the PostgreSQL server; a failure names the file or
     * URL, so the start stops with one line saying why.
     */
    private static Database openDatabase(Settings settings, Clock clock, PrometheusMeterRegistry registry) {
        DatabaseTarget target = settings.database();
        try {
            if (target instanceof DatabaseTarget.PostgresServer server) {
                return new PostgresDatabase(new PostgresSettings(server.jdbcUrl(), server.user(),
                        server.password().map(Secret::value).orElse(null), settings.databasePool(),
                        PostgresSettings.DEFAULT_CONNECTION_TIMEOUT, SqliteSettings.DEFAULT_MAX_ATTEMPTS), clock, registry);
            }
            Path usable = DatabaseFile.usable(((DatabaseTarget.SqliteFile) target).file());
            return SqliteDatabase.forService(usable, clock, registry);
        } catch (StoreException e) {
            throw new IllegalStateException("database " + target.describe() + ": " + e.getMessage(), e);
        }
    }

    public int port() {
        return api.port();
    }

    /** The HTTP edge, for tests that walk its route table. */
    public ApiServer api() {
        return api;
    }

    /** Graceful stop: no new requests, running jobs finish or are left for rescue, database closed. */
    @Override
    public void close() {
        api.close();
        workers.close();
        database.close();
        processMeters.close();
    }

    /** A stop on a signal (SIGTERM, Ctrl-C), said in the log before and after, so an operator sees it was clean. */
    private static void stop(App app) {
        org.slf4j.Logger log = org.slf4j.LoggerFactory.getLogger(App.class);
        log.info("stopping: new requests refused, those in flight and the running jobs given time to finish");
        app.close();
        log.info("stopped");
    }

    /**
     * The command line: serve (default), demo, solve, compare-versions, help; see {@link Launcher}.
     * Standard output and error are UTF-8 whatever the locale: solve writes JSON (RFC 8259: UTF-8)
     * and the texts hold χ² and σ, which a C or POSIX locale (common in CI containers) would print
     * as '?'.
     */
    public static void main(String[] args) {
        System.setOut(new PrintStream(new FileOutputStream(FileDescriptor.out), true, StandardCharsets.UTF_8));
        System.setErr(new PrintStream(new FileOutputStream(FileDescriptor.err), true, StandardCharsets.UTF_8));
        Launcher.Outcome outcome = new Launcher(System.out, System.err, System.getenv()).run(args);
        if (outcome instanceof Launcher.Outcome.Serving serving) {
            Runtime.getRuntime().addShutdownHook(new Thread(() -> stop(serving.app()), "backstate-shutdown"));
        } else {
            System.exit(((Launcher.Outcome.Exited) outcome).code());
        }
    }
}
