package backstate.store;

/**
 * An Idempotency-Key came back with a different request than the one it was first used with
 * (draft-ietf-httpapi-idempotency-key-header-07, section 2.7: answered 422). Nothing was written.
 */
public final class IdempotencyKeyReusedException extends RuntimeException {
    private final String key;

    public IdempotencyKeyReusedException(String key) {
        super("idempotency key " + key + " was first used with a different request");
        this.key = key;
    }

    public String key() {
        return key;
    }
}
