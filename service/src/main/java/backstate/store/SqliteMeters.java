package backstate.store;

import io.micrometer.core.instrument.DistributionSummary;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Where a write to the SQLite file spends its time, on /metrics, so a slow post can be traced to
 * its part: {@code backstate_store_write_wait_seconds} (handed to the writer thread until its
 * batch begins), {@code backstate_store_write_work_seconds} (a batch's statements, BEGIN to the
 * last RELEASE), {@code backstate_store_write_commit_seconds} (the COMMIT: the WAL's fsync, and
 * the writer's own checkpoint when the WAL reached the backstop), {@code
 * backstate_store_write_batch} (requests per batch), {@code backstate_store_checkpoint_seconds}
 * (each background PASSIVE checkpoint) and {@code backstate_store_wal_pages} (the WAL's length
 * at the last checkpoint that ran). The timers publish fixed buckets ({@link #BUCKETS}) so a scraper can
 * tell a tail from the difference of two scrapes.
 */
final class SqliteMeters {

    static final String WRITE_WAIT = "backstate.store.write.wait";
    static final String WRITE_WORK = "backstate.store.write.work";
    static final String WRITE_COMMIT = "backstate.store.write.commit";
    static final String WRITE_BATCH = "backstate.store.write.batch";
    static final String CHECKPOINT = "backstate.store.checkpoint";
    static final String WAL_PAGES = "backstate.store.wal.pages";

    /** Bucket bounds around the 50 ms latency target of a post, from one fsync up to a stall. */
    static final Duration[] BUCKETS = durations(1, 2, 5, 10, 20, 50, 100, 200, 500, 1000);

    private final Timer writeWait;
    private final Timer writeWork;
    private final Timer writeCommit;
    private final DistributionSummary batchSize;
    private final Timer checkpoint;
    private final AtomicLong walPages = new AtomicLong();

    SqliteMeters(MeterRegistry registry) {
        this.writeWait = timer(registry, WRITE_WAIT, "time from handing a write to the writer thread until its batch begins");
        this.writeWork = timer(registry, WRITE_WORK, "a write batch's statements, BEGIN IMMEDIATE to its last RELEASE");
        this.writeCommit = timer(registry, WRITE_COMMIT, "a write batch's COMMIT: the WAL's fsync (and the backstop checkpoint)");
        this.batchSize = DistributionSummary.builder(WRITE_BATCH).description("writes committed together in one batch")
                .serviceLevelObjectives(1, 2, 4, 8, 16, 32, 64).register(registry);
        this.checkpoint = timer(registry, CHECKPOINT, "one background PASSIVE checkpoint of the WAL");
        Gauge.builder(WAL_PAGES, walPages, AtomicLong::get).description("pages in the WAL at the last checkpoint")
                .strongReference(true).register(registry);
    }

    /** Meters nobody reads: for a store opened without a registry (tools, tests). */
    static SqliteMeters unpublished() {
        return new SqliteMeters(new SimpleMeterRegistry());
    }

    void waited(long nanos) {
        writeWait.record(nanos, TimeUnit.NANOSECONDS);
    }

    void batch(int requests, long workNanos, long commitNanos) {
        batchSize.record(requests);
        writeWork.record(workNanos, TimeUnit.NANOSECONDS);
        writeCommit.record(commitNanos, TimeUnit.NANOSECONDS);
    }

    /**
     * One background checkpoint round and the WAL's length SQLite reported; -1 (no checkpoint ran,
     * as when the writer was checkpointing at its backstop) leaves the gauge at the last length known.
     */
    void checkpointed(long nanos, int walPagesNow) {
        checkpoint.record(nanos, TimeUnit.NANOSECONDS);
        if (walPagesNow >= 0) {
            walPages.set(walPagesNow);
        }
    }

    private static Timer timer(MeterRegistry registry, String name, String description) {
        return Timer.builder(name).description(description).serviceLevelObjectives(BUCKETS).register(registry);
    }

    private static Duration[] durations(long... millis) {
        Duration[] d = new Duration[millis.length];
        for (int i = 0; i < millis.length; i++) {
            d[i] = Duration.ofMillis(millis[i]);
        }
        return d;
    }
}
