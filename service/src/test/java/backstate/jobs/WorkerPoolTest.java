package backstate.jobs;

import static java.util.concurrent.TimeUnit.SECONDS;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.ConsoleCapture;
import backstate.store.JobRow;
import backstate.store.SqliteDatabase;
import backstate.store.StoreFixture;
import backstate.store.StoreTestBase;
import backstate.store.Submission;
import backstate.store.TraceRow;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.CyclicBarrier;
import java.util.concurrent.Semaphore;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.Test;

class WorkerPoolTest extends StoreTestBase {

    /**
     * Waits below are guards against a hang, not timing assertions: every one is expected to
     * return almost at once, and only a bug makes one run out.
     */
    private static final long HANG_GUARD_SECONDS = 60;
    private static final Duration IDLE_POLL = Duration.ofMillis(20);
    private static final Duration SHORT_GRACE = Duration.ofMillis(200);
    private static final Duration STUCK_AFTER = Duration.ofHours(1);
    private static final int ROOMY = 1000;

    SimpleMeterRegistry registry = new SimpleMeterRegistry();


    @Test
    void every_job_runs_to_succeeded_exactly_once_with_three_workers() throws Exception {
        int submitters = 2;
        int jobsEach = 20;
        int jobs = submitters * jobsEach;
        Map<String, AtomicInteger> runs = new ConcurrentHashMap<>();
        CountDownLatch allRun = new CountDownLatch(jobs);
        CyclicBarrier firstTwoTogether = new CyclicBarrier(2);
        AtomicInteger started = new AtomicInteger();
        JobHandler handler = job -> {
            if (started.incrementAndGet() <= 2) {
                firstTwoTogether.await(HANG_GUARD_SECONDS, SECONDS); // proves two workers run at once
            }
            runs.computeIfAbsent(job.id(), id -> new AtomicInteger()).incrementAndGet();
            allRun.countDown();
            return new JobOutcome.Succeeded(estimateFor(store.traces().findTrace(job.traceId()).orElseThrow()), "{\"ok\":true}");
        };

        try (WorkerPool pool = pool(handler, 3, WorkerPool.DEFAULT_SHUTDOWN_GRACE)) {
            pool.start();
            List<Thread> threads = new ArrayList<>();
            for (int t = 0; t < submitters; t++) {
                String unit = "unit-" + t;
                threads.add(new Thread(() -> submitAndWake(pool, unit, jobsEach)));
            }
            threads.forEach(Thread::start);
            for (Thread thread : threads) {
                thread.join(SECONDS.toMillis(HANG_GUARD_SECONDS));
            }
            assertTrue(allRun.await(HANG_GUARD_SECONDS, SECONDS), "handlers still pending: " + allRun.getCount());
        }

        assertEquals(jobs, runs.size());
        assertTrue(runs.values().stream().allMatch(n -> n.get() == 1), runs.toString());
        assertEquals(jobs, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded' AND attempt = 1"));
        assertEquals(jobs, fx.count("SELECT COUNT(DISTINCT job_id) FROM estimates"));
        assertEquals(jobs, fx.rows("estimates"));
        assertEquals(jobs, timerCount("estimate", JobMetrics.SUCCEEDED));
        fx.close();
        assertEquals("ok", fx.integrityCheck());
    }

    @Test
    void the_next_job_is_solved_while_an_earlier_outcome_waits_for_its_write() throws Exception {
        Submission first = submit("unit-1");
        Submission second = submit("unit-2");
        CountDownLatch aWriteStarted = new CountDownLatch(1);
        CountDownLatch releaseWrites = new CountDownLatch(1);
        CountDownLatch bothHandled = new CountDownLatch(2);
        JobQueue slowWrites = new HeldOutcomes(store, aWriteStarted, releaseWrites);
        JobHandler handler = job -> {
            bothHandled.countDown();
            return new JobOutcome.Succeeded(estimateFor(store.traces().findTrace(job.traceId()).orElseThrow()), "{}");
        };

        try (WorkerPool pool = new WorkerPool(slowWrites, handler, 1, fx.clock, IDLE_POLL, registry,
                WorkerPool.DEFAULT_SHUTDOWN_GRACE, STUCK_AFTER)) {
            pool.start();
            assertTrue(aWriteStarted.await(HANG_GUARD_SECONDS, SECONDS));
            // One worker, and the first outcome is not written yet: the other job is solved anyway.
            assertTrue(bothHandled.await(HANG_GUARD_SECONDS, SECONDS), "the second job waited for the first one's write");
            assertEquals(2, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'running'"));
            releaseWrites.countDown();
            awaitSucceeded(2);
        }
        assertEquals("succeeded", store.jobs().findJob(first.jobId()).orElseThrow().state());
        assertEquals("succeeded", store.jobs().findJob(second.jobId()).orElseThrow().state());
        assertEquals(2, fx.rows("estimates"));
    }

    @Test
    void handlers_stay_within_the_workers_and_jobs_in_flight_within_their_bound() throws Exception {
        int workers = 2;
        int inFlight = workers * WorkerPool.JOBS_IN_FLIGHT_PER_SLOT;
        int jobs = inFlight + 4;
        for (int i = 0; i < jobs; i++) {
            submit("unit-" + i);
        }
        CountDownLatch releaseWrites = new CountDownLatch(1);
        CountDownLatch inFlightHandled = new CountDownLatch(inFlight);
        AtomicInteger running = new AtomicInteger();
        AtomicInteger mostAtOnce = new AtomicInteger();
        JobHandler handler = job -> {
            mostAtOnce.accumulateAndGet(running.incrementAndGet(), Math::max);
            try {
                return new JobOutcome.Succeeded(estimateFor(store.traces().findTrace(job.traceId()).orElseThrow()), "{}");
            } finally {
                running.decrementAndGet();
                inFlightHandled.countDown();
            }
        };

        try (WorkerPool pool = new WorkerPool(new HeldOutcomes(store, new CountDownLatch(1), releaseWrites), handler, workers,
                fx.clock, IDLE_POLL, registry, WorkerPool.DEFAULT_SHUTDOWN_GRACE, STUCK_AFTER)) {
            pool.start();
            assertTrue(inFlightHandled.await(HANG_GUARD_SECONDS, SECONDS));
            // Every thread now holds a solved job whose write is held: nothing more can be claimed.
            assertEquals(inFlight, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'running'"));
            assertEquals(jobs - inFlight, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'queued'"));
            releaseWrites.countDown();
            awaitSucceeded(jobs);
        }
        assertTrue(mostAtOnce.get() <= workers, "handlers at once: " + mostAtOnce.get());
        assertEquals(jobs, fx.rows("estimates"));
    }

    @Test
    void jobs_are_claimed_once_at_least_half_the_threads_are_free() throws Exception {
        int threads = WorkerPool.JOBS_IN_FLIGHT_PER_SLOT;
        int jobs = 5 * threads;
        for (int i = 0; i < jobs; i++) {
            submit("unit-" + i);
        }
        CountDownLatch released = new CountDownLatch(0);
        HeldOutcomes queue = new HeldOutcomes(store, new CountDownLatch(1), released);
        JobHandler handler = job -> new JobOutcome.Succeeded(estimateFor(store.traces().findTrace(job.traceId()).orElseThrow()), "{}");
        try (WorkerPool pool = new WorkerPool(queue, handler, 1, fx.clock, IDLE_POLL, registry,
                WorkerPool.DEFAULT_SHUTDOWN_GRACE, STUCK_AFTER)) {
            pool.start();
            awaitSucceeded(jobs);
        }
        assertFalse(queue.claimLimits().isEmpty());
        assertTrue(queue.claimLimits().stream().allMatch(limit -> limit >= threads / 2),
                "every claim asks for at least half the threads' worth: " + queue.claimLimits());
        assertEquals(threads, queue.claimLimits().get(0), "the first claim fills every thread");
    }

    @Test
    void an_empty_queue_costs_no_claim_writes_and_a_queued_job_is_still_claimed() throws Exception {
        HeldOutcomes queue = new HeldOutcomes(store, new CountDownLatch(1), new CountDownLatch(0));
        JobHandler handler = job -> new JobOutcome.Succeeded(estimateFor(store.traces().findTrace(job.traceId()).orElseThrow()), "{}");
        try (WorkerPool pool = new WorkerPool(queue, handler, 1, fx.clock, IDLE_POLL, registry,
                WorkerPool.DEFAULT_SHUTDOWN_GRACE, STUCK_AFTER)) {
            pool.start();
            // Counted, not timed: each wake is followed by a read of the queue's length, and the
            // read after the fifth shows the dispatcher finished that round (a claim would come
            // between the two reads, on the one dispatcher thread).
            for (int i = 0; i < 5; i++) {
                queue.lengthReads().drainPermits();
                pool.wake();
                assertTrue(queue.lengthReads().tryAcquire(HANG_GUARD_SECONDS, SECONDS), "no read of the queue's length");
            }
            queue.lengthReads().drainPermits();
            assertTrue(queue.lengthReads().tryAcquire(HANG_GUARD_SECONDS, SECONDS), "no read after the last round");
            assertEquals(List.of(), queue.claimLimits(), "polls and wakes of an idle pool read the queue's length only");
            submitAndWake(pool, "unit-1", 1);
            awaitSucceeded(1);
        }
        assertEquals(1, queue.claimLimits().size());
    }

    @Test
    void a_job_that_keeps_throwing_is_retried_then_failed_with_every_error() throws Exception {
        Submission s = submit("unit-1");
        CountDownLatch threeRuns = new CountDownLatch(3);
        JobHandler handler = job -> {
            threeRuns.countDown();
            throw new IllegalStateException("boom");
        };

        ConsoleCapture console = new ConsoleCapture();
        try (console; WorkerPool pool = pool(handler, 2, WorkerPool.DEFAULT_SHUTDOWN_GRACE)) {
            pool.start();
            assertTrue(threeRuns.await(HANG_GUARD_SECONDS, SECONDS));
        }
        String logged = console.text();

        JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(List.of("failed", 3), List.of(row.state(), row.attempt()));
        // Words for the job's reader, never the exception's class or message; the log has those, by job ID.
        String words = "the job failed unexpectedly (a bug in the service, not in its input);"
                + " the service log has the details under job " + s.jobId();
        assertEquals(List.of("attempt 1: " + words, "attempt 2: " + words, "attempt 3: " + words), row.errors());
        for (int attempt = 1; attempt <= 3; attempt++) {
            assertTrue(logged.contains("job " + s.jobId() + " attempt " + attempt + ": the handler failed unexpectedly"), logged);
        }
        assertTrue(logged.contains("java.lang.IllegalStateException: boom"), logged);
        assertEquals(3, timerCount("estimate", JobMetrics.ERRORED));
    }

    @Test
    void a_failed_outcome_fails_the_job_at_once_without_retry() throws Exception {
        Submission s = submit("unit-1");
        CountDownLatch ran = new CountDownLatch(1);
        JobHandler handler = job -> {
            ran.countDown();
            return new JobOutcome.Failed("no convergence");
        };

        try (WorkerPool pool = pool(handler, 2, WorkerPool.DEFAULT_SHUTDOWN_GRACE)) {
            pool.start();
            assertTrue(ran.await(HANG_GUARD_SECONDS, SECONDS));
        }

        JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(List.of("failed", 1, List.of("attempt 1: no convergence"), fx.clock.instant()),
                List.of(row.state(), row.attempt(), row.errors(), row.finishedAt()));
        assertEquals(0, fx.rows("estimates"));
        assertEquals(1, timerCount("estimate", JobMetrics.FAILED));
    }

    @Test
    void close_leaves_a_job_that_outlives_the_grace_running_for_the_next_start() throws Exception {
        Submission s = submit("unit-1");
        CountDownLatch started = new CountDownLatch(1);
        CountDownLatch never = new CountDownLatch(1);
        JobHandler handler = job -> {
            started.countDown();
            never.await(); // interrupted by close once the grace runs out
            return new JobOutcome.Succeeded(null, null);
        };

        WorkerPool pool = pool(handler, 1, SHORT_GRACE);
        pool.start();
        assertTrue(started.await(HANG_GUARD_SECONDS, SECONDS));
        pool.close();

        assertEquals("running", store.jobs().findJob(s.jobId()).orElseThrow().state());
        fx.close();
        try (SqliteDatabase reopened = new SqliteDatabase(fx.file, fx.clock)) {
            JobRow row = reopened.jobs().findJob(s.jobId()).orElseThrow();
            assertEquals(List.of("queued", 1), List.of(row.state(), row.attempt()));
            assertEquals(List.of("attempt 1: rescued: left running by a worker that crashed, stopped or hung"),
                    row.errors());
        }
    }

    @Test
    void a_hung_job_is_rescued_on_the_timer_and_its_late_result_is_refused() throws Exception {
        Submission s = submit("unit-1");
        TraceRow trace = store.traces().findTrace(s.traceId()).orElseThrow();
        CountDownLatch firstStarted = new CountDownLatch(1);
        CountDownLatch releaseFirst = new CountDownLatch(1);
        CountDownLatch secondDone = new CountDownLatch(1);
        JobHandler handler = job -> {
            if (job.attempt() == 1) {
                firstStarted.countDown();
                releaseFirst.await(HANG_GUARD_SECONDS, SECONDS);
                return new JobOutcome.Succeeded(estimateFor(trace), "{\"attempt\":1}");
            }
            secondDone.countDown();
            return new JobOutcome.Succeeded(estimateFor(trace), "{\"attempt\":2}");
        };

        try (WorkerPool pool = pool(handler, 2, WorkerPool.DEFAULT_SHUTDOWN_GRACE)) {
            pool.start();
            assertTrue(firstStarted.await(HANG_GUARD_SECONDS, SECONDS));
            fx.clock.advance(STUCK_AFTER.plusMinutes(1));
            pool.wake();
            assertTrue(secondDone.await(HANG_GUARD_SECONDS, SECONDS));
            releaseFirst.countDown();
        }

        JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(List.of("succeeded", 2, "{\"attempt\":2}"), List.of(row.state(), row.attempt(), row.resultJson()));
        assertEquals(1, fx.rows("estimates"));
        assertEquals(1, timerCount("estimate", JobMetrics.SUCCEEDED));
        assertEquals(1, timerCount("estimate", JobMetrics.LOST));
    }

    @Test
    void the_queue_depth_gauge_reads_the_queued_jobs_until_the_pool_closes() throws Exception {
        submit("unit-1");
        submit("unit-2");
        WorkerPool pool = pool(job -> new JobOutcome.Succeeded(null, null), 1, WorkerPool.DEFAULT_SHUTDOWN_GRACE);

        assertEquals(2.0, registry.get(JobMetrics.QUEUE_DEPTH).gauge().value());
        pool.close();
        assertEquals(List.of(), registry.find(JobMetrics.QUEUE_DEPTH).gauges().stream().toList());
    }

    /** Polls until the jobs have all succeeded; bounded, a guard against a hang. */
    private void awaitSucceeded(int jobs) throws Exception {
        long deadline = System.nanoTime() + SECONDS.toNanos(HANG_GUARD_SECONDS);
        while (fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded'") < jobs && System.nanoTime() < deadline) {
            Thread.sleep(IDLE_POLL.toMillis());
        }
        assertEquals(jobs, fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded'"));
    }

    /**
     * The store as a queue whose completions wait until released (a write stuck behind a batch),
     * recording the limit of every claim and releasing a permit at every read of the queue's length.
     */
    private record HeldOutcomes(SqliteDatabase store, CountDownLatch writeStarted, CountDownLatch release,
                                List<Integer> claimLimits, Semaphore lengthReads) implements JobQueue {
        HeldOutcomes(SqliteDatabase store, CountDownLatch writeStarted, CountDownLatch release) {
            this(store, writeStarted, release, new java.util.concurrent.CopyOnWriteArrayList<>(), new Semaphore(0));
        }

        @Override
        public boolean completeIfRunning(String jobId, int attempt, NewEstimate estimateOrNull, String resultJsonOrNull,
                                         java.time.Instant now) {
            writeStarted.countDown();
            try {
                assertTrue(release.await(HANG_GUARD_SECONDS, SECONDS));
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new IllegalStateException(e);
            }
            return store.queue().completeIfRunning(jobId, attempt, estimateOrNull, resultJsonOrNull, now);
        }

        @Override
        public List<ClaimedJob> claimNext(int limit, java.time.Instant now, java.time.Instant leaseUntil) {
            claimLimits.add(limit);
            return store.queue().claimNext(limit, now, leaseUntil);
        }

        @Override
        public int renewLeases(List<ClaimedJob> held, java.time.Instant leaseUntil) {
            return store.queue().renewLeases(held, leaseUntil);
        }

        @Override
        public int rescueExpiredLeases(java.time.Instant now) {
            return store.queue().rescueExpiredLeases(now);
        }

        @Override
        public boolean failIfRunning(String jobId, int attempt, String error, String detailsJsonOrNull,
                                     java.time.Instant now) {
            return store.queue().failIfRunning(jobId, attempt, error, detailsJsonOrNull, now);
        }

        @Override
        public boolean retryIfRunning(String jobId, int attempt, String error, java.time.Instant now) {
            return store.queue().retryIfRunning(jobId, attempt, error, now);
        }

        @Override
        public boolean reportProgress(String jobId, int attempt, int done, int total) {
            return store.queue().reportProgress(jobId, attempt, done, total);
        }

        @Override
        public int rescueStuck(java.time.Instant startedBefore) {
            return store.queue().rescueStuck(startedBefore);
        }

        @Override
        public int queuedCount() {
            int queued = store.queue().queuedCount();
            lengthReads.release();
            return queued;
        }

        @Override
        public String enqueue(String kind, String traceIdOrNull, String paramsJsonOrNull, java.time.Instant now) {
            return store.queue().enqueue(kind, traceIdOrNull, paramsJsonOrNull, now);
        }
    }

    private WorkerPool pool(JobHandler handler, int workers, Duration grace) {
        return new WorkerPool(store.queue(), handler, workers, fx.clock, IDLE_POLL, registry, grace, STUCK_AFTER);
    }

    private Submission submit(String unit) throws Exception {
        return store.traces().submitTrace(StoreFixture.trace(unit), null, ROOMY, fx.clock.instant());
    }

    private void submitAndWake(WorkerPool pool, String unit, int count) {
        try {
            for (int i = 0; i < count; i++) {
                submit(unit);
                pool.wake();
            }
        } catch (Exception e) {
            throw new AssertionError("submission failed", e);
        }
    }

    private long timerCount(String kind, String outcome) {
        return registry.get(JobMetrics.JOB_DURATION).tag("kind", kind).tag("outcome", outcome).timer().count();
    }

    private static NewEstimate estimateFor(TraceRow trace) {
        return StoreFixture.estimate(trace.id(), trace.unitId(), trace.family(), trace.version(), List.of(), "{}");
    }
}
