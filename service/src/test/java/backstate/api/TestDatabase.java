package backstate.api;

import backstate.store.PostgresServer;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.SQLException;
import java.sql.Statement;

/**
 * A database a test runs the service on: what the service's {@code --database} setting takes,
 * and a JDBC URL for reading and changing it from outside the service.
 *
 * @param engine       SQLite or PostgreSQL
 * @param serviceValue the file path or {@code postgresql://} URL for {@code --database}
 * @param jdbcUrl      the same database for raw SQL from the test
 */
public record TestDatabase(Engine engine, String serviceValue, String jdbcUrl) {
    /** How long a SQLite connection of the test waits behind the server's writes. */
    private static final int SQLITE_BUSY_TIMEOUT_MS = 10_000;

    /** A connection of the test's own, outside the service's pool; the caller closes it. */
    public Connection connect() throws SQLException {
        if (engine == Engine.POSTGRESQL) {
            return PostgresServer.connect(jdbcUrl);
        }
        Connection c = DriverManager.getConnection(jdbcUrl);
        try (Statement s = c.createStatement()) {
            s.execute("PRAGMA busy_timeout = " + SQLITE_BUSY_TIMEOUT_MS);
        } catch (SQLException e) {
            c.close();
            throw e;
        }
        return c;
    }
}
