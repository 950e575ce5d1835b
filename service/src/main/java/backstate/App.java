package backstate;

import backstate.api.ApiServer;
import backstate.api.ProcessMeters;
import backstate.auth.ApiKeys;
import backstate.auth.FirstAdminKey;
import backstate.cli.DemoLoader;
import backstate.cli.RegressCommand;
import backstate.cli.SolveCommand;
import backstate.config.Settings;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.jobs.EstimateJobHandler;
import backstate.jobs.HandlersByKind;
import backstate.jobs.JobHandler;
import backstate.jobs.RegressionJobHandler;
import backstate.jobs.StoredTraceSolver;
import backstate.jobs.WorkerPool;
import backstate.store.SqliteStore;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.nio.file.Path;
import java.security.SecureRandom;
import java.time.Clock;
import java.time.Duration;
import java.util.Arrays;
import java.util.Map;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/** Wiring only: config → database → migrations → queue → workers → HTTP. */
public final class App implements AutoCloseable {
    private static final Logger LOG = LoggerFactory.getLogger(App.class);
    /** How often an idle worker looks for jobs that arrived without a wake-up (e.g. after a restart). */
    static final Duration IDLE_POLL = Duration.ofMillis(500);

    private final SqliteStore store;
    private final WorkerPool workers;
    private final ApiServer api;
    private final ProcessMeters processMeters;

    public App(Settings settings, Clock clock) {
        Limits limits = new Limits(settings.maxSamples(), Limits.DEFAULTS.maxNameLength(), Limits.DEFAULTS.maxJsonDepth());
        ObjectMapper mapper = Json.mapper(limits);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        this.store = new SqliteStore(settings.database(), clock);
        this.processMeters = ProcessMeters.bind(registry);
        StoredTraceSolver stored = new StoredTraceSolver(store, mapper, limits);
        JobHandler handlers = new HandlersByKind(Map.of(
                "estimate", new EstimateJobHandler(stored, mapper, registry),
                "regression", new RegressionJobHandler(store, store, stored, mapper, limits, clock)));
        this.workers = new WorkerPool(store, handlers, settings.workers(), clock, IDLE_POLL, registry);
        ApiKeys keys = new ApiKeys(store, clock, new SecureRandom());
        if (settings.auth()) {
            try {
                new FirstAdminKey(store, keys).ensure(settings.adminKey());
            } catch (RuntimeException e) {
                store.close(); // a refused BACKSTATE_ADMIN_KEY stops the start; leave the file closed
                processMeters.close();
                throw e;
            }
        }
        this.api = new ApiServer(new ApiServer.Wiring(store, mapper, clock, registry, limits, settings.maxBodyBytes(),
                settings.maxQueued(), store::queuedCount, workers::wake, keys, settings.auth(), stored));
    }

    public App start(Settings settings) {
        workers.start();
        api.start(settings.host(), settings.port());
        return this;
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
        store.close();
        processMeters.close();
    }

    public static void main(String[] args) throws Exception {
        String command = args.length == 0 ? "serve" : args[0];
        String[] rest = args.length == 0 ? args : Arrays.copyOfRange(args, 1, args.length);
        switch (command) {
            case "serve" -> serve(Settings.from(rest, System.getenv()), false);
            // The demo loader posts without keys, so the demo always runs with access control off.
            case "demo" -> serve(Settings.from(withAuthOff(rest), System.getenv()), true);
            case "solve" -> System.exit(SolveCommand.run(rest, System.out, System.err));
            case "regress" -> System.exit(RegressCommand.run(rest, System.out, System.err));
            default -> {
                System.err.println("usage: backstate serve|demo [--port N --database FILE ...] | solve --model FILE --trace FILE [options]"
                        + " | regress --server URL --family F --baseline N --candidate M [options]");
                System.exit(2);
            }
        }
    }

    private static void serve(Settings settings, boolean demo) throws Exception {
        LOG.info("settings: {}", settings.describe());
        if (demo) {
            LOG.warn("demo: access control is OFF (every route is open to anyone who can reach the port); use serve for keys");
        } else if (!settings.auth()) {
            LOG.warn("access control is OFF (--auth off / BACKSTATE_AUTH=off): every route is open to anyone who can reach the port");
        }
        App app = new App(settings, Clock.systemUTC()).start(settings);
        Runtime.getRuntime().addShutdownHook(new Thread(app::close, "backstate-shutdown"));
        String base = "http://localhost:" + app.port();
        LOG.info("backstate listening on {} (API under {}/v1, spec at {}/openapi.yaml)", base, base, base);
        if (demo) {
            new DemoLoader(base, Path.of(System.getProperty("backstate.demo", "test-data/demo"))).load();
        }
    }

    /** The flags with --auth off last, so it wins over any --auth given before it. */
    private static String[] withAuthOff(String[] flags) {
        String[] all = Arrays.copyOf(flags, flags.length + 2);
        all[flags.length] = "--auth";
        all[flags.length + 1] = "off";
        return all;
    }
}
