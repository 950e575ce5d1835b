package backstate.reliability;

import backstate.config.Settings;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The service as a separate OS process, started the way the packaged jar starts it
 * ({@code backstate.App serve ...}) but from the test's class path, which holds the same code:
 * surefire runs before the jar is packaged. It listens on a free loopback port and logs to a
 * file; {@link #kill()} is SIGKILL and {@link #terminate()} SIGTERM.
 */
final class ServerProcess implements AutoCloseable {
    /** How long start-up (JVM, migrations, Jetty) may take before the test gives up. */
    static final Duration START_TIMEOUT = Duration.ofSeconds(60);
    private static final Pattern LISTENING = Pattern.compile("listening on http://localhost:(\\d+)");

    private final Process process;
    private final Path log;
    private final int port;

    private ServerProcess(Process process, Path log, int port) {
        this.process = process;
        this.log = log;
        this.port = port;
    }

    /** Starts a server on the SQLite file {@code database}, logging to {@code log}; extra flags go after ours. */
    static ServerProcess start(Path database, Path log, String... extraFlags) throws IOException, InterruptedException {
        return start(database.toString(), log, extraFlags);
    }

    /** Starts a server on {@code db} (either engine), logging to {@code log}; extra flags go after ours. */
    static ServerProcess start(ServerDb db, Path log, String... extraFlags) throws IOException, InterruptedException {
        return start(db.database().serviceValue(), log, extraFlags);
    }

    /** Starts a server on {@code database} (a file path or postgresql:// URL), logging to {@code log}. */
    static ServerProcess start(String database, Path log, String... extraFlags) throws IOException, InterruptedException {
        List<String> command = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                // Info level: the test resources quiet logging to warnings, but we read the "listening" line.
                "-Xmx256m", "-Dorg.slf4j.simpleLogger.defaultLogLevel=info", "-Dorg.slf4j.simpleLogger.showDateTime=true",
                "-cp", System.getProperty("java.class.path"), "backstate.App", "serve",
                "--host", "127.0.0.1", "--port", "0", "--database", database, "--workers", "2"));
        command.addAll(authOff());
        command.addAll(List.of(extraFlags));
        Process process = new ProcessBuilder(command)
                .redirectErrorStream(true)
                .redirectOutput(ProcessBuilder.Redirect.appendTo(log.toFile()))
                .start();
        return new ServerProcess(process, log, awaitPort(process, log));
    }

    /** Runs a server expected to refuse to start; returns its exit code (null if it is still up after the bound). */
    static Integer failedStart(Path database, Path log, Duration bound) throws IOException, InterruptedException {
        List<String> command = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-Xmx256m", "-Dorg.slf4j.simpleLogger.defaultLogLevel=info", "-cp", System.getProperty("java.class.path"),
                "backstate.App", "serve", "--host", "127.0.0.1", "--port", "0", "--database", database.toString()));
        command.addAll(authOff());
        Process process = new ProcessBuilder(command).redirectErrorStream(true)
                .redirectOutput(ProcessBuilder.Redirect.appendTo(log.toFile())).start();
        if (process.waitFor(bound.toMillis(), TimeUnit.MILLISECONDS)) {
            return process.exitValue();
        }
        process.destroyForcibly().waitFor();
        return null;
    }

    /** {@code --auth off} where this build has access control, so the tests need no keys; nothing otherwise. */
    static List<String> authOff() {
        try {
            Settings.from(new String[] {"--auth", "off"}, Map.of());
            return List.of("--auth", "off");
        } catch (IllegalArgumentException noSuchFlag) {
            return List.of();
        }
    }

    int port() {
        return port;
    }

    String base() {
        return "http://127.0.0.1:" + port;
    }

    long pid() {
        return process.pid();
    }

    boolean isAlive() {
        return process.isAlive();
    }

    /** SIGKILL: no shutdown hook runs, nothing is flushed or closed. */
    void kill() throws InterruptedException {
        process.destroyForcibly();
        if (!process.waitFor(START_TIMEOUT.toSeconds(), TimeUnit.SECONDS)) {
            throw new AssertionError("server " + process.pid() + " outlived SIGKILL");
        }
    }

    /** SIGTERM, then waits up to {@code bound} for the exit; returns the exit code, or null if still running. */
    Integer terminate(Duration bound) throws InterruptedException {
        signalTerm();
        return awaitExit(bound);
    }

    /** SIGTERM, without waiting: the graceful stop runs in the server from here. */
    void signalTerm() {
        process.destroy();
    }

    /** Waits up to {@code bound} for the exit; returns the exit code, or null if still running. */
    Integer awaitExit(Duration bound) throws InterruptedException {
        return process.waitFor(bound.toMillis(), TimeUnit.MILLISECONDS) ? process.exitValue() : null;
    }

    String logText() {
        try {
            return Files.readString(log, StandardCharsets.UTF_8);
        } catch (IOException e) {
            return "(log unreadable: " + e + ")";
        }
    }

    @Override
    public void close() throws InterruptedException {
        if (process.isAlive()) {
            kill();
        }
    }

    private static int awaitPort(Process process, Path log) throws IOException, InterruptedException {
        long deadline = System.nanoTime() + START_TIMEOUT.toNanos();
        long from = Files.exists(log) ? Files.size(log) : 0;
        while (System.nanoTime() < deadline) {
            String text = Files.exists(log) ? Files.readString(log, StandardCharsets.ISO_8859_1) : "";
            Matcher m = LISTENING.matcher(text.substring((int) Math.min(from, text.length())));
            if (m.find()) {
                return Integer.parseInt(m.group(1));
            }
            if (!process.isAlive()) {
                throw new AssertionError("server exited with " + process.exitValue() + " before listening:\n" + text);
            }
            Thread.sleep(50);
        }
        process.destroyForcibly();
        throw new AssertionError("server not listening within " + START_TIMEOUT + ":\n" + Files.readString(log));
    }
}
