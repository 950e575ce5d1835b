package backstate.jobs;

import static java.util.concurrent.TimeUnit.SECONDS;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.store.JobRow;
import backstate.store.SqliteDatabase;
import backstate.store.StoreFixture;
import backstate.store.Submission;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.file.Path;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Leases on the wall clock: jobs claimed by a holder that stopped renewing (a killed replica) come
 * back to a live pool once their lease runs out, and a live pool's slow job keeps its lease by
 * heartbeat, so no one takes it. Waits are hang guards, not timing assertions.
 */
class WorkerPoolLeaseTest {

    private static final Duration LEASE = Duration.ofMillis(900);
    private static final Duration IDLE_POLL = Duration.ofMillis(20);
    private static final long HANG_GUARD_SECONDS = 60;

    @TempDir
    Path dir;
    private SqliteDatabase store;
    private final Clock clock = Clock.systemUTC();

    @BeforeEach
    void open() {
        store = new SqliteDatabase(dir.resolve("backstate.db"), clock);
        StoreFixture.publishPump(store);
    }

    @AfterEach
    void close() {
        store.close();
    }

    @Test
    void jobs_held_by_a_holder_that_stopped_renewing_are_finished_by_a_live_pool_after_the_lease() throws Exception {
        List<Submission> submitted = List.of(submit("unit-1"), submit("unit-2"), submit("unit-3"));
        Instant now = clock.instant();
        List<ClaimedJob> abandoned = store.queue().claimNext(3, now, now.plus(LEASE)); // then the holder "dies"
        assertEquals(3, abandoned.size());
        CountDownLatch done = new CountDownLatch(3);

        try (WorkerPool live = pool(succeedAnd(done::countDown))) {
            live.start();
            assertTrue(done.await(HANG_GUARD_SECONDS, SECONDS), "jobs still waiting: " + done.getCount());
        }

        for (Submission s : submitted) {
            JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
            assertEquals(List.of("succeeded", 2), List.of(row.state(), row.attempt()));
            assertTrue(row.errors().get(0).contains("lease ran out"), row.errors().toString());
        }
        for (ClaimedJob late : abandoned) {
            assertEquals(false, store.queue().completeIfRunning(late.id(), late.attempt(), null, null, clock.instant()));
        }
    }

    @Test
    void a_slow_job_keeps_its_lease_by_heartbeat_while_another_pool_watches() throws Exception {
        Submission s = submit("unit-1");
        CountDownLatch finished = new CountDownLatch(1);
        JobHandler slow = job -> {
            Thread.sleep(LEASE.multipliedBy(4).toMillis()); // four leases long: only renewals keep it
            return estimateFor(job);
        };
        try (WorkerPool holder = pool(slow); WorkerPool watcher = pool(succeedAnd(finished::countDown))) {
            holder.start();
            awaitRunning(s.jobId());
            watcher.start();
            awaitFinished(s.jobId());
        }
        JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(List.of("succeeded", 1, List.of()), List.of(row.state(), row.attempt(), row.errors()));
        assertEquals(1, finished.getCount(), "the watcher ran the job too");
    }

    private WorkerPool pool(JobHandler handler) {
        return new WorkerPool(store.queue(), handler, 1, clock, IDLE_POLL, new SimpleMeterRegistry(),
                WorkerPool.DEFAULT_SHUTDOWN_GRACE, WorkerPool.DEFAULT_STUCK_AFTER, WorkerPool.Policy.replicas(LEASE));
    }

    private JobHandler succeedAnd(Runnable after) {
        return job -> {
            JobOutcome outcome = estimateFor(job);
            after.run();
            return outcome;
        };
    }

    private JobOutcome estimateFor(ClaimedJob job) {
        var trace = store.traces().findTrace(job.traceId()).orElseThrow();
        return new JobOutcome.Succeeded(StoreFixture.estimate(trace.id(), trace.unitId(), trace.family(),
                trace.version(), List.of(), "{}"), "{}");
    }

    private Submission submit(String unit) throws Exception {
        return store.traces().submitTrace(StoreFixture.trace(unit), null, 100, clock.instant());
    }

    private void awaitRunning(String jobId) throws InterruptedException {
        awaitState(jobId, "running");
    }

    private void awaitFinished(String jobId) throws InterruptedException {
        awaitState(jobId, "succeeded");
    }

    private void awaitState(String jobId, String state) throws InterruptedException {
        long deadline = System.nanoTime() + SECONDS.toNanos(HANG_GUARD_SECONDS);
        while (!store.jobs().findJob(jobId).orElseThrow().state().equals(state) && System.nanoTime() < deadline) {
            Thread.sleep(IDLE_POLL.toMillis());
        }
        assertEquals(state, store.jobs().findJob(jobId).orElseThrow().state());
    }
}
