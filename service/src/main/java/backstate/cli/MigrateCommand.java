package backstate.cli;

import backstate.config.DatabaseTarget;
import backstate.config.Secret;
import backstate.store.DatabaseCopy;
import backstate.store.DatabaseCopyCheck;
import backstate.store.DatabaseCopyRefusedException;
import backstate.store.PostgresSettings;
import backstate.store.StoreException;
import java.io.PrintStream;
import java.nio.file.Path;
import java.time.Clock;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;

/**
 * {@code migrate}: copies a SQLite database into an empty PostgreSQL database and verifies the
 * copy table by table ({@link DatabaseCopy}), for a fleet moving to several replicas. Prints a line
 * per table copied on stderr as it goes; on stdout a line per table, {@code table rows checksum ok},
 * and a last line. The password comes from BACKSTATE_DATABASE_PASSWORD or
 * BACKSTATE_DATABASE_PASSWORD_FILE, never from the URL.
 * Exit codes: 0 copied and verified (or {@code --help}), 1 the copy failed (the target was left
 * empty) or did not verify, 2 refused: a bad command line, a missing or foreign SQLite file, or a
 * target that already holds rows (nothing was copied).
 */
public final class MigrateCommand {
    /** The command's name on the command line. */
    public static final String NAME = "migrate";
    static final int VERIFIED = 0;
    static final int FAILED = 1;
    static final int REFUSED = 2;
    static final String USAGE = "usage: backstate " + NAME + " --from FILE --to postgresql://user@host:port/database"
            + "   (password from " + DatabaseTarget.PASSWORD_VARIABLE + " or " + DatabaseTarget.PASSWORD_FILE_VARIABLE + ")";
    /** Hex digits of each checksum shown; the comparison uses all 64. */
    static final int CHECKSUM_SHOWN = 16;
    private static final Set<String> FLAGS = Set.of("from", "to");

    private MigrateCommand() {
    }

    public static int run(String[] args, PrintStream out, PrintStream err, Map<String, String> env) {
        if (Arrays.asList(args).contains("--help") || Arrays.asList(args).contains("-h")) {
            out.println(USAGE);
            return VERIFIED;
        }
        Path from;
        DatabaseTarget.PostgresServer to;
        try {
            Map<String, String> flags = flags(args);
            from = Path.of(flags.get("from"));
            to = target(flags.get("to"), env);
        } catch (IllegalArgumentException e) {
            err.println("backstate " + NAME + ": " + e.getMessage() + " (--help for usage)");
            return REFUSED;
        }
        try {
            DatabaseCopy.Result result = DatabaseCopy.copy(from, settings(to), Clock.systemUTC(), err::println);
            return report(result, from, to, out, err);
        } catch (DatabaseCopyRefusedException e) {
            err.println("backstate " + NAME + ": " + e.getMessage());
            return REFUSED;
        } catch (StoreException e) {
            err.println("backstate " + NAME + ": " + oneLine(e.getMessage()));
            return FAILED;
        }
    }

    private static int report(DatabaseCopy.Result result, Path from, DatabaseTarget.PostgresServer to, PrintStream out,
                              PrintStream err) {
        if (result.leftRunningRequeued() + result.leftRunningFailed() > 0) {
            out.println("note: a stopped service left " + (result.leftRunningRequeued() + result.leftRunningFailed())
                    + " job(s) running: " + result.leftRunningRequeued() + " copied as queued with the attempt kept, "
                    + result.leftRunningFailed() + " as failed (out of attempts), as a service start does");
        }
        long rows = 0;
        out.println(String.format("%-20s %8s  %-16s  %s", "table", "rows", "sha256 (start)", "verified"));
        for (DatabaseCopyCheck check : result.checks()) {
            out.println(line(check));
            rows += check.sourceRows();
        }
        if (!result.verified()) {
            err.println("backstate " + NAME + ": the copy in " + to.display() + " does not match " + from + " in "
                    + String.join(", ", result.checks().stream().filter(c -> !c.matches()).map(DatabaseCopyCheck::table)
                    .toList()) + "; it was committed: drop and re-create that database before migrating again");
            return FAILED;
        }
        out.println("backstate " + NAME + ": copied " + from + " to " + to.display() + ", " + result.checks().size()
                + " tables and " + rows + " rows verified");
        return VERIFIED;
    }

    /** {@code table rows checksum ok}, or both sides' figures and MISMATCH. */
    static String line(DatabaseCopyCheck check) {
        String sourceSum = check.sourceChecksum().substring(0, CHECKSUM_SHOWN);
        if (check.matches()) {
            return String.format("%-20s %8d  %s  ok", check.table(), check.sourceRows(), sourceSum);
        }
        return String.format("%-20s %8d  %s  MISMATCH: the target holds %d rows, checksum %s", check.table(),
                check.sourceRows(), sourceSum, check.targetRows(), check.targetChecksum().substring(0, CHECKSUM_SHOWN));
    }

    private static DatabaseTarget.PostgresServer target(String url, Map<String, String> env) {
        DatabaseTarget target;
        try {
            target = DatabaseTarget.parse(url, env);
        } catch (IllegalArgumentException e) {
            // The parser speaks of the service's database setting; here the URL is --to's.
            throw new IllegalArgumentException("--to: " + e.getMessage().replaceFirst("^settings? database: ", ""), e);
        }
        if (target instanceof DatabaseTarget.PostgresServer server) {
            return server;
        }
        throw new IllegalArgumentException("got --to " + url + ", expected postgresql://user@host:port/database");
    }

    private static PostgresSettings settings(DatabaseTarget.PostgresServer server) {
        return PostgresSettings.of(server.jdbcUrl(), server.user(), server.password().map(Secret::value).orElse(null));
    }

    private static Map<String, String> flags(String[] args) {
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String name = args[i].startsWith("--") ? args[i].substring(2) : "";
            if (!FLAGS.contains(name) || i + 1 >= args.length) {
                throw new IllegalArgumentException("got " + args[i] + (FLAGS.contains(name) ? " without a value" : "")
                        + ", expected --from FILE --to postgresql://user@host:port/database");
            }
            flags.put(name, args[++i]);
        }
        for (String name : FLAGS) {
            if (!flags.containsKey(name)) {
                throw new IllegalArgumentException("missing --" + name);
            }
        }
        return flags;
    }

    private static String oneLine(String message) {
        return message == null ? "the copy failed" : message.strip().lines().findFirst().orElse(message);
    }
}
