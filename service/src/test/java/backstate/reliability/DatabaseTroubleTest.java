package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.io.IOException;
import java.io.OutputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.Statement;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * When the database cannot take a write (another process holds the write lock; the disk is
 * full) a trace post gets 503 problem+json with Retry-After, the reason is in the server's log,
 * nothing half-written is left (integrity_check, unchanged signature), and the same post
 * succeeds once the trouble is gone. The service runs as its own process so its log can be read.
 */
class DatabaseTroubleTest {
    /**
     * Traces big enough that their write cannot fit in WAL space freed by earlier checkpoints:
     * about 800 KB stored (stored format 2 takes about 5 bytes a sample of this data; format 1
     * took 40, when 20 000 samples were enough).
     */
    static final int BIG_SAMPLES = 160_000;
    /** Room on the small filesystem for the schema, the model and one small trace. */
    static final String TMPFS_SIZE = "8m";

    @TempDir
    Path dir;

    @Test
    void a_write_lock_held_by_another_process_gets_503_with_retry_after_then_the_retry_succeeds() throws Exception {
        ServerDb db = new ServerDb(dir.resolve("busy.db"));
        byte[] csv = new ReeferTraces(TestServer.TEST_DATA).csv(360, 1);
        try (ServerProcess server = ServerProcess.start(db.file(), dir.resolve("server.log"))) {
            Http http = new Http(server.base());
            http.publishDemoModel(TestServer.TEST_DATA);
            String before = db.signature();
            Http.Reply refused;
            try (Connection other = DriverManager.getConnection("jdbc:sqlite:" + db.file());
                 Statement s = other.createStatement()) {
                s.execute("BEGIN EXCLUSIVE"); // held past the server's 5 s busy timeout
                refused = http.postTrace("RCX-40001", csv, "busy-1");
                s.execute("ROLLBACK");
            }
            assertServiceBusy(refused);
            assertTrue(server.logText().contains("database unavailable: store unavailable: database busy"), server.logText());
            assertEquals(before, db.signature());
            assertEquals("ok", db.integrityCheck());

            Http.Reply retried = http.postTrace("RCX-40001", csv, "busy-1");
            assertEquals(202, retried.status(), retried.body());
            KilledServerTest.awaitDrained(db);
            assertEquals(1, db.count("SELECT COUNT(*) FROM estimates"));
        }
    }

    @Test
    void a_full_disk_gets_503_with_retry_after_and_leaves_the_file_intact() throws Exception {
        Path mount = dir.resolve("small-disk");
        Files.createDirectories(mount);
        mountSmallDisk(mount);
        try {
            ServerDb db = new ServerDb(mount.resolve("full.db"));
            ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
            try (ServerProcess server = ServerProcess.start(db.file(), dir.resolve("server.log"))) {
                Http http = new Http(server.base());
                http.publishDemoModel(TestServer.TEST_DATA);
                assertEquals(202, http.postTrace("RCX-40002", reefer.csv(360, 2), null).status());
                KilledServerTest.awaitDrained(db);
                Path filler = mount.resolve("filler");
                fill(filler);
                String before = db.signature();

                byte[] big = reefer.csv(BIG_SAMPLES, 3);
                Http.Reply refused = http.postTrace("RCX-40002", big, "full-1");
                assertServiceBusy(refused);
                assertTrue(server.logText().contains("database unavailable: store unavailable: disk full"), server.logText());
                assertEquals(before, db.signature());
                assertEquals("ok", db.integrityCheck());

                Files.delete(filler);
                Http.Reply retried = http.postTrace("RCX-40002", big, "full-1");
                assertEquals(202, retried.status(), retried.body());
                KilledServerTest.awaitDrained(db);
                assertEquals(2, db.count("SELECT COUNT(*) FROM estimates"));
                assertEquals("ok", db.integrityCheck());
                assertTrue(server.terminate(GracefulStopTest.EXIT_BOUND) != null, "server did not stop");
            }
        } finally {
            if (!run("umount", mount.toString())) {
                run("umount", "-l", mount.toString());
            }
        }
    }

