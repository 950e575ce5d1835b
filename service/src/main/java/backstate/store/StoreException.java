package backstate.store;

/** A database failure that should not happen: a bug in our SQL or schema, or a closed store. */
public class StoreException extends RuntimeException {

    public StoreException(String message, Throwable cause) {
        super(message, cause);
    }
}
