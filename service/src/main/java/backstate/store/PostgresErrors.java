package backstate.store;

import java.sql.SQLException;
import java.sql.SQLRecoverableException;
import java.sql.SQLTransientException;

/**
 * Sorts PostgreSQL failures by SQLSTATE (PostgreSQL manual, appendix A "Error Codes") into "try
 * again later" ({@link StoreUnavailableException}) and bugs ({@link StoreException}), as
 * {@link SqliteErrors} does by SQLite result code.
 */
final class PostgresErrors {

    private PostgresErrors() {
    }

    static StoreException translate(SQLException e) {
        String reason = unavailableReason(e);
        if (reason != null) {
            return new StoreUnavailableException(reason, e);
        }
        return new StoreException("database error: " + e.getMessage(), e);
    }

    /** True for a conflict that the same transaction, run again, may not meet. */
    static boolean worthRetrying(SQLException e) {
        String state = e.getSQLState();
        return "40001".equals(state) // serialization_failure
                || "40P01".equals(state) // deadlock_detected
                || "23505".equals(state); // unique_violation: a concurrent insert of the same key won
    }

    private static String unavailableReason(SQLException e) {
        String state = e.getSQLState() == null ? "" : e.getSQLState();
        if (state.startsWith("08") || e instanceof SQLRecoverableException) {
            return "database unreachable";
        }
        if (state.startsWith("57P")) { // admin_shutdown, crash_shutdown, cannot_connect_now
            return "database restarting";
        }
        if (state.equals("53100")) {
            return "disk full";
        }
        if (state.startsWith("53")) { // insufficient resources: memory, too many connections
            return "database out of resources";
        }
        if (state.equals("25006")) {
            return "database read-only";
        }
        if (state.equals("55P03") || state.equals("40001") || state.equals("40P01")) {
            return "database busy";
        }
        if (e instanceof SQLTransientException) { // the pool had no connection to give in time
            return connectingFailed(e) ? "database unreachable"
                    : "every database connection busy (raise --database-pool, or add replicas)";
        }
        return null;
    }

    /** True when the pool's timeout came after failed attempts to connect (the pool passes the last one on as a cause). */
    private static boolean connectingFailed(SQLException e) {
        for (Throwable cause = e.getCause(); cause != null; cause = cause.getCause()) {
            if (cause instanceof SQLException sql && sql.getSQLState() != null && sql.getSQLState().startsWith("08")
                    || cause instanceof java.net.ConnectException) {
                return true;
            }
        }
        return false;
    }
}
