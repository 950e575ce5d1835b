package backstate.store;

import java.time.Instant;
import java.util.List;
import java.util.Optional;

/**
 * API keys (access control). Only a key's ID and salted hash are stored, never the key.
 * Failures as described on {@link ModelCatalogue}.
 */
public interface ApiKeyStore {

    /** Stores a new key; returns false, changing nothing, if a key with that ID exists. */
    boolean insertApiKey(NewApiKey key, Instant now);

    Optional<ApiKeyRow> findApiKey(String id);

    /** All keys, revoked ones included, oldest first. */
    List<ApiKeyRow> listApiKeys();

    /**
     * In one write transaction: revokes the key, unless it is already revoked (nothing changes)
     * or it is the last valid admin key (refused).
     */
    KeyRevocation revokeApiKey(String id, Instant now);

    /** True when at least one admin key is not revoked. */
    boolean hasActiveAdminKey();

    /** The unit of the trace a job solves; empty for an unknown job or one without a trace. */
    Optional<String> unitOfJob(String jobId);
}
