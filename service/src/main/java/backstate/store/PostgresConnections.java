package backstate.store;

import com.zaxxer.hikari.HikariConfig;
import com.zaxxer.hikari.HikariDataSource;
import com.zaxxer.hikari.metrics.micrometer.MicrometerMetricsTrackerFactory;
import io.micrometer.core.instrument.MeterRegistry;
import java.sql.Connection;
import java.sql.SQLException;
import javax.sql.DataSource;

/**
 * The connections to one PostgreSQL database, from a HikariCP pool: every read and every write
 * transaction borrows a connection of its own, so replicas and threads write concurrently and
 * PostgreSQL's row locks, not a Java queue, order them.
 *
 * <p>Writes run at READ COMMITTED. A write that meets a serialization failure, a deadlock or a
 * unique-key race (two replicas inserting the same idempotency key or version number at once)
 * is rolled back and run again from the start, up to {@link #WRITE_ATTEMPTS} times: the statements
 * re-read what they decide on, so the second run sees the winner's row and answers as if it had
 * come second. Consistent multi-statement reads use REPEATABLE READ, read-only.
 */
final class PostgresConnections implements Connections {

    /** A race lost three times in a row means something else is wrong; report it. */
    static final int WRITE_ATTEMPTS = 4;

    /** Raises synchronous_commit to "on" where the server's or database's setting is weaker. */
    static final String AT_LEAST_SYNCHRONOUS_COMMIT = "SELECT set_config('synchronous_commit', 'on', false)"
            + " WHERE current_setting('synchronous_commit') IN ('off', 'local')";

    private final HikariDataSource pool;

    PostgresConnections(PostgresSettings settings) {
        this(settings, null);
    }

    /** With {@code registryOrNull}, the pool's gauges and timers are published (hikaricp_connections_*). */
    PostgresConnections(PostgresSettings settings, MeterRegistry registryOrNull) {
        HikariConfig config = new HikariConfig();
        if (registryOrNull != null) {
            config.setMetricsTrackerFactory(new MicrometerMetricsTrackerFactory(registryOrNull));
        }
        config.setJdbcUrl(settings.jdbcUrl());
        config.setUsername(settings.user());
        if (settings.passwordOrNull() != null) {
            config.setPassword(settings.passwordOrNull());
        }
        config.setMaximumPoolSize(settings.poolSize());
        config.setMinimumIdle(Math.min(2, settings.poolSize()));
        config.setConnectionTimeout(settings.connectionTimeout().toMillis());
        config.setValidationTimeout(Math.max(250, settings.connectionTimeout().toMillis() / 2));
        config.setPoolName("backstate-postgresql");
        config.setAutoCommit(true);
        // Start even while the server is down; requests get 503 until it is back.
        config.setInitializationFailTimeout(-1);
        // A 2xx means committed for good: a server set to synchronous_commit = off (or local) would
        // acknowledge commits it can still lose in a crash, so each connection asks for at least "on";
        // a stronger setting (remote_write, remote_apply) is kept.
        config.setConnectionInitSql(AT_LEAST_SYNCHRONOUS_COMMIT);
        config.addDataSourceProperty("ApplicationName", "backstate");
        config.addDataSourceProperty("tcpKeepAlive", "true");
        this.pool = new HikariDataSource(config);
    }

    DataSource dataSource() {
        return pool;
    }

    @Override
    public Dialect dialect() {
        return Dialect.POSTGRESQL;
    }

    @Override
    public <T> T read(SqlWork<T> work) {
        try (Connection c = pool.getConnection(); Statements statements = new Statements(c)) {
            return work.run(statements);
        } catch (SQLException e) {
            throw PostgresErrors.translate(e);
        }
    }

    @Override
    public <T> T readInOneSnapshot(SqlWork<T> work) {
        try (Connection c = pool.getConnection(); Statements statements = new Statements(c)) {
            c.setAutoCommit(false);
            c.setTransactionIsolation(Connection.TRANSACTION_REPEATABLE_READ);
            c.setReadOnly(true);
            try {
                return work.run(statements);
            } finally {
                c.rollback(); // HikariCP restores auto-commit, isolation and read-only on return
            }
        } catch (SQLException e) {
            throw PostgresErrors.translate(e);
        }
    }

    @Override
    public <T> T write(SqlWork<T> work) {
        for (int attempt = 1; ; attempt++) {
            try {
                return writeOnce(work);
            } catch (SQLException e) {
                if (attempt >= WRITE_ATTEMPTS || !PostgresErrors.worthRetrying(e)) {
                    throw PostgresErrors.translate(e);
                }
            }
        }
    }

    /** The same as {@link #write}: each write has its own connection, so workers never wait behind clients. */
    @Override
    public <T> T writeForWorker(SqlWork<T> work) {
        return write(work);
    }

    @Override
    public void close() {
        pool.close();
    }

    private <T> T writeOnce(SqlWork<T> work) throws SQLException {
        try (Connection c = pool.getConnection(); Statements statements = new Statements(c)) {
            c.setAutoCommit(false);
            try {
                T result = work.run(statements);
                c.commit();
                return result;
            } catch (SQLException | RuntimeException e) {
                rollbackQuietly(c);
                throw e;
            }
        }
    }

    private static void rollbackQuietly(Connection c) {
        try {
            c.rollback();
        } catch (SQLException ignored) {
            // The connection is broken; the pool drops it and the server rolls the transaction back.
        }
    }
}
