package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.sqlite.SQLiteConfig;
import org.sqlite.SQLiteDataSource;

class WalCheckpointsTest {
    /** A guard against a hang, not a timing assertion: the background round comes within milliseconds. */
    private static final long HANG_GUARD_SECONDS = 60;
    /** SQLite's default page size and automatic checkpoint threshold. */
    private static final int PAGE = 4096;
    private static final int DEFAULT_THRESHOLD_PAGES = 1000;
    /** Far beyond any test: the thread never runs a round by itself. */
    private static final Duration NEVER = Duration.ofHours(1);

    @TempDir
    Path dir;

    @Test
    void the_writer_checkpoints_only_at_the_backstop() throws Exception {
        SQLiteDataSource ds = dataSource();
        try (Connection writer = ds.getConnection()) {
            WalCheckpoints.raiseWriterThreshold(writer);
            assertEquals(WalCheckpoints.WRITER_BACKSTOP_PAGES, pragma(writer, "wal_autocheckpoint"));
            createTable(writer);
            int pages = 3 * DEFAULT_THRESHOLD_PAGES / 2;
            writePages(writer, pages);
            // Past SQLite's own threshold, and still all in the WAL: nothing was checkpointed on commit.
            assertTrue(Files.size(wal()) > (long) pages * PAGE, "WAL " + Files.size(wal()) + " bytes");
            try (WalCheckpoints checkpoints = new WalCheckpoints(ds, NEVER)) {
                int[] answer = checkpoints.checkpoint();
                assertEquals(0, answer[0], "busy");
                assertTrue(answer[1] > pages, "frames in the WAL: " + answer[1]);
                assertEquals(answer[1], answer[2], "every frame copied");
                // With the WAL copied whole, the next write starts it over from its first frame.
                writePages(writer, 1);
                int[] after = checkpoints.checkpoint();
                assertTrue(after[1] < DEFAULT_THRESHOLD_PAGES / 10, "frames after restart: " + after[1]);
            }
        }
    }

    @Test
    void the_background_thread_copies_committed_pages_into_the_database() throws Exception {
        SQLiteDataSource ds = dataSource();
        try (Connection writer = ds.getConnection()) {
            WalCheckpoints.raiseWriterThreshold(writer);
            createTable(writer);
            long before = Files.size(dir.resolve("t.db"));
            int pages = DEFAULT_THRESHOLD_PAGES / 2;
            try (WalCheckpoints ignored = new WalCheckpoints(ds, Duration.ofMillis(10))) {
                writePages(writer, pages);
                long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(HANG_GUARD_SECONDS);
                while (Files.size(dir.resolve("t.db")) < before + (long) pages * PAGE && System.nanoTime() < deadline) {
                    Thread.sleep(10);
                }
            }
            assertTrue(Files.size(dir.resolve("t.db")) >= before + (long) pages * PAGE,
                    "database file " + Files.size(dir.resolve("t.db")) + " bytes");
            assertEquals(pages, count(writer));
        }
    }

    private SQLiteDataSource dataSource() {
        SQLiteConfig config = new SQLiteConfig();
        config.setJournalMode(SQLiteConfig.JournalMode.WAL);
        config.setSynchronous(SQLiteConfig.SynchronousMode.FULL);
        SQLiteDataSource ds = new SQLiteDataSource(config);
        ds.setUrl("jdbc:sqlite:" + dir.resolve("t.db"));
        return ds;
    }

    private Path wal() {
        return dir.resolve("t.db-wal");
    }

    private static void createTable(Connection c) throws SQLException {
        try (Statement s = c.createStatement()) {
            s.execute("CREATE TABLE blobs (id INTEGER PRIMARY KEY, data BLOB NOT NULL)");
        }
    }

    /** One row of a page's worth of bytes per commit, so each commit adds about one WAL frame of data. */
    private static void writePages(Connection c, int pages) throws SQLException {
        try (PreparedStatement ps = c.prepareStatement("INSERT INTO blobs (data) VALUES (?)")) {
            for (int i = 0; i < pages; i++) {
                ps.setBytes(1, new byte[PAGE - 100]);
                ps.executeUpdate();
            }
        }
    }

    private static long count(Connection c) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery("SELECT COUNT(*) FROM blobs")) {
            rs.next();
            return rs.getLong(1);
        }
    }

    private static int pragma(Connection c, String name) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery("PRAGMA " + name)) {
            rs.next();
            return rs.getInt(1);
        }
    }
}
