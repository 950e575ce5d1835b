package backstate.store;

/** What revoking an API key did. */
public enum KeyRevocation {
    /** The key was valid and is now revoked. */
    REVOKED,
    /** The key was revoked before; nothing changed (revocation is idempotent). */
    ALREADY_REVOKED,
    /** No key has that ID. */
    NOT_FOUND,
    /** Refused: it is the last valid admin key, and revoking it would leave no one able to manage keys. */
    LAST_ADMIN
}
