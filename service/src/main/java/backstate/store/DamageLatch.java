package backstate.store;

/**
 * Remembers the first time SQLite reported the database file itself damaged
 * ({@code SQLITE_CORRUPT} or {@code SQLITE_NOTADB}) while the service ran, so readiness turns
 * red on damage that appears after the start's check, not only at the next start. Damage to one
 * item (a stored JSON text, a trace payload) is that item's alone and is not latched.
 */
final class DamageLatch {
    private volatile String first;

    /** Returns {@code e} unchanged, after noting it when it names the database file. */
    StoreException noted(StoreException e) {
        if (first == null && e instanceof CorruptDataException c && SqliteErrors.DATABASE_FILE.equals(c.item())) {
            first = "reported while running: " + c.getMessage();
        }
        return e;
    }

    /** The first damage noted, on one line; null while none was. */
    String firstOrNull() {
        return first;
    }
}
