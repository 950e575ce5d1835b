package backstate.store;

import java.time.Instant;
import java.util.List;
import java.util.Optional;

/**
 * Regression runs: model version against model version over stored traces. Failures as
 * described on {@link ModelCatalogue}.
 */
public interface RegressionStore {

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

    /**
     * Queues one chunk of a run: a 'regression' job with the caller's ID and parameters, unless a
     * job with that ID exists, in which case nothing changes (so a run re-claimed after a crash,
     * deriving the same chunk IDs, never queues a chunk twice). Not refused when the queue is
     * full: the run holding the chunk was admitted already. Returns true if the chunk was queued.
     */
    boolean queueChunkOnce(String chunkId, String paramsJson, Instant now);

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
}
