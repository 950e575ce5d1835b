package backstate.jobs;

import java.time.Duration;
import java.time.Instant;
import java.util.List;

/**
 * A durable queue of jobs. A claimed job is changed only by the holder of its current attempt:
 * every "...IfRunning" call returns false, writing nothing, when the job is no longer running
 * at that attempt (it was rescued, cancelled, or finished by a later attempt).
 */
public interface JobQueue {

    /** How long a claim holds a job when the caller names no lease (tests and single-process use). */
    Duration DEFAULT_LEASE = Duration.ofSeconds(30);

    /**
     * Claims up to {@code limit} queued jobs, oldest first, in one statement; each gets attempt + 1
     * and a lease until {@code leaseUntil}. Concurrent claimers (other replicas) never get the same job.
     */
    List<ClaimedJob> claimNext(int limit, Instant now, Instant leaseUntil);

    /** {@link #claimNext(int, Instant, Instant)} with the {@link #DEFAULT_LEASE}. */
    default List<ClaimedJob> claimNext(int limit, Instant now) {
        return claimNext(limit, now, now.plus(DEFAULT_LEASE));
    }

    /**
     * Extends the lease of each job still running at the attempt held; returns how many were
     * renewed (a job missing from the count was rescued or finished by someone else).
     */
    int renewLeases(List<ClaimedJob> held, Instant leaseUntil);

    /**
     * Returns to the queue (or fails, when out of attempts) every running job whose lease ran out
     * before {@code now}: its holder died or lost the database. Returns how many left 'running'.
     */
    int rescueExpiredLeases(Instant now);

    /** Marks the job succeeded and, in the same transaction, writes its estimate if given. */
    boolean completeIfRunning(String jobId, int attempt, NewEstimate estimateOrNull, String resultJsonOrNull,
                              Instant now);

    /**
     * Marks the job failed for good, appending the error to its errors and keeping the failure's
     * structured details (JSON) if given.
     */
    boolean failIfRunning(String jobId, int attempt, String error, String detailsJsonOrNull, Instant now);

    /**
     * Appends the error and puts the job back in the queue while it has attempts left, otherwise
     * marks it failed.
     */
    boolean retryIfRunning(String jobId, int attempt, String error, Instant now);

    boolean reportProgress(String jobId, int attempt, int done, int total);

    /**
     * Returns jobs running since before {@code startedBefore} to the queue (or fails those out of
     * attempts), appending an error that says so; returns how many jobs left 'running'.
     */
    int rescueStuck(Instant startedBefore);

    int queuedCount();

    /** Enqueues a job of kind 'estimate' (trace required) or 'regression'; returns its id. */
    String enqueue(String kind, String traceIdOrNull, String paramsJsonOrNull, Instant now);
}
