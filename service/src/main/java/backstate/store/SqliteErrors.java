package backstate.store;

import java.sql.SQLException;

/**
 * Sorts SQLite failures into "try again later" ({@link StoreUnavailableException}) and bugs
 * ({@link StoreException}). A PostgreSQL backend would sort by SQLSTATE instead (53100 disk
 * full, 55P03 lock not available, 25006 read-only transaction, ...).
 */
final class SqliteErrors {

    // SQLite primary result codes (https://sqlite.org/rescode.html). Extended codes carry the
    // primary code in their low byte, so SQLITE_BUSY_SNAPSHOT (517) still reads as SQLITE_BUSY.
    private static final int PRIMARY_CODE_MASK = 0xFF;
    private static final int SQLITE_BUSY = 5;
    private static final int SQLITE_LOCKED = 6;
    private static final int SQLITE_READONLY = 8;
    private static final int SQLITE_CORRUPT = 11;
    private static final int SQLITE_FULL = 13;
    private static final int SQLITE_NOTADB = 26;

    /** The item a {@link CorruptDataException} names when SQLite reports the file itself damaged. */
    static final String DATABASE_FILE = "the database file";

    private SqliteErrors() {
    }

    static StoreException translate(SQLException e) {
        int primary = e.getErrorCode() & PRIMARY_CODE_MASK;
        if (primary == SQLITE_CORRUPT || primary == SQLITE_NOTADB) {
            return new CorruptDataException(DATABASE_FILE, "SQLite reports it damaged: " + e.getMessage(), e);
        }
        String reason = unavailableReason(e.getErrorCode() & PRIMARY_CODE_MASK);
        if (reason != null) {
            return new StoreUnavailableException(reason, e);
        }
        return new StoreException("database error: " + e.getMessage(), e);
    }

    private static String unavailableReason(int primaryCode) {
        switch (primaryCode) {
            case SQLITE_BUSY:
                return "database busy";
            case SQLITE_LOCKED:
                return "database locked";
            case SQLITE_READONLY:
                return "database read-only";
            case SQLITE_FULL:
                return "disk full";
            default:
                return null;
        }
    }
}
