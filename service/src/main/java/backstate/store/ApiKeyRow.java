package backstate.store;

import java.time.Instant;

/**
 * An API key as stored: never the key itself, only its non-secret ID and a salted hash.
 *
 * @param role        "admin", "gateway", "reader" or "pipeline"
 * @param unitPattern the glob over unit IDs a gateway key may act for; null for other roles
 * @param createdBy   the ID of the admin key that issued this one; null for the first admin key
 * @param revokedAt   when it was revoked; null while it is valid
 */
public record ApiKeyRow(String id, String role, String unitPattern, String label, byte[] salt, byte[] hash,
                        Instant createdAt, String createdBy, Instant revokedAt) {

    public boolean revoked() {
        return revokedAt != null;
    }
}
