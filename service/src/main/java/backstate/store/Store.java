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
     * (unit, idempotency key) and the same request fingerprint, or refuses when the queue holds
     * {@code maxQueued} jobs or more, or stores the trace with a queued 'estimate' job (and the
     * key with its fingerprint, if given).
     *
     * @throws IdempotencyKeyReusedException if the key was first used with another fingerprint (nothing is written)
     * @throws IllegalArgumentException if the trace's model version does not exist
     */
    Submission submitTrace(NewTrace trace, IdempotencyKey idempotencyKeyOrNull, int maxQueued, Instant now)
            throws QueueFullException;

    Optional<TraceRow> findTrace(String id);

    Optional<JobRow> findJob(String id);

    /** Cancels a job that no worker has claimed yet; false if it is not queued. */
    boolean cancelIfQueued(String jobId, Instant now);

    /** The unit's estimate of its newest recording (then the newest written, then by id). */
    Optional<EstimateRow> latestEstimate(String unitId);

    /**
     * One page of a unit's estimates, newest recording first (window start, then time written,
     * then id). The cursor is that keyset of the last row returned, so pages stay stable while new
     * estimates arrive.
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

    // ---- API keys (access control). Only a key's ID and salted hash are stored, never the key.

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

    // ---- regression runs (model version against model version over stored traces)

    /**
     * The stored traces of a family the selection matches, by unit then recording time, at most
     * {@code selection.maxRows()} of them; payloads are not read.
     */
    List<TraceRef> selectTraces(TraceSelection selection);

    /**
     * In one write transaction: refuses when the queue holds {@code maxQueued} jobs or more,
     * otherwise stores a queued 'regression' job with the run's row; returns the job's ID.
     */
    String createRegression(NewRegression regression, int maxQueued, Instant now) throws QueueFullException;

    /** A regression run by its job ID; empty for an unknown ID or a job of another kind. */
    Optional<RegressionRow> findRegression(String id);

    /**
     * One page of regression runs, newest first, optionally of one family only; the cursor is the
     * keyset (created_at, id) of the last row returned.
     *
     * @throws InvalidCursorException if the cursor did not come from this method
     */
    RegressionPage listRegressions(String familyOrNull, String cursorOrNull, int limit);

    /**
     * Records a cancel request for a queued or running regression run (the first request's time
     * is kept); false, changing nothing, if the run is finished or unknown.
     */
    boolean requestRegressionCancel(String id, Instant now);

    /** True once a cancel was requested for the run; its worker polls this between traces. */
    boolean regressionCancelRequested(String id);

    /**
     * Finishes a running regression job as cancelled, with its partial result, only while it is
     * running at {@code attempt}; false, writing nothing, otherwise.
     */
    boolean cancelRegressionIfRunning(String id, int attempt, String resultJsonOrNull, Instant now);

    // ---- fleet views (dashboards): read from tables derived from each estimate as it is written

    /**
     * Per model version: units, traces and estimates in the recording window (and received range), the distribution of χ²/dof
     * and of each channel's residual RMS, and the units per flag; plus the stale units. Read in
     * one snapshot, so the figures agree with each other.
     */
    FleetSummary fleetSummary(FleetSummaryQuery query);

    /**
     * One page of a family's units with their newest estimate, in the given order. The cursor is
     * the keyset of the last row returned in that order.
     *
     * @throws InvalidCursorException if the cursor did not come from this method with the same order
     */
    UnitPage fleetUnits(UnitFilter filter, UnitSort sort, String cursorOrNull, int limit);

    /**
     * The unit's {@code limit} estimates of one state of a family (of one version, if given) with the
     * newest recordings in the time filter, newest recording first.
     */
    List<StatePoint> stateTrend(String unitId, String state, String family, Integer versionOrNull, TimeFilter times,
                                int limit);
}
