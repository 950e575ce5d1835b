package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.zonky.test.db.postgres.embedded.EmbeddedPostgres;
import java.io.IOException;
import java.net.ServerSocket;
import java.sql.Connection;
import java.sql.SQLException;
import java.sql.Statement;
import org.junit.jupiter.api.Test;

/**
 * A PostgreSQL store that cannot reach its server: at start it fails naming the problem; once
 * started, reads and writes report {@link StoreUnavailableException} (HTTP 503 with Retry-After),
 * never a plain {@link StoreException} (HTTP 500). The stopped server is a second embedded server
 * of this test's own; the shared one keeps serving the other tests.
 */
class PostgresOutageTest {

    @Test
    void a_store_on_a_port_where_no_server_listens_fails_its_start_naming_the_problem() throws IOException {
        String url = "jdbc:postgresql://localhost:" + freePort() + "/backstate";
        StoreException e = assertThrows(StoreException.class,
                () -> new PostgresDatabase(PostgresServer.settings(url), new TestClock(StoreFixture.T0)).close());
        // The socket's own words (java.net.ConnectException) under pgjdbc's and the pool's.
        assertEquals("opening the PostgreSQL database " + url + " as postgres failed: Connection refused", e.getMessage());
    }

    @Test
    void a_store_whose_server_stopped_reports_reads_and_writes_unavailable() throws Exception {
        EmbeddedPostgres server = EmbeddedPostgres.builder().start();
        PostgresDatabase db;
        try {
            db = new PostgresDatabase(PostgresServer.settings(server.getJdbcUrl(PostgresServer.USER, "postgres")),
                    new TestClock(StoreFixture.T0));
            StoreFixture.publishPump(db);
            assertTrue(db.isReachable());
        } finally {
            server.close();
        }
        try (db) {
            StoreUnavailableException read = assertThrows(StoreUnavailableException.class, () -> db.models().listFamilies());
            StoreUnavailableException write = assertThrows(StoreUnavailableException.class,
                    () -> db.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k"), 10, StoreFixture.T0));
            // A pooled connection the server closed at shutdown reports 57P01 (admin_shutdown, "database
            // restarting"); a new connection is refused (08001, "database unreachable"). Which one a
            // call meets depends on whether the pool had noticed yet; both are "try again later".
            java.util.Set<String> outage = java.util.Set.of("database unreachable", "database restarting");
            assertTrue(outage.contains(read.reason()), read.reason());
            assertTrue(outage.contains(write.reason()), write.reason());
            assertFalse(db.isReachable());
        }
    }

    /** pgjdbc's own failure to connect (SQLSTATE 08001, connection class) is "try again later". */
    @Test
    void a_real_connection_failure_translates_to_unavailable() throws IOException {
        SQLException refused = assertThrows(SQLException.class,
                () -> PostgresServer.connect("jdbc:postgresql://localhost:" + freePort() + "/backstate").close());
        assertEquals("08001", refused.getSQLState());
        assertEquals("database unreachable",
                assertInstanceOf(StoreUnavailableException.class, PostgresErrors.translate(refused)).reason());
    }

    /** A statement the server refuses as wrong (42601 syntax error) is a bug: a plain StoreException. */
    @Test
    void a_real_syntax_error_translates_to_a_plain_store_exception() throws SQLException {
        String url = PostgresServer.newDatabase();
        try (Connection c = PostgresServer.connect(url); Statement s = c.createStatement()) {
            SQLException wrong = assertThrows(SQLException.class, () -> s.execute("SELEC 1"));
            assertEquals("42601", wrong.getSQLState());
            StoreException e = PostgresErrors.translate(wrong);
            assertFalse(e instanceof StoreUnavailableException, e.toString());
            assertTrue(e.getMessage().startsWith("database error: ERROR: syntax error"), e.getMessage());
        } finally {
            PostgresServer.dropDatabase(url);
        }
    }

    private static int freePort() throws IOException {
        try (ServerSocket socket = new ServerSocket(0)) {
            return socket.getLocalPort();
        }
    }
}
