package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.sqlite.SQLiteConfig;
import org.sqlite.SQLiteDataSource;

/**
 * The write path's meters count what the writer thread did: one wait per write handed over, one
 * statements-and-COMMIT pair per batch, the batch's size; and one checkpoint timing per round with
 * the WAL length SQLite itself reported.
 */
class SqliteMetersTest {
    /** A guard against a hang, not a timing assertion. */
    private static final long WAIT_SECONDS = 10;
    /** Far beyond any test: the checkpoint thread never runs a round by itself. */
    private static final Duration NEVER = Duration.ofHours(1);

    @TempDir
    Path dir;
    final SimpleMeterRegistry registry = new SimpleMeterRegistry();
    final SqliteMeters meters = new SqliteMeters(registry);
    final ExecutorService callers = Executors.newCachedThreadPool();
    SqliteWriter writer;

    @BeforeEach
    void open() throws SQLException {
        try (Connection c = raw(); Statement s = c.createStatement()) {
            s.execute("PRAGMA journal_mode = WAL");
            s.execute("CREATE TABLE t (id INTEGER PRIMARY KEY)");
        }
        writer = new SqliteWriter(raw(), meters);
    }

    @AfterEach
    void close() {
        writer.close();
        callers.shutdownNow();
    }

    @Test
    void five_writes_queued_behind_a_batch_are_timed_as_one_batch_of_five() throws Exception {
        CountDownLatch inside = new CountDownLatch(1);
        CountDownLatch release = new CountDownLatch(1);
        Future<Integer> leader = callers.submit(() -> writer.write(c -> {
            inside.countDown();
            awaitRelease(release);
            return insert(c, 0);
        }));
        assertTrue(inside.await(WAIT_SECONDS, TimeUnit.SECONDS));
        List<Future<Integer>> followers = new ArrayList<>();
        for (int id = 1; id <= 5; id++) {
            int row = id;
            followers.add(callers.submit(() -> writer.write(c -> insert(c, row))));
        }
        while (writer.waiting() < 5) {
            Thread.sleep(1);
        }
        release.countDown();
        leader.get(WAIT_SECONDS, TimeUnit.SECONDS);
        for (Future<Integer> f : followers) {
            f.get(WAIT_SECONDS, TimeUnit.SECONDS);
        }
        assertEquals(6, registry.get(SqliteMeters.WRITE_WAIT).timer().count(), "one wait per write");
        assertEquals(2, registry.get(SqliteMeters.WRITE_BATCH).summary().count(), "the leader's batch, then the rest");
        assertEquals(6, registry.get(SqliteMeters.WRITE_BATCH).summary().totalAmount(), "1 + 5 writes");
        assertEquals(5, registry.get(SqliteMeters.WRITE_BATCH).summary().max(), "the five waiting shared one commit");
        assertEquals(2, registry.get(SqliteMeters.WRITE_WORK).timer().count());
        assertEquals(2, registry.get(SqliteMeters.WRITE_COMMIT).timer().count());
    }

    @Test
    void a_checkpoint_round_is_timed_and_leaves_the_wal_length_sqlite_reported() throws Exception {
        for (int id = 1; id <= 50; id++) {
            int row = id;
            writer.write(c -> insert(c, row));
        }
        SQLiteConfig config = new SQLiteConfig();
        config.setJournalMode(SQLiteConfig.JournalMode.WAL);
        SQLiteDataSource ds = new SQLiteDataSource(config);
        ds.setUrl("jdbc:sqlite:" + dir.resolve("m.db").toAbsolutePath());
        try (WalCheckpoints checkpoints = new WalCheckpoints(ds, NEVER, meters)) {
            int[] answer = checkpoints.checkpoint();
            assertTrue(answer[1] >= 50, "50 commits left at least one frame each: " + answer[1]);
            assertEquals(1, registry.get(SqliteMeters.CHECKPOINT).timer().count());
            assertEquals(answer[1], registry.get(SqliteMeters.WAL_PAGES).gauge().value());
        }
    }

    @Test
    void a_checkpoint_that_could_not_run_leaves_the_last_wal_length() {
        // SQLite answers -1 for the WAL's length when no checkpoint ran: without a WAL
        // (sqlite.org/pragma.html#pragma_wal_checkpoint), and, from memory of its source (the
        // Checkpoint opcode), when another connection holds the checkpoint lock; the mixed bench
        // printed "WAL -1 pages" while the writer checkpointed at its backstop.
        meters.checkpointed(1_000_000, 120);
        meters.checkpointed(2_000_000, -1);
        assertEquals(120, registry.get(SqliteMeters.WAL_PAGES).gauge().value());
        assertEquals(2, registry.get(SqliteMeters.CHECKPOINT).timer().count(), "both rounds timed");
    }

    private static int insert(Statements c, int id) throws SQLException {
        c.execute("INSERT INTO t (id) VALUES (" + id + ")");
        return id;
    }

    private static void awaitRelease(CountDownLatch release) {
        try {
            assertTrue(release.await(WAIT_SECONDS, TimeUnit.SECONDS), "released");
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private Connection raw() throws SQLException {
        return DriverManager.getConnection("jdbc:sqlite:" + dir.resolve("m.db").toAbsolutePath());
    }
}
