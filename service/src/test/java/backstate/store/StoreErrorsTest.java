package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.sqlite.SQLiteErrorCode;
import org.sqlite.SQLiteException;

class StoreErrorsTest {

    /** Short, so the test does not sit out the production busy timeout; no time is asserted. */
    private static final SqliteSettings IMPATIENT = new SqliteSettings(2, Duration.ofMillis(50), 3);
    private static final int PAYLOAD_PAGES_WORTH = 64 * 1024;

    @TempDir
    Path dir;

    @Test
    void a_write_lock_held_by_another_process_surfaces_as_database_busy() throws Exception {
        try (StoreFixture fx = new StoreFixture(dir, IMPATIENT); Connection other = fx.raw();
             Statement s = other.createStatement()) {
            s.execute("BEGIN IMMEDIATE");

            StoreUnavailableException e = assertThrows(StoreUnavailableException.class,
                    () -> fx.store.models().createFamily("fan", "", StoreFixture.T0));
            assertEquals("database busy", e.reason());
            assertTrue(fx.store.models().findFamily("pump").isPresent(), "WAL readers are not blocked by the writer");

            s.execute("ROLLBACK");
            assertTrue(fx.store.models().createFamily("fan", "", StoreFixture.T0));
        }
    }

    @Test
    void a_full_disk_surfaces_as_disk_full_and_leaves_the_database_intact() throws Exception {
        Connection[] writer = new Connection[1];
        StoreFixture fx = new StoreFixture(dir);
        fx.close();
        try (SqliteDatabase store = new SqliteDatabase(fx.file, fx.clock, SqliteSettings.defaults(), c -> writer[0] = c)) {
            capDatabaseAtItsCurrentSize(writer[0]);
            NewTrace big = new NewTrace("unit-1", "pump", 1, 3, 0.0, 1.0, new byte[PAYLOAD_PAGES_WORTH]);

            StoreUnavailableException e = assertThrows(StoreUnavailableException.class,
                    () -> store.traces().submitTrace(big, StoreFixture.key("key-1"), 10, StoreFixture.T0));
            assertEquals("disk full", e.reason());
            assertEquals(0, fx.rows("traces") + fx.rows("jobs"));
            assertEquals("ok", fx.integrityCheck());
            assertTrue(store.isReachable());
        }
    }

    @Test
    void busy_locked_full_and_read_only_codes_are_unavailable_with_their_reason() {
        assertEquals("database busy", reasonFor(SQLiteErrorCode.SQLITE_BUSY_SNAPSHOT));
        assertEquals("database locked", reasonFor(SQLiteErrorCode.SQLITE_LOCKED));
        assertEquals("disk full", reasonFor(SQLiteErrorCode.SQLITE_FULL));
        assertEquals("database read-only", reasonFor(SQLiteErrorCode.SQLITE_READONLY_DBMOVED));
    }

    /**
     * The pool's timeout (SQLTransientConnectionException, as HikariCP throws it) is an outage only
     * when it follows failed connection attempts, which the pool passes on as its cause; without
     * one, every connection was busy, and the operator should hear that instead.
     */
    @Test
    void a_pool_timeout_says_busy_connections_unless_connecting_failed() {
        java.sql.SQLTransientConnectionException busy = new java.sql.SQLTransientConnectionException(
                "backstate-postgresql - Connection is not available, request timed out after 5000ms");
        assertEquals("every database connection busy (raise --database-pool, or add replicas)",
                ((StoreUnavailableException) PostgresErrors.translate(busy)).reason());
        java.sql.SQLTransientConnectionException down = new java.sql.SQLTransientConnectionException(
                "backstate-postgresql - Connection is not available, request timed out after 5000ms",
                new java.sql.SQLException("Connection to localhost:5432 refused", "08001"));
        assertEquals("database unreachable", ((StoreUnavailableException) PostgresErrors.translate(down)).reason());
    }

    @Test
    void any_other_sql_failure_is_a_plain_store_exception() {
        StoreException e = SqliteErrors.translate(new SQLiteException("near \"SELEC\": syntax error",
                SQLiteErrorCode.SQLITE_ERROR));
        assertFalse(e instanceof StoreUnavailableException);
        assertEquals("database error: near \"SELEC\": syntax error", e.getMessage());
    }

    @Test
    void a_closed_store_is_unreachable_and_refuses_calls() {
        StoreFixture fx = new StoreFixture(dir);
        fx.close();
        assertFalse(fx.store.isReachable());
        IllegalStateException e = assertThrows(IllegalStateException.class, () -> fx.store.models().listFamilies());
        assertEquals("got a call on a closed store, expected an open one", e.getMessage());
    }

    private static String reasonFor(SQLiteErrorCode code) {
        StoreException e = SqliteErrors.translate(new SQLiteException("from sqlite", code));
        return assertInstanceOf(StoreUnavailableException.class, e).reason();
    }

    private static void capDatabaseAtItsCurrentSize(Connection c) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery("PRAGMA page_count")) {
            rs.next();
            s.execute("PRAGMA max_page_count = " + rs.getLong(1));
        }
    }
}