    @Test
    void a_database_on_a_read_only_filesystem_stops_the_start_with_one_line_saying_why() throws Exception {
        // A running server's file cannot be made read-only from outside (as root chmod does not
        // stop writes, and remounting read-only fails while the file is open for writing), so
        // this is the read-only case that can happen: the service is started on one.
        Path mount = dir.resolve("read-only");
        Files.createDirectories(mount);
        mountSmallDisk(mount);
        try {
            ServerDb db = new ServerDb(mount.resolve("ro.db"));
            Path log = dir.resolve("server.log");
            try (ServerProcess server = ServerProcess.start(db.file(), log)) {
                new Http(server.base()).publishDemoModel(TestServer.TEST_DATA);
                assertTrue(server.terminate(GracefulStopTest.EXIT_BOUND) != null, "server did not stop");
            }
            String signature = db.signature();
            assertTrue(run("mount", "-o", "remount,ro", mount.toString()), "remount read-only failed");

            Integer exit = ServerProcess.failedStart(db.file(), log, ServerProcess.START_TIMEOUT);
            assertEquals(1, exit, "started on a read-only file: exit " + exit); // 1: the service could not start
            String text = Files.readString(log);
            assertTrue(text.contains("backstate serve: cannot start: database " + db.file().toAbsolutePath().normalize()
                    + ": the file is not writable (read-only file system or file permissions)"), text);
            assertFalse(text.contains("\tat ") || text.contains("Exception"), "one line, no stack trace: " + text);
            assertTrue(run("mount", "-o", "remount,rw", mount.toString()), "remount read-write failed");
            assertEquals(signature, db.signature());
            assertEquals("ok", db.integrityCheck());
        } finally {
            if (!run("umount", mount.toString())) {
                run("umount", "-l", mount.toString());
            }
        }
    }

    private static void assertServiceBusy(Http.Reply reply) {
        assertEquals(503, reply.status(), reply.body());
        assertEquals("application/problem+json", reply.header("Content-Type"));
        assertEquals("5", reply.header("Retry-After"));
        assertEquals("/problems/service-busy", reply.json().path("type").asText());
    }

    /** Writes zeros until the filesystem refuses more. */
    private static void fill(Path filler) throws IOException {
        byte[] block = new byte[64 * 1024];
        try (OutputStream out = Files.newOutputStream(filler)) {
            while (true) {
                out.write(block);
            }
        } catch (IOException full) {
            // "No space left on device": the point
        }
        try (OutputStream out = Files.newOutputStream(filler, java.nio.file.StandardOpenOption.APPEND)) {
            while (true) {
                out.write(0);
                out.flush();
            }
        } catch (IOException full) {
            // the last partial block, too
        }
    }

    /** Mounts a small tmpfs at {@code mount}; where that cannot be done the test fails on CI, else is skipped. */
    private static void mountSmallDisk(Path mount) {
        Outcome mounted = exec("mount", "-t", "tmpfs", "-o", "size=" + TMPFS_SIZE, "tmpfs", mount.toString());
        FaultConditions.require(mounted.ok(), "a small filesystem: mount -t tmpfs needs root with CAP_SYS_ADMIN, and said: "
                + mounted.output().strip());
    }

    private static boolean run(String... command) {
        return exec(command).ok();
    }

    /** A command's exit status (0 within 30 s is ok) and its output, stdout and stderr together. */
    private record Outcome(boolean ok, String output) {
    }

    private static Outcome exec(String... command) {
        try {
            Process p = new ProcessBuilder(command).redirectErrorStream(true).start();
            String output = new String(p.getInputStream().readAllBytes(), java.nio.charset.StandardCharsets.UTF_8);
            return new Outcome(p.waitFor(30, TimeUnit.SECONDS) && p.exitValue() == 0, output);
        } catch (IOException e) {
            return new Outcome(false, e.getMessage());
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return new Outcome(false, "interrupted");
        }
    }
}
