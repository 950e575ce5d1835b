package backstate.store;

/** A pagination cursor that no page of this store handed out: the client's error, not ours. */
public final class InvalidCursorException extends IllegalArgumentException {

    public InvalidCursorException(String cursor) {
        super("got cursor '" + cursor + "', expected one returned by a previous page");
    }
}
