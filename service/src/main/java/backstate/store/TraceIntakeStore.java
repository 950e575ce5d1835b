package backstate.store;

import java.time.Instant;
import java.util.Optional;

/**
 * Trace intake: a posted trace stored with its queued estimate job and its idempotency key, in
 * one transaction; and the stored trace read back. Failures as described on {@link
 * ModelCatalogue}.
 */
public interface TraceIntakeStore {

    /**
     * In one write transaction: replays the first submission made with the same
     * (unit, idempotency key) and the same request fingerprint, or refuses when the queue holds
     * {@code maxQueued} jobs or more, or stores the trace with a queued 'estimate' job (and the
     * key with its fingerprint, if given).
     *
     * @throws IdempotencyKeyReusedException if the key was first used with another fingerprint (nothing is written)
     * @throws IllegalArgumentException if the trace's model version does not exist
     */
    Submission submitTrace(NewTrace trace, IdempotencyKey idempotencyKeyOrNull, int maxQueued, Instant now)
            throws QueueFullException;

    /**
     * Reads, without writing, the submission first made with this (unit, idempotency key), if any.
     *
     * @throws IdempotencyKeyReusedException if the key was first used with another fingerprint
     */
    Optional<Submission> findSubmission(String unitId, IdempotencyKey key);

    Optional<TraceRow> findTrace(String id);
}
