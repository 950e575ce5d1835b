package backstate.jobs;

import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.function.BooleanSupplier;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs one claimed job through the handler and records its outcome, only ever for the attempt
 * it holds: {@link JobOutcome.Succeeded} completes the job with its estimate,
 * {@link JobOutcome.Failed} fails it for good, and an exception retries it until the queue's
 * attempts run out. An {@link Error} is not caught: the job stays running until rescued.
 */
final class JobRunner {

    private static final Logger LOG = LoggerFactory.getLogger(JobRunner.class);

    private final JobQueue queue;
    private final JobHandler handler;
    private final Clock clock;
    private final JobMetrics metrics;
    private final BooleanSupplier abandoned;

    /**
     * @param abandoned true once the pool has stopped waiting for its workers: a failure seen
     *                  after that (an interrupt, most likely) is left for rescue, not recorded
     */
    JobRunner(JobQueue queue, JobHandler handler, Clock clock, JobMetrics metrics, BooleanSupplier abandoned) {
        this.queue = queue;
        this.handler = handler;
        this.clock = clock;
        this.metrics = metrics;
        this.abandoned = abandoned;
    }

    /**
     * @param handled called once the handler has returned or thrown, before the outcome is
     *                written: the handler's slot is free for the next job from then on
     */
    void run(ClaimedJob job, Runnable handled) {
        Instant claimedAt = clock.instant();
        String outcome = JobMetrics.LOST;
        try {
            outcome = handleAndRecord(job, handled);
        } catch (RuntimeException e) {
            LOG.warn("job {} attempt {}: outcome not recorded; left running for rescue", job.id(), job.attempt(), e);
        } finally {
            metrics.recordJob(job.kind(), outcome, Duration.between(claimedAt, clock.instant()));
        }
    }

    private String handleAndRecord(ClaimedJob job, Runnable handled) {
        JobOutcome outcome;
        try {
            outcome = handler.handle(job);
        } catch (Exception e) {
            handled.run();
            return recordException(job, e);
        }
        handled.run();
        if (outcome instanceof JobOutcome.Succeeded success) {
            return recordSuccess(job, success);
        }
        String error = outcome == null ? "handler returned null, expected a JobOutcome"
                : ((JobOutcome.Failed) outcome).error();
        return recordFailure(job, error);
    }

    private String recordSuccess(ClaimedJob job, JobOutcome.Succeeded success) {
        boolean recorded = queue.completeIfRunning(job.id(), job.attempt(), success.estimateOrNull(),
                success.resultJsonOrNull(), clock.instant());
        return recordedOrLost(job, recorded, JobMetrics.SUCCEEDED);
    }

    private String recordFailure(ClaimedJob job, String error) {
        if (abandoned.getAsBoolean()) {
            return JobMetrics.LOST;
        }
        boolean recorded = queue.failIfRunning(job.id(), job.attempt(), error, clock.instant());
        return recordedOrLost(job, recorded, JobMetrics.FAILED);
    }

    private String recordException(ClaimedJob job, Exception e) {
        if (abandoned.getAsBoolean()) {
            return JobMetrics.LOST;
        }
        boolean recorded = queue.retryIfRunning(job.id(), job.attempt(), describe(e), clock.instant());
        return recordedOrLost(job, recorded, JobMetrics.ERRORED);
    }

    private static String describe(Exception e) {
        String type = e.getClass().getName();
        return e.getMessage() == null ? type : type + ": " + e.getMessage();
    }

    private static String recordedOrLost(ClaimedJob job, boolean recorded, String outcome) {
        if (recorded) {
            return outcome;
        }
        LOG.info("job {} attempt {} was no longer ours; its {} outcome was dropped", job.id(), job.attempt(), outcome);
        return JobMetrics.LOST;
    }
}
