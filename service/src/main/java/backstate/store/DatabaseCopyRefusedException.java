package backstate.store;

/**
 * {@link DatabaseCopy} would not start, having copied nothing: the SQLite file is missing or not
 * a backstate database, or the target already holds rows. The message says which, in one line.
 */
public final class DatabaseCopyRefusedException extends RuntimeException {

    public DatabaseCopyRefusedException(String message) {
        super(message);
    }
}
