package backstate;

import backstate.cli.CompareVersionsCommand;
import backstate.cli.DemoLoader;
import backstate.cli.MigrateCommand;
import backstate.cli.SolveCommand;
import backstate.config.Settings;
import java.io.IOException;
import java.io.PrintStream;
import java.time.Clock;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The command line: picks the command, prints usage on {@code --help}, and turns a start the
 * service refuses (a bad flag, a database path it cannot use, a port in use) into one line on
 * stderr and an exit code, never a stack trace.
 * Exit codes of serve and demo: 0 usage shown, 1 the service could not start, 2 bad command line;
 * solve, compare-versions and migrate document their own.
 */
final class Launcher {
    static final int USAGE_SHOWN = 0;
    static final int START_FAILED = 1;
    static final int BAD_COMMAND_LINE = 2;
    /** The old name of compare-versions, still accepted with a notice. */
    static final String OLD_COMPARE_NAME = "regress";
    static final String USAGE = """
            usage: backstate COMMAND [FLAGS]   (backstate COMMAND --help for one command)
              serve             run the service, API keys on (the default command)
              demo              run the service with the invented demo reefer fleet loaded, keys off
              solve             solve one trace on this machine, no server: --model FILE --trace FILE
              compare-versions  compare two model versions over a server's stored traces, for CI
              migrate           copy a SQLite database into an empty PostgreSQL one: --from FILE --to URL
              help              this text
              --version         the version of this build""";
    static final String SERVICE_FLAGS = """
              --host ADDRESS          listen address (BACKSTATE_HOST, default 0.0.0.0)
              --port N                listen port, 0 for any free one (BACKSTATE_PORT, default 8080)
              --database FILE|URL     SQLite file, or postgresql://USER@HOST:PORT/DB for replicas
                                      (BACKSTATE_DATABASE, default backstate.db; the PostgreSQL password
                                      from BACKSTATE_DATABASE_PASSWORD or BACKSTATE_DATABASE_PASSWORD_FILE)
              --workers N             jobs solved at once (BACKSTATE_WORKERS, default: number of cores)
              --max-body-bytes N      request body limit after decompression (BACKSTATE_MAX_BODY_BYTES, default 268435456)
              --max-queued N          queued jobs before trace posts get 503 (BACKSTATE_MAX_QUEUED, default 10000)
              --max-samples N         samples per trace (BACKSTATE_MAX_SAMPLES, default 2000000)
              --auth on|off           API keys on or off (BACKSTATE_AUTH, default on; demo: always off)
              --series-threads N      series re-solves at once (BACKSTATE_SERIES_THREADS, default 2)
              --series-queue N        series requests waiting before more get 503 (BACKSTATE_SERIES_QUEUE, default 8)
              --job-lease SECONDS     a claimed job's lease, renewed every third (BACKSTATE_JOB_LEASE, default 15)
              --database-pool N       PostgreSQL connections per replica (BACKSTATE_DATABASE_POOL, default 8)
              --max-uploads N         request bodies read at once before more get 503 (BACKSTATE_MAX_UPLOADS, default 64)
              --max-uploads-per-key N the same for one key (BACKSTATE_MAX_UPLOADS_PER_KEY, default 32)
              --min-body-rate BYTES   a body slower than this after 5 s gets 408 (BACKSTATE_MIN_BODY_RATE, default 1024)
              --max-body-seconds N    a body still arriving after this gets 408 (BACKSTATE_MAX_BODY_SECONDS, default 300)
              --read-concurrency N    API reads answered at once, the rest wait their turn (BACKSTATE_READ_CONCURRENCY, default: the cores, at least 2)
            The first admin key comes from BACKSTATE_ADMIN_KEY (environment only), or is generated and
            printed once at the first start.""";

    /** What a command line came to: a process exit code, or a service left running. */
    sealed interface Outcome {
        record Exited(int code) implements Outcome {
        }

        record Serving(App app) implements Outcome {
        }
    }

    private final PrintStream out;
    private final PrintStream err;
    private final Map<String, String> env;

    Launcher(PrintStream out, PrintStream err, Map<String, String> env) {
        this.out = out;
        this.err = err;
        this.env = env;
    }

