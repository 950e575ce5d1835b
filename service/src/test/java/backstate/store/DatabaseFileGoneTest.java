package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.time.Clock;
import java.time.Instant;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A database file deleted or replaced under the open store: SQLite keeps writing to the file it has
 * open, which is gone at the next start, so no write is acknowledged once the path names another
 * file or none (503 at the HTTP edge), and readiness says so.
 */
class DatabaseFileGoneTest {
    static final Instant NOW = Instant.parse("2026-12-03T12:00:00Z");

    @Test
    void writes_after_the_file_is_deleted_are_refused_and_the_store_is_not_ready(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("gone.db");
        try (SqliteDatabase db = new SqliteDatabase(file, Clock.systemUTC())) {
            db.models().createFamily("kept", "before", NOW);
            assertTrue(db.isReachable());
            for (String suffix : new String[] {"", "-wal", "-shm"}) {
                Files.deleteIfExists(dir.resolve("gone.db" + suffix));
            }
            StoreUnavailableException e = assertThrows(StoreUnavailableException.class,
                    () -> db.models().createFamily("lost", "after", NOW));
            assertEquals("database file removed", e.reason());
            assertFalse(db.isReachable());
        }
    }

    @Test
    void writes_after_the_file_is_replaced_are_refused(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("swapped.db");
        Path other = dir.resolve("other.db");
        try (SqliteDatabase db = new SqliteDatabase(file, Clock.systemUTC())) {
            db.models().createFamily("kept", "before", NOW);
            Files.copy(file, other);
            Files.move(other, file, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
            StoreUnavailableException e = assertThrows(StoreUnavailableException.class,
                    () -> db.models().createFamily("lost", "after", NOW));
            assertEquals("database file replaced", e.reason());
            assertFalse(db.isReachable());
        }
    }

    /** After a disk ran full the WAL may have grown; each connection cuts it back to 4 MiB at its next restart. */
    @Test
    void every_connection_limits_the_wal_kept_after_a_checkpoint(@TempDir Path dir) throws Exception {
        try (SqliteConnections connections = new SqliteConnections(dir.resolve("wal.db"), SqliteSettings.defaults(),
                     java.util.function.UnaryOperator.identity(), SqliteMeters.unpublished());
             java.sql.Connection c = connections.dataSource().getConnection();
             java.sql.ResultSet rs = c.createStatement().executeQuery("PRAGMA journal_size_limit")) {
            assertTrue(rs.next());
            assertEquals(4L << 20, rs.getLong(1));
        }
    }
}
