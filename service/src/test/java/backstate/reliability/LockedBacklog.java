package backstate.reliability;

import backstate.api.Engine;
import backstate.api.TestDatabase;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;

/**
 * A backlog that exists by construction, not by the race between posts and solves: from outside
 * the server, the test takes SQLite's write lock on the server's file ({@code BEGIN IMMEDIATE}) and,
 * inside that transaction, adds queued estimate jobs on copies of a stored trace. While the lock is
 * held the server can neither claim nor finish a job (both are writes), so the queue it sees is
 * frozen: the test signals the server then, and {@link #close()} commits afterwards. A WAL reader
 * is never blocked, and the server's writes wait on its busy timeout (5 s) rather than fail, so
 * the lock is held only for the inserts and the signal.
 *
 * <p>On PostgreSQL there is no database-wide write lock to take, and none is needed: the jobs
 * are added in a transaction left open until {@link #close()}, so they exist for the server only
 * from that commit on, after the signal, whatever the server did meanwhile.
 */
final class LockedBacklog implements AutoCloseable {
    /** Longer than any write of the server under test: taking the lock waits for the one under way. */
    private static final int BUSY_TIMEOUT_MS = 30_000;

    private final Connection connection;
    private final long pending;

    /** Takes the write lock and queues {@code jobs} more estimate jobs on copies of trace {@code traceId}. */
    LockedBacklog(TestDatabase db, String traceId, int jobs) throws SQLException {
        this.connection = db.connect();
        try (Statement s = connection.createStatement()) {
            if (db.engine() == Engine.SQLITE) {
                s.execute("PRAGMA busy_timeout = " + BUSY_TIMEOUT_MS);
                s.execute("BEGIN IMMEDIATE");
            } else {
                connection.setAutoCommit(false);
            }
            long now = System.currentTimeMillis();
            for (int i = 0; i < jobs; i++) {
                s.executeUpdate("INSERT INTO traces (id, unit_id, family, version, received_at, samples, window_start, window_end,"
                        + " payload) SELECT 'backlog-trace-" + i + "', unit_id, family, version, " + now + ", samples, window_start,"
                        + " window_end, payload FROM traces WHERE id = '" + traceId + "'");
                s.executeUpdate("INSERT INTO jobs (id, kind, state, trace_id, attempt, created_at, progress_done, progress_total)"
                        + " VALUES ('backlog-job-" + i + "', 'estimate', 'queued', 'backlog-trace-" + i + "', 0, " + now + ", 0, 0)");
            }
            try (ResultSet rs = s.executeQuery("SELECT COUNT(*) FROM jobs WHERE state IN ('queued', 'running')")) {
                rs.next();
                this.pending = rs.getLong(1);
            }
        } catch (SQLException e) {
            connection.close();
            throw e;
        }
    }

    /** Jobs queued or running while the lock is held: what the server has pending, and cannot change. */
    long pending() {
        return pending;
    }

    /** Commits the added jobs and lets the server write again. */
    @Override
    public void close() throws SQLException {
        try (Statement s = connection.createStatement()) {
            if (connection.getAutoCommit()) {
                s.execute("COMMIT"); // SQLite: the transaction BEGIN IMMEDIATE opened
            } else {
                connection.commit();
            }
        } finally {
            connection.close();
        }
    }
}
