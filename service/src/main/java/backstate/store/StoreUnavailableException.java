package backstate.store;

/**
 * The database cannot serve right now (busy, locked, disk full, read-only); retrying later may
 * succeed, so the HTTP layer answers 503 with Retry-After.
 */
public final class StoreUnavailableException extends StoreException {

    private final String reason;

    public StoreUnavailableException(String reason, Throwable cause) {
        super("store unavailable: " + reason, cause);
        this.reason = reason;
    }

    /** A short phrase such as "database busy" or "disk full". */
    public String reason() {
        return reason;
    }
}
