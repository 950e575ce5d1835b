package backstate.store;

import java.time.Instant;
import java.util.List;
import java.util.Optional;

/**
 * The service's durable state: model families and versions, submitted traces, jobs and the
 * estimates they produce. Implementations are safe for concurrent use.
 *
 * <p>Failures: a database that cannot serve right now (busy, locked, disk full, read-only)
 * raises {@link StoreUnavailableException}; any other database failure raises
 * {@link StoreException} and means a bug. Arguments that break a documented precondition raise
 * {@link IllegalArgumentException} naming what was got and what was expected.
 */
public interface Store extends AutoCloseable {

    /** Creates a family; returns false, changing nothing, if one with that name exists. */
    boolean createFamily(String name, String description, Instant now);

    Optional<FamilyRow> findFamily(String name);

    /** All families, by name. */
    List<FamilyRow> listFamilies();

    /**
     * Publishes the next version of an existing family, numbered max + 1 in the same
     * transaction, with status 'active'.
     *
     * @throws IllegalArgumentException if the family does not exist
     */
    ModelVersionRow publishVersion(NewModelVersion v, Instant now);

    Optional<ModelVersionRow> findVersion(String family, int version);

    /** The family's versions, oldest first; empty if the family does not exist. */
    List<ModelVersionRow> listVersions(String family);

    /** Marks a version retired (idempotent); false if there is no such version. */
    boolean retireVersion(String family, int version);

    /**
     * In one write transaction: replays the first submission made with the same
     * (unit, idempotency key), or refuses when the queue holds {@code maxQueued} jobs or more,
     * or stores the trace with a queued 'estimate' job (and the key, if given).
     *
     * @throws IllegalArgumentException if the trace's model version does not exist
     */
    Submission submitTrace(NewTrace trace, String idempotencyKeyOrNull, int maxQueued, Instant now)
            throws QueueFullException;

    Optional<TraceRow> findTrace(String id);

    Optional<JobRow> findJob(String id);

    /** Cancels a job that no worker has claimed yet; false if it is not queued. */
    boolean cancelIfQueued(String jobId, Instant now);

    Optional<EstimateRow> latestEstimate(String unitId);

    /**
     * One page of a unit's estimates, newest first. The cursor is the keyset (created_at, id)
     * of the last row returned, so pages stay stable while new estimates arrive.
     *
     * @throws InvalidCursorException if the cursor did not come from this method
     */
    EstimatePage estimateHistory(String unitId, EstimateFilter filter, String cursorOrNull, int limit);

    Optional<EstimateRow> findEstimate(String id);

    /** The estimate a succeeded job wrote, if it wrote one (at most one exists per job). */
    Optional<EstimateRow> findEstimateForJob(String jobId);

    /** True when a trivial query succeeds; never throws. */
    boolean isReachable();

    @Override
    void close();
}