    Outcome run(String[] args) {
        String command = args.length == 0 ? "serve" : args[0];
        String[] rest = args.length == 0 ? args : Arrays.copyOfRange(args, 1, args.length);
        return switch (command) {
            case "serve" -> service("serve", rest, false);
            case "demo" -> service("demo", rest, true);
            case "solve" -> new Outcome.Exited(SolveCommand.run(rest, out, err));
            case CompareVersionsCommand.NAME -> new Outcome.Exited(CompareVersionsCommand.run(rest, out, err));
            case MigrateCommand.NAME -> new Outcome.Exited(MigrateCommand.run(rest, out, err, env));
            case OLD_COMPARE_NAME -> {
                err.println("backstate: '" + OLD_COMPARE_NAME + "' is now called '" + CompareVersionsCommand.NAME
                        + "'; the old name will be removed");
                yield new Outcome.Exited(CompareVersionsCommand.run(rest, out, err));
            }
            case "help", "--help", "-h" -> {
                out.println(USAGE);
                yield new Outcome.Exited(USAGE_SHOWN);
            }
            case "--version", "version" -> {
                out.println("backstate " + BuildInfo.version());
                yield new Outcome.Exited(USAGE_SHOWN);
            }
            default -> {
                err.println("backstate: got command " + command + ", expected serve, demo, solve, "
                        + CompareVersionsCommand.NAME + ", " + MigrateCommand.NAME + " or help");
                yield new Outcome.Exited(BAD_COMMAND_LINE);
            }
        };
    }

    private Outcome service(String name, String[] flags, boolean demo) {
        if (List.of(flags).contains("--help") || List.of(flags).contains("-h")) {
            out.println("usage: backstate " + name + " [FLAGS]; each flag overrides its environment variable\n"
                    + SERVICE_FLAGS);
            return new Outcome.Exited(USAGE_SHOWN);
        }
        Settings settings;
        try {
            // The demo loader posts without keys, so the demo always runs with access control off.
            Settings given = Settings.from(flags, env);
            settings = demo ? given.withAuthOff() : given;
        } catch (IllegalArgumentException e) {
            err.println("backstate " + name + ": " + e.getMessage() + " (--help for usage)");
            return new Outcome.Exited(BAD_COMMAND_LINE);
        }
        App app;
        try {
            app = start(settings, demo);
        } catch (RuntimeException e) {
            err.println("backstate " + name + ": cannot start: " + firstLine(e));
            return new Outcome.Exited(START_FAILED);
        }
        if (demo) {
            try {
                new DemoLoader(base(app)).load();
            } catch (IOException | InterruptedException e) {
                app.close();
                err.println("backstate demo: cannot load the demo fleet: " + firstLine(e));
                return new Outcome.Exited(START_FAILED);
            }
        }
        return new Outcome.Serving(app);
    }

    private static App start(Settings settings, boolean demo) {
        // The logger is made here, not in a static field: the one-shot commands never log, and
        // setting logging up is a tenth of a short command's start-up (bench/solve-start.sh).
        Logger log = LoggerFactory.getLogger(Launcher.class);
        log.info("backstate {}, settings: {}", BuildInfo.version(), settings.describe());
        if (demo) {
            log.warn("demo: access control is OFF (every route is open to anyone who can reach the port); use serve for keys");
        } else if (!settings.auth()) {
            log.warn("access control is OFF (--auth off / BACKSTATE_AUTH=off): every route is open to anyone who can reach the port");
        }
        App app = new App(settings, Clock.systemUTC()).start(settings);
        String base = base(app);
        log.info("backstate listening on {} (API under {}/v1, spec at {}/openapi.yaml)", base, base, base);
        return app;
    }

    private static String base(App app) {
        return "http://localhost:" + app.port();
    }

    /** The failure's own words on one line: its message's first line, or its kind when it has none. */
    static String firstLine(Throwable e) {
        String message = e.getMessage();
        if (message == null || message.isBlank()) {
            return e.getClass().getSimpleName();
        }
        return message.strip().lines().findFirst().orElse(message);
    }
}
