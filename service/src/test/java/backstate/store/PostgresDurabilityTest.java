package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import org.junit.jupiter.api.Test;

/**
 * A 2xx means committed for good, so the service's connections never run with synchronous_commit
 * off or local, which acknowledge a commit before its WAL is flushed (PostgreSQL documentation,
 * "Asynchronous Commit": a crash may lose the last transactions reported committed). The embedded
 * server the tests use starts with it off; a database's own stronger setting is kept.
 */
class PostgresDurabilityTest {

    @Test
    void service_connections_commit_synchronously_on_a_server_set_to_commit_asynchronously() throws SQLException {
        String url = PostgresServer.newDatabase();
        try {
            try (Connection plain = PostgresServer.connect(url)) {
                assertEquals("off", setting(plain), "the embedded server's own setting, which makes this test mean something");
            }
            try (PostgresConnections db = new PostgresConnections(PostgresServer.settings(url))) {
                assertEquals("on", db.read(c -> Sql.firstOrNull(c.prepare("SHOW synchronous_commit"), rs -> rs.getString(1))));
            }
        } finally {
            PostgresServer.dropDatabase(url);
        }
    }

    @Test
    void a_stronger_setting_of_the_database_is_kept() throws SQLException {
        String url = PostgresServer.newDatabase();
        try {
            try (Connection plain = PostgresServer.connect(url); Statement s = plain.createStatement()) {
                s.execute("ALTER DATABASE " + plain.getCatalog() + " SET synchronous_commit = remote_apply");
            }
            try (PostgresConnections db = new PostgresConnections(PostgresServer.settings(url))) {
                assertEquals("remote_apply", db.read(c -> Sql.firstOrNull(c.prepare("SHOW synchronous_commit"),
                        rs -> rs.getString(1))));
            }
        } finally {
            PostgresServer.dropDatabase(url);
        }
    }

    private static String setting(Connection c) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery("SHOW synchronous_commit")) {
            rs.next();
            return rs.getString(1);
        }
    }
}
