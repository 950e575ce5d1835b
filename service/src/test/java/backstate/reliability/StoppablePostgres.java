package backstate.reliability;

import backstate.api.Engine;
import backstate.api.TestDatabase;
import backstate.store.PostgresServer;
import io.zonky.test.db.postgres.embedded.EmbeddedPostgres;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * A PostgreSQL server of the test's own, from the same embedded binaries as {@link PostgresServer}
 * (whose per-JVM server other tests share and must never be stopped), that the test can stop and
 * start again: an outage as an operator or a crash-restart makes it, with {@code pg_ctl} on its
 * data directory. {@code stop} is pg_ctl's fast mode: open sessions are ended (SQLSTATE 57P01) and
 * new connections refused until {@code start}, which runs the server again with the options it
 * was first started with (pg_ctl reads them from postmaster.opts), on the same port.
 */
final class StoppablePostgres implements AutoCloseable {
    private static final long PG_CTL_BOUND_SECONDS = 60;

    private final EmbeddedPostgres server;
    private final Path dataDirectory;
    private final Path pgCtl;

    StoppablePostgres(Path dataDirectory) throws IOException {
        this.dataDirectory = dataDirectory;
        this.server = EmbeddedPostgres.builder().setDataDirectory(dataDirectory).setCleanDataDirectory(true).start();
        // postmaster.opts: the server binary's path, then its quoted arguments; pg_ctl lies beside it.
        String opts = Files.readString(dataDirectory.resolve("postmaster.opts"), StandardCharsets.UTF_8);
        this.pgCtl = Path.of(opts.substring(0, opts.indexOf(' '))).resolveSibling("pg_ctl");
    }

    /** The server's own "postgres" database; the service migrates it at its start. */
    TestDatabase database() {
        String jdbcUrl = "jdbc:postgresql://localhost:" + server.getPort() + "/postgres";
        return new TestDatabase(Engine.POSTGRESQL, PostgresServer.serviceUrl(jdbcUrl), jdbcUrl);
    }

    /** Ends every session and stops the server; returns once it is down. */
    void stop() throws IOException, InterruptedException {
        pgCtl("-m", "fast", "-w", "stop");
    }

    /** Starts the stopped server again as it was; returns once it accepts connections. */
    void start() throws IOException, InterruptedException {
        pgCtl("-w", "restart");
    }

    @Override
    public void close() throws IOException {
        server.close();
    }

    private void pgCtl(String... args) throws IOException, InterruptedException {
        List<String> command = new ArrayList<>();
        if ("root".equals(System.getProperty("user.name"))) {
            // pg_ctl refuses to run as root; as the embedded server's own start does, run it in a
            // user namespace of its own (util-linux unshare), where it is not root.
            command.addAll(List.of("unshare", "-U"));
        }
        command.addAll(List.of(pgCtl.toString(), "-D", dataDirectory.toString()));
        command.addAll(List.of(args));
        // To a file, not a pipe: the server pg_ctl starts inherits its output and keeps a pipe open.
        Path log = dataDirectory.resolveSibling("pg_ctl.log");
        Process p = new ProcessBuilder(command).redirectErrorStream(true).redirectOutput(ProcessBuilder.Redirect.appendTo(log.toFile()))
                .start();
        if (!p.waitFor(PG_CTL_BOUND_SECONDS, TimeUnit.SECONDS) || p.exitValue() != 0) {
            p.destroyForcibly();
            throw new IOException(command + " failed: " + Files.readString(log, StandardCharsets.UTF_8));
        }
    }
}
