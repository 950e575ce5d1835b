package backstate;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.config.Settings;
import backstate.store.SqliteDatabase;
import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.Statement;
import java.time.Clock;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The command line as a user meets it: {@code backstate.App} in a child process from the test
 * class path (the jar's code; surefire runs before the jar is packaged), its exit code and its
 * stderr read whole. A refused start says why in one line starting "backstate COMMAND:", and
 * nothing on stderr looks like a stack trace. (The read-only file system case, which needs a
 * mount, is in DatabaseTroubleTest.)
 */
class StartErrorsTest {
    /** JVM start and a refused start take a second or two; this only bounds a hung child. */
    static final long CHILD_TIMEOUT_SECONDS = 60;

    @TempDir
    Path dir;

    record Run(int exit, String out, String err) {
        /** The lines the command itself wrote to stderr (log lines carry a timestamp and a level). */
        List<String> ownErrorLines() {
            return err.lines().filter(line -> line.startsWith("backstate")).toList();
        }
    }

    Run backstate(String... args) throws IOException, InterruptedException {
        return backstate(Map.of(), args);
    }

    /** As {@link #backstate(String...)} with these environment variables set for the child. */
    Run backstate(Map<String, String> env, String... args) throws IOException, InterruptedException {
        List<String> command = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-Xmx128m", "-cp", System.getProperty("java.class.path"), "backstate.App"));
        command.addAll(List.of(args));
        Path out = dir.resolve("out.txt");
        Path err = dir.resolve("err.txt");
        ProcessBuilder builder = new ProcessBuilder(command).directory(dir.toFile())
                .redirectOutput(out.toFile()).redirectError(err.toFile());
        builder.environment().keySet().removeIf(name -> name.startsWith("BACKSTATE_"));
        builder.environment().putAll(env);
        Process process = builder.start();
        if (!process.waitFor(CHILD_TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
            process.destroyForcibly().waitFor();
            throw new AssertionError("backstate " + String.join(" ", args) + " did not exit: " + Files.readString(err));
        }
        return new Run(process.exitValue(), Files.readString(out, StandardCharsets.UTF_8),
                Files.readString(err, StandardCharsets.UTF_8));
    }

    /** Asserts the exit code, one line of the command's own on stderr, and no stack trace; returns that line. */
    static String oneLine(Run run, int exit) {
        assertEquals(exit, run.exit(), run.err());
        assertEquals(1, run.ownErrorLines().size(), run.err());
        assertFalse(run.err().contains("\tat ") || run.err().contains("Exception"), "a stack trace: " + run.err());
        return run.ownErrorLines().get(0);
    }

    @Test
    void help_lists_the_commands_on_stdout_and_exits_0() throws Exception {
        for (String help : new String[] {"--help", "help", "-h"}) {
            Run run = backstate(help);
            assertEquals(0, run.exit(), run.err());
            assertEquals(Launcher.USAGE + System.lineSeparator(), run.out());
            assertEquals("", run.err());
        }
    }

    /** The version the pom declares, handed over by surefire (backstate.expectedVersion), not read by the code under test. */
    @Test
    void version_prints_the_build_s_version_and_exits_0() throws Exception {
        String expected = System.getProperty("backstate.expectedVersion");
        assertTrue(expected != null && !expected.isBlank(), "surefire passes the pom's version");
        for (String version : new String[] {"--version", "version"}) {
            Run run = backstate(version);
            assertEquals(0, run.exit(), run.err());
            assertEquals("backstate " + expected + System.lineSeparator(), run.out());
            assertEquals("", run.err());
        }
    }

    /** A C locale (common in CI containers) made the JVM print σ and χ² as '?'; the commands write UTF-8. */
    @Test
    void the_commands_write_utf_8_in_a_c_locale() throws Exception {
        Path trace = dir.resolve("trace.json");
        Files.writeString(trace, "{\"time\":[0,60],\"outputs\":{\"return_air\":[1,2],\"supply_air\":[1,2]},"
                + "\"inputs\":{\"cooling_power\":[0,0],\"ambient\":[20,20]},\"noiseSigma\":{\"return_air\":-1}}");
        Run run = backstate(Map.of("LANG", "C", "LC_ALL", "C"), "solve", "--model",
                TestServer.TEST_DATA.resolve("demo/models/reefer-40.v1.json").toString(), "--trace", trace.toString());
        assertEquals("backstate solve: noiseSigma.return_air: got -1.0, expected a σ from 1.0E-12 to 1.0E15",
                oneLine(run, 2));
    }

    @Test
    void demo_help_and_serve_help_print_the_flags_and_exit_0() throws Exception {
        for (String command : new String[] {"demo", "serve"}) {
            Run run = backstate(command, "--help");
            assertEquals(0, run.exit(), run.err());
            assertTrue(run.out().startsWith("usage: backstate " + command + " [FLAGS]"), run.out());
            assertTrue(run.out().contains("--database FILE") && run.out().contains("--auth on|off"), run.out());
            assertEquals("", run.err());
        }
    }

    @Test
    void the_old_name_of_compare_versions_still_works_with_a_one_line_notice() throws Exception {
        Run run = backstate("regress", "--help");
        assertEquals(0, run.exit(), run.err());
        assertTrue(run.out().startsWith("usage: backstate compare-versions --server URL"), run.out());
        assertEquals("backstate: 'regress' is now called 'compare-versions'; the old name will be removed"
                + System.lineSeparator(), run.err());
    }

    @Test
    void the_service_usage_names_every_setting_flag() {
        String refusal = assertThrows(IllegalArgumentException.class,
                () -> Settings.from(new String[] {"--no-such-flag", "1"}, Map.of())).getMessage();
        Matcher flag = Pattern.compile("(--[a-z-]+) VALUE").matcher(refusal);
        int flags = 0;
        while (flag.find()) {
            assertTrue(Launcher.SERVICE_FLAGS.contains("  " + flag.group(1) + " "), flag.group(1) + " in the usage");
            flags++;
        }
        assertEquals(17, flags, refusal);
    }

    @Test
    void an_unknown_flag_is_one_line_naming_it_and_exits_2() throws Exception {
        Run run = backstate("serve", "--databse", "x.db");
        assertEquals("backstate serve: got flag --databse, expected one of --host VALUE,"
                + " --port VALUE, --database VALUE, --workers VALUE, --max-body-bytes VALUE, --max-queued VALUE,"
                + " --max-samples VALUE, --auth VALUE, --series-threads VALUE, --series-queue VALUE, --job-lease VALUE, --database-pool VALUE,"
                + " --max-uploads VALUE, --max-uploads-per-key VALUE, --min-body-rate VALUE, --max-body-seconds VALUE, --read-concurrency VALUE (--help for usage)", oneLine(run, Launcher.BAD_COMMAND_LINE));
    }

    @Test
    void a_last_flag_without_its_value_is_named_as_such_by_serve_and_demo() throws Exception {
        IllegalArgumentException refusal = assertThrows(IllegalArgumentException.class,
                () -> Settings.from(new String[] {"--database", "x.db", "--port"}, Map.of()));
        assertEquals("got flag --port without a value, expected --port VALUE", refusal.getMessage());
        // The demo turns keys off after reading the flags, so its flags are refused in the same words.
        assertEquals("backstate demo: got flag --port without a value, expected --port VALUE (--help for usage)",
                oneLine(backstate("demo", "--port"), Launcher.BAD_COMMAND_LINE));
    }

    @Test
    void turning_keys_off_for_the_demo_keeps_every_other_setting() {
        Settings asked = Settings.from(new String[] {"--auth", "on", "--port", "9090"}, Map.of());
        assertTrue(asked.auth());
        Settings demo = asked.withAuthOff();
        assertFalse(demo.auth());
        assertEquals(asked, new Settings(demo.host(), demo.port(), demo.database(), demo.workers(), demo.maxBodyBytes(),
                demo.maxQueued(), demo.maxSamples(), true, demo.adminKey(), demo.seriesThreads(), demo.seriesQueue(),
                demo.jobLease(), demo.databasePool(), demo.uploads(), demo.readConcurrency()), "only auth differs");
    }

    @Test
    void an_unknown_command_is_one_line_and_exits_2() throws Exception {
        assertEquals("backstate: got command estimate, expected serve, demo, solve, compare-versions, migrate or help",
                oneLine(backstate("estimate"), Launcher.BAD_COMMAND_LINE));
    }

    @Test
    void a_database_path_under_a_file_is_one_line_naming_it_and_exits_1() throws Exception {
        Path file = Files.writeString(dir.resolve("plain-file"), "not a folder");
        Path database = file.resolve("backstate.db");
        assertEquals("backstate serve: cannot start: database " + database + ": " + file + " is not a folder",
                oneLine(backstate("serve", "--port", "0", "--database", database.toString()), Launcher.START_FAILED));
    }

    @Test
    void a_file_that_is_not_a_database_is_one_line_naming_it_and_exits_1() throws Exception {
        Path database = Files.writeString(dir.resolve("notes.db"), "these are notes, not a database\n".repeat(100));
        String line = oneLine(backstate("demo", "--port", "0", "--database", database.toString()), Launcher.START_FAILED);
        assertTrue(line.startsWith("backstate demo: cannot start: database " + database + ": ") && line.contains("not a database"),
                line);
    }

    @Test
    void a_database_migrated_by_a_newer_build_is_refused_with_one_line_naming_both_versions() throws Exception {
        Path database = dir.resolve("newer.db");
        new SqliteDatabase(database, Clock.systemUTC()).close();
        int shipped;
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database);
             Statement s = c.createStatement()) {
            // Flyway's own history table, as a newer build's migration would leave it.
            try (ResultSet rs = s.executeQuery("SELECT MAX(CAST(version AS INTEGER)) FROM flyway_schema_history")) {
                rs.next();
                shipped = rs.getInt(1);
            }
            s.executeUpdate("INSERT INTO flyway_schema_history (installed_rank, version, description, type, script,"
                    + " checksum, installed_by, execution_time, success) VALUES (1000, '" + (shipped + 1)
                    + "', 'from a newer build', 'SQL', 'V" + (shipped + 1) + "__from_a_newer_build.sql', 0, 'test', 1, 1)");
        }
        assertEquals("backstate serve: cannot start: database " + database + ": the schema is at version " + (shipped + 1)
                        + ", newer than this build's latest " + shipped
                        + "; run the newer build, or restore a copy made before it migrated",
                oneLine(backstate("serve", "--port", "0", "--database", database.toString()), Launcher.START_FAILED));
    }

    @Test
    void a_port_in_use_is_one_line_and_exits_1() throws Exception {
        try (ServerSocket taken = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
            int port = taken.getLocalPort();
            Run run = backstate("serve", "--auth", "off", "--host", "127.0.0.1", "--port", Integer.toString(port),
                    "--database", dir.resolve("b.db").toString());
            String line = oneLine(run, Launcher.START_FAILED);
            assertTrue(line.startsWith("backstate serve: cannot start: Port already in use") && line.contains(" " + port + " "),
                    line);
        }
    }

    /** A key generated and printed by a start that then failed would never be printed again: none is made. */
    @Test
    void a_start_that_cannot_listen_makes_no_admin_key() throws Exception {
        Path database = dir.resolve("keys.db");
        try (ServerSocket taken = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
            Run run = backstate("serve", "--auth", "on", "--host", "127.0.0.1", "--port",
                    Integer.toString(taken.getLocalPort()), "--database", database.toString());
            assertEquals(1, run.exit(), run.err());
            assertFalse((run.out() + run.err()).contains("bsk_"), "no key printed: " + run.out() + run.err());
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + database);
             Statement s = c.createStatement(); ResultSet rs = s.executeQuery("SELECT count(*) FROM api_keys")) {
            assertTrue(rs.next());
            assertEquals(0, rs.getInt(1), "no admin key stored by the failed start");
        }
    }
}
