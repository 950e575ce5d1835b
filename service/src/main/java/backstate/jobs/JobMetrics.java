package backstate.jobs;

import backstate.estimation.Flag;
import backstate.formats.EstimateDocument;
import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import java.time.Duration;
import java.util.Arrays;
import java.util.List;

/**
 * The worker pool's meters: {@code backstate.queue.depth} (jobs waiting),
 * {@code backstate.job.duration} tagged by job kind and outcome, and the estimates written:
 * {@code backstate_estimates_total{family, version}} counts every estimate, and
 * {@code backstate_estimates_flagged_total{family, version, flag}} counts each flag an estimate
 * carries (one estimate with two flags counts under both), so the share of estimates with a flag
 * is {@code rate(backstate_estimates_flagged_total{flag="model_mismatch"}[w]) / rate(backstate_estimates_total[w])}.
 */
final class JobMetrics implements AutoCloseable {

    static final String QUEUE_DEPTH = "backstate.queue.depth";
    static final String JOB_DURATION = "backstate.job.duration";
    static final String ESTIMATES = "backstate.estimates";
    static final String ESTIMATES_FLAGGED = "backstate.estimates.flagged";
    /** Every flag an estimate can carry, as the API words it: each gets a series from a version's first estimate on. */
    static final List<String> FLAGS = Arrays.stream(Flag.values()).map(EstimateDocument::flagName).toList();

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

    /**
     * Counts an estimate just written. A model version's first estimate also starts its flag
     * counters at zero, so a rate over them is defined before the first flagged estimate.
     */
    void recordEstimate(NewEstimate estimate) {
        String version = Integer.toString(estimate.version());
        Counter.builder(ESTIMATES).description("estimates written")
                .tag("family", estimate.family()).tag("version", version)
                .register(registry).increment();
        for (String flag : FLAGS) {
            Counter flagged = Counter.builder(ESTIMATES_FLAGGED).description("estimates written with this flag")
                    .tag("family", estimate.family()).tag("version", version).tag("flag", flag)
                    .register(registry);
            if (estimate.flags().contains(flag)) {
                flagged.increment();
            }
        }
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
