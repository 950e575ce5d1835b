package backstate.jobs;

import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.concurrent.Semaphore;
import java.util.function.BooleanSupplier;
import java.util.function.Consumer;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs one claimed job through the handler and records its outcome, only ever for the attempt
 * it holds: {@link JobOutcome.Succeeded} completes the job with its estimate,
 * {@link JobOutcome.Failed} fails it for good, and an exception retries it until the queue's
 * attempts run out. An {@link Error} is not caught: the job stays running until rescued.
 *
 * <p>The handler runs inside one of a fixed number of handler slots, taken after the claim and
 * given back before the outcome is written, so the next job's handler need not wait for it.
 */
final class JobRunner {

    private static final Logger LOG = LoggerFactory.getLogger(JobRunner.class);
    /** A failed attempt's error when the handler threw: what happened in words, and where to look. */
    static final String UNEXPECTED = "the job failed unexpectedly (a bug in the service, not in its input);"
            + " the service log has the details under job ";

    private final JobQueue queue;
    private final JobHandler handler;
    private final Clock clock;
    private final JobMetrics metrics;
    private final BooleanSupplier abandoned;
    private final Semaphore handlerSlots;
    private final Consumer<ClaimedJob> outcomeWriting;

    /**
     * @param abandoned true once the pool has stopped waiting for its workers: a failure seen
     *                  after that (an interrupt, most likely) is left for rescue, not recorded
     * @param handlerSlots how many handlers may run at once, shared by every thread running jobs
     * @param outcomeWriting told just before a job's outcome is written: from then on the job may
     *                       stop being running at any moment, by this runner's own hand
     */
    JobRunner(JobQueue queue, JobHandler handler, Clock clock, JobMetrics metrics, BooleanSupplier abandoned,
              Semaphore handlerSlots, Consumer<ClaimedJob> outcomeWriting) {
        this.queue = queue;
        this.handler = handler;
        this.clock = clock;
        this.metrics = metrics;
        this.abandoned = abandoned;
        this.handlerSlots = handlerSlots;
        this.outcomeWriting = outcomeWriting;
    }

    void run(ClaimedJob job) {
        Instant claimedAt = clock.instant();
        String outcome = JobMetrics.LOST;
        try {
            outcome = handleAndRecord(job);
        } catch (RuntimeException e) {
            LOG.warn("job {} attempt {}: outcome not recorded; left running for rescue", job.id(), job.attempt(), e);
        } finally {
            metrics.recordJob(job.kind(), outcome, Duration.between(claimedAt, clock.instant()));
        }
    }

    private String handleAndRecord(ClaimedJob job) {
        try {
            handlerSlots.acquire();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt(); // stopping: the job stays running until rescued
            LOG.info("job {} attempt {}: stopped before its handler ran; left running for rescue", job.id(), job.attempt());
            return JobMetrics.LOST;
        }
        JobOutcome outcome = null;
        Exception failure = null;
        try {
            outcome = handler.handle(job);
        } catch (Exception e) {
            failure = e;
        } finally {
            handlerSlots.release(); // before the outcome's write, which may wait behind a batch
        }
        if (failure != null) {
            return recordException(job, failure);
        }
        if (outcome instanceof JobOutcome.Succeeded success) {
            return recordSuccess(job, success);
        }
        JobOutcome.Failed failed = outcome == null ? new JobOutcome.Failed("handler returned null, expected a JobOutcome")
                : (JobOutcome.Failed) outcome;
        return recordFailure(job, failed);
    }

    private String recordSuccess(ClaimedJob job, JobOutcome.Succeeded success) {
        outcomeWriting.accept(job);
        boolean recorded = queue.completeIfRunning(job.id(), job.attempt(), success.estimateOrNull(),
                success.resultJsonOrNull(), clock.instant());
        if (recorded && success.estimateOrNull() != null) {
            metrics.recordEstimate(success.estimateOrNull());
        }
        return recordedOrLost(job, recorded, JobMetrics.SUCCEEDED);
    }

    private String recordFailure(ClaimedJob job, JobOutcome.Failed failed) {
        if (abandoned.getAsBoolean()) {
            return JobMetrics.LOST;
        }
        LOG.info("job {} attempt {} failed: {}", job.id(), job.attempt(), failed.error());
        outcomeWriting.accept(job);
        boolean recorded = queue.failIfRunning(job.id(), job.attempt(), failed.error(), failed.detailsJsonOrNull(),
                clock.instant());
        return recordedOrLost(job, recorded, JobMetrics.FAILED);
    }

    private String recordException(ClaimedJob job, Exception e) {
        if (abandoned.getAsBoolean()) {
            return JobMetrics.LOST;
        }
        // The exception is for the log; the job's reader gets words, never a class name or a library's message.
        LOG.error("job {} attempt {}: the handler failed unexpectedly", job.id(), job.attempt(), e);
        outcomeWriting.accept(job);
        boolean recorded = queue.retryIfRunning(job.id(), job.attempt(), UNEXPECTED + job.id(), clock.instant());
        return recordedOrLost(job, recorded, JobMetrics.ERRORED);
    }

    private static String recordedOrLost(ClaimedJob job, boolean recorded, String outcome) {
        if (recorded) {
            return outcome;
        }
        LOG.info("job {} attempt {} was no longer ours; its {} outcome was dropped", job.id(), job.attempt(), outcome);
        return JobMetrics.LOST;
    }
}
