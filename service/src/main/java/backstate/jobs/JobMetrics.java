package backstate.jobs;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import java.time.Duration;

/**
 * The worker pool's meters: {@code backstate.queue.depth} (jobs waiting) and
 * {@code backstate.job.duration} tagged by job kind and outcome.
 */
final class JobMetrics implements AutoCloseable {

    static final String QUEUE_DEPTH = "backstate.queue.depth";
    static final String JOB_DURATION = "backstate.job.duration";

    /** The handler's result was recorded: the job is done. */
    static final String SUCCEEDED = "succeeded";
    /** The handler returned Failed: the job failed for good. */
    static final String FAILED = "failed";
    /** The handler threw: the job was retried, or failed once out of attempts. */
    static final String ERRORED = "errored";
    /** The result could not be recorded (job taken away, or store unavailable); rescue will see to it. */
    static final String LOST = "lost";

    private final MeterRegistry registry;
    private final Gauge queueDepth;

    JobMetrics(MeterRegistry registry, JobQueue queue) {
        this.registry = registry;
        this.queueDepth = Gauge.builder(QUEUE_DEPTH, queue, JobMetrics::depthOrNaN)
                .description("jobs waiting to be claimed")
                .strongReference(true)
                .register(registry);
    }

    void recordJob(String kind, String outcome, Duration duration) {
        Timer.builder(JOB_DURATION)
                .description("time from claim to recorded outcome")
                .tag("kind", kind)
                .tag("outcome", outcome)
                .register(registry)
                .record(duration);
    }

    /** Unregisters the gauge, which would otherwise keep the queue reachable and queried. */
    @Override
    public void close() {
        registry.remove(queueDepth);
    }

    /** A scrape must not fail because the database is busy: report "unknown" instead. */
    private static double depthOrNaN(JobQueue queue) {
        try {
            return queue.queuedCount();
        } catch (RuntimeException e) {
            return Double.NaN;
        }
    }
}
