package backstate.store;

import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.HashMap;
import java.util.Map;

/**
 * What the statement classes get of a connection: statements prepared by their SQL text, owned
 * here, so callers bind and execute them but never close them. On the write connection
 * ({@link SqliteWriter}) they are kept for the connection's life: sqlite-jdbc compiles a statement
 * again on every {@code prepareStatement}, which cost about a quarter of the writer's CPU per
 * trace. A read connection keeps its own the same way ({@link SqliteConnections#read}); every
 * result is read to the end or closed, which resets its statement, so an idle connection holds no
 * read snapshot that would stop a checkpoint.
 *
 * <p>One thread at a time uses an instance. Results are read to the end or closed
 * ({@link Sql#list}, {@link Sql#firstOrNull}) before the same SQL is prepared again, since
 * preparing it again hands out the same statement.
 */
final class Statements implements AutoCloseable {
    private final Connection connection;
    private final Map<String, PreparedStatement> prepared = new HashMap<>();

    Statements(Connection connection) {
        this.connection = connection;
    }

    /** The connection, for transaction control around the statements (a read snapshot). */
    Connection connection() {
        return connection;
    }

    /** The statement for {@code sql}, compiled on first use. */
    PreparedStatement prepare(String sql) throws SQLException {
        PreparedStatement ps = prepared.get(sql);
        if (ps == null || ps.isClosed()) { // sqlite-jdbc finalizes a statement whose step failed with an I/O error
            ps = connection.prepareStatement(sql);
            prepared.put(sql, ps);
        }
        return ps;
    }

    /**
     * Runs a statement that takes no parameters and returns no rows, kept like {@link #prepare}:
     * the writer's transaction control (BEGIN, COMMIT, SAVEPOINT, RELEASE), four per batch.
     */
    void run(String sql) throws SQLException {
        prepare(sql).execute();
    }

    /** Runs SQL that is not kept (pragmas; the rollbacks after a failure, when kept statements may be closed). */
    void execute(String sql) throws SQLException {
        try (Statement s = connection.createStatement()) {
            s.execute(sql);
        }
    }

    /**
     * Closes every statement, to be compiled afresh on next use: after a failure SQLite may have
     * left one mid-step, and closing all is simpler than finding it (failures are rare).
     */
    @Override
    public void close() {
        for (PreparedStatement ps : prepared.values()) {
            try {
                ps.close();
            } catch (SQLException ignored) {
                // Best effort: a statement that cannot close is dropped all the same.
            }
        }
        prepared.clear();
    }
}
