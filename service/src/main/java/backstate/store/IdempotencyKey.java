package backstate.store;

import java.util.Arrays;

/**
 * A client's Idempotency-Key with the fingerprint of the request it came with: the same key and
 * fingerprint again is a retry, the same key with another fingerprint a different request.
 *
 * @param key         the header's value, as the client sent it
 * @param fingerprint SHA-256 of the request, 32 bytes
 */
public record IdempotencyKey(String key, byte[] fingerprint) {
    /** Bytes in a SHA-256 digest. */
    public static final int FINGERPRINT_BYTES = 32;

    public IdempotencyKey {
        Expect.notBlank("idempotency key", key);
        Expect.notNull("fingerprint", fingerprint);
        if (fingerprint.length != FINGERPRINT_BYTES) {
            throw new IllegalArgumentException("got a fingerprint of " + fingerprint.length + " bytes, expected "
                    + FINGERPRINT_BYTES);
        }
        fingerprint = fingerprint.clone();
    }

    @Override
    public byte[] fingerprint() {
        return fingerprint.clone();
    }

    /** True when {@code stored}, the fingerprint kept with this key, is this request's; a key kept without one matches. */
    boolean sameRequestAs(byte[] storedOrNull) {
        return storedOrNull == null || Arrays.equals(fingerprint, storedOrNull);
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof IdempotencyKey other && key.equals(other.key) && Arrays.equals(fingerprint, other.fingerprint);
    }

    @Override
    public int hashCode() {
        return 31 * key.hashCode() + Arrays.hashCode(fingerprint);
    }

    @Override
    public String toString() {
        return "IdempotencyKey[" + key + "]";
    }
}
