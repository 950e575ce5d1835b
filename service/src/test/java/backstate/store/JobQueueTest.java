package backstate.store;

import backstate.jobs.NewEstimate;
import static java.util.stream.Collectors.toSet;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;

class JobQueueTest extends StoreContractTestBase {

    private static final int ROOMY = 100;
    private static final Instant T1 = StoreFixture.T0.plusSeconds(10);
    private static final Instant T2 = StoreFixture.T0.plusSeconds(20);
    private static final Instant T3 = StoreFixture.T0.plusSeconds(30);



    @Test
    void claim_takes_the_oldest_queued_jobs_and_starts_their_first_attempt() throws Exception {
        Submission older = submit("unit-1", StoreFixture.T0);
        Submission newer = submit("unit-2", T1);
        submit("unit-3", T2);

        List<ClaimedJob> claimed = store.queue().claimNext(2, T3);

        assertEquals(Set.of(older.jobId(), newer.jobId()), claimed.stream().map(ClaimedJob::id).collect(toSet()));
        assertEquals(new ClaimedJob(older.jobId(), "estimate", older.traceId(), null, 1),
                claimed.stream().filter(j -> j.id().equals(older.jobId())).findFirst().orElseThrow());
        JobRow row = store.jobs().findJob(older.jobId()).orElseThrow();
        assertEquals(List.of("running", 1, T3), List.of(row.state(), row.attempt(), row.startedAt()));
        assertEquals(1, store.queue().queuedCount());
    }

    @Test
    void claim_on_an_empty_queue_returns_nothing() {
        assertEquals(List.of(), store.queue().claimNext(5, T1));
    }

    @Test
    void complete_writes_exactly_one_estimate_and_a_second_complete_writes_nothing() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        ClaimedJob job = store.queue().claimNext(1, T1).get(0);

        assertTrue(store.queue().completeIfRunning(job.id(), job.attempt(), estimateOf(s, "first"), "{\"ok\":1}", T2));
        assertFalse(store.queue().completeIfRunning(job.id(), job.attempt(), estimateOf(s, "second"), "{\"ok\":2}", T3));

        JobRow row = store.jobs().findJob(job.id()).orElseThrow();
        assertEquals(List.of("succeeded", T2, "{\"ok\":1}"), List.of(row.state(), row.finishedAt(), row.resultJson()));
        assertEquals(1, fx.rows("estimates"));
        EstimateRow estimate = store.estimates().latestEstimate("unit-1").orElseThrow();
        assertEquals(List.of(job.id(), s.traceId(), "first", T2),
                List.of(estimate.jobId(), estimate.traceId(), estimate.summaryJson(), estimate.createdAt()));
    }

    @Test
    void a_stale_attempt_cannot_complete_fail_or_report_progress() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        ClaimedJob first = store.queue().claimNext(1, T1).get(0);
        store.queue().rescueStuck(T2);
        ClaimedJob second = store.queue().claimNext(1, T2).get(0);
        assertEquals(2, second.attempt());

        assertFalse(store.queue().completeIfRunning(first.id(), first.attempt(), estimateOf(s, "stale"), null, T3));
        assertFalse(store.queue().failIfRunning(first.id(), first.attempt(), "stale", null, T3));
        assertFalse(store.queue().reportProgress(first.id(), first.attempt(), 1, 2));

        assertEquals(0, fx.rows("estimates"));
        JobRow row = store.jobs().findJob(first.id()).orElseThrow();
        assertEquals(List.of("running", 2, 0), List.of(row.state(), row.attempt(), row.progressDone()));
    }

    @Test
    void a_job_whose_lease_ran_out_returns_to_the_queue_and_its_late_holder_cannot_finish_it() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        ClaimedJob held = store.queue().claimNext(1, T1, T1.plusSeconds(15)).get(0);

        assertEquals(0, store.queue().rescueExpiredLeases(T1.plusSeconds(14)));
        assertEquals(1, store.queue().renewLeases(List.of(held), T1.plusSeconds(30)));
        assertEquals(0, store.queue().rescueExpiredLeases(T1.plusSeconds(29)));
        assertEquals(1, store.queue().rescueExpiredLeases(T1.plusSeconds(31)));

        JobRow row = store.jobs().findJob(held.id()).orElseThrow();
        assertEquals("queued", row.state());
        assertTrue(row.errors().get(0).startsWith("attempt 1: rescued: its lease ran out"), row.errors().toString());
        assertEquals(0, store.queue().renewLeases(List.of(held), T1.plusSeconds(60)));
        assertFalse(store.queue().completeIfRunning(held.id(), held.attempt(), estimateOf(s, "late"), null, T3));
        ClaimedJob again = store.queue().claimNext(1, T3, T3.plusSeconds(15)).get(0);
        assertEquals(List.of(held.id(), 2), List.of(again.id(), again.attempt()));
        assertTrue(store.queue().completeIfRunning(again.id(), again.attempt(), estimateOf(s, "on time"), null, T3));
        assertEquals(1, fx.rows("estimates"));
    }

    @Test
    void a_claim_refuses_a_lease_that_ends_before_it_starts() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> store.queue().claimNext(1, T1, T1));
        assertTrue(e.getMessage().contains("expected after now"), e.getMessage());
    }

    @Test
    void fail_marks_the_job_failed_and_appends_to_earlier_errors() throws Exception {
        submit("unit-1", StoreFixture.T0);
        ClaimedJob first = store.queue().claimNext(1, T1).get(0);
        assertTrue(store.queue().retryIfRunning(first.id(), first.attempt(), "disk hiccup", T1));
        ClaimedJob second = store.queue().claimNext(1, T2).get(0);

        String details = "{\"unobservableDirections\":[{\"components\":[{\"name\":\"x\",\"kind\":\"state\",\"value\":1.0}]}]}";
        assertTrue(store.queue().failIfRunning(second.id(), second.attempt(), "singular Gramian", details, T3));

        JobRow row = store.jobs().findJob(first.id()).orElseThrow();
        assertEquals(List.of("failed", 2, T3), List.of(row.state(), row.attempt(), row.finishedAt()));
        assertEquals(List.of("attempt 1: disk hiccup", "attempt 2: singular Gramian"), row.errors());
        assertEquals(details, row.failureJson(), "the failure's details are kept as given");
    }

    @Test
    void retry_requeues_until_the_attempts_run_out_then_fails() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        for (int attempt = 1; attempt <= SqliteSettings.DEFAULT_MAX_ATTEMPTS; attempt++) {
            ClaimedJob job = store.queue().claimNext(1, T1).get(0);
            assertEquals(attempt, job.attempt());
            assertTrue(store.queue().retryIfRunning(job.id(), job.attempt(), "boom " + attempt, T2));
        }
        assertEquals(List.of(), store.queue().claimNext(1, T3));
        JobRow row = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(List.of("failed", T2), List.of(row.state(), row.finishedAt()));
        assertEquals(List.of("attempt 1: boom 1", "attempt 2: boom 2", "attempt 3: boom 3"), row.errors());
    }

    @Test
    void rescue_requeues_only_jobs_started_before_the_cutoff() throws Exception {
        submit("unit-1", StoreFixture.T0);
        submit("unit-2", StoreFixture.T0);
        ClaimedJob early = store.queue().claimNext(1, T1).get(0);
        ClaimedJob late = store.queue().claimNext(1, T3).get(0);

        assertEquals(1, store.queue().rescueStuck(T2));

        JobRow rescued = store.jobs().findJob(early.id()).orElseThrow();
        assertEquals(List.of("queued", 1), List.of(rescued.state(), rescued.attempt()));
        assertEquals(List.of("attempt 1: rescued: left running by a worker that crashed, stopped or hung"),
                rescued.errors());
        assertEquals("running", store.jobs().findJob(late.id()).orElseThrow().state());
    }

    @Test
    void rescue_fails_a_job_that_has_used_all_its_attempts() throws Exception {
        submit("unit-1", StoreFixture.T0);
        for (int attempt = 1; attempt < SqliteSettings.DEFAULT_MAX_ATTEMPTS; attempt++) {
            store.queue().claimNext(1, T1);
            store.queue().rescueStuck(T2);
        }
        ClaimedJob last = store.queue().claimNext(1, T1).get(0);
        fx.clock.advance(Duration.ofMinutes(5));

        assertEquals(1, store.queue().rescueStuck(T2));

        JobRow row = store.jobs().findJob(last.id()).orElseThrow();
        assertEquals(List.of("failed", SqliteSettings.DEFAULT_MAX_ATTEMPTS, fx.clock.instant()),
                List.of(row.state(), row.attempt(), row.finishedAt()));
        assertEquals(SqliteSettings.DEFAULT_MAX_ATTEMPTS, row.errors().size());
    }

    /**
     * SQLite: one process serves a file, so a job left running when a store opens was abandoned by
     * a crash and goes back to the queue. PostgreSQL: a store opening beside another is a second
     * replica, and the first one's running job is live work that only its lease can free.
     */
    @Test
    void opening_a_store_requeues_running_jobs_on_sqlite_but_not_another_replicas_on_postgresql() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        store.queue().claimNext(1, T1);
        if (backend == Backend.SQLITE) {
            store.close(); // as a crash leaves the file
        }
        try (Database opened = fx.open()) {
            JobRow row = opened.jobs().findJob(s.jobId()).orElseThrow();
            String expected = backend == Backend.SQLITE ? "queued" : "running";
            assertEquals(List.of(expected, 1), List.of(row.state(), row.attempt()));
            assertEquals(backend == Backend.SQLITE ? 1 : 0, opened.queue().claimNext(1, T2).size());
        }
    }

    @Test
    void cancel_succeeds_only_from_queued() throws Exception {
        Submission queued = submit("unit-1", StoreFixture.T0);
        assertTrue(store.jobs().cancelIfQueued(queued.jobId(), T1));
        assertFalse(store.jobs().cancelIfQueued(queued.jobId(), T2));
        JobRow cancelled = store.jobs().findJob(queued.jobId()).orElseThrow();
        assertEquals(List.of("cancelled", T1), List.of(cancelled.state(), cancelled.finishedAt()));

        Submission running = submit("unit-2", T1);
        store.queue().claimNext(1, T2);
        assertFalse(store.jobs().cancelIfQueued(running.jobId(), T3));
        assertEquals("running", store.jobs().findJob(running.jobId()).orElseThrow().state());
        assertFalse(store.jobs().cancelIfQueued("no-such-job", T3));
    }

    @Test
    void a_cancelled_job_is_never_claimed() throws Exception {
        Submission s = submit("unit-1", StoreFixture.T0);
        store.jobs().cancelIfQueued(s.jobId(), T1);
        assertEquals(List.of(), store.queue().claimNext(1, T2));
    }

    @Test
    void progress_is_recorded_for_the_running_attempt() throws Exception {
        submit("unit-1", StoreFixture.T0);
        ClaimedJob job = store.queue().claimNext(1, T1).get(0);
        assertTrue(store.queue().reportProgress(job.id(), job.attempt(), 3, 8));
        JobRow row = store.jobs().findJob(job.id()).orElseThrow();
        assertEquals(List.of(3, 8), List.of(row.progressDone(), row.progressTotal()));
    }

    @Test
    void progress_beyond_its_total_is_a_programmer_error() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> store.queue().reportProgress("any", 1, 9, 8));
        assertEquals("got progress 9/8, expected 0 <= done <= total", e.getMessage());
    }

    /**
     * The queue length kept by V6's triggers equals COUNT(*) over the queued jobs (the closed form
     * it replaces) after every step of a seeded random walk through every way a job changes state.
     */
    @Test
    void the_kept_queue_length_equals_a_count_of_queued_jobs_after_every_change() throws Exception {
        java.util.Random random = new java.util.Random(20261202);
        List<ClaimedJob> running = new java.util.ArrayList<>();
        List<String> queued = new java.util.ArrayList<>();
        Instant now = T1;
        for (int step = 0; step < 400; step++) {
            now = now.plusSeconds(1);
            switch (random.nextInt(8)) {
                case 0 -> queued.add(submit("unit-" + random.nextInt(5), now).jobId());
                case 1 -> queued.add(store.queue().enqueue("regression", null, "{}", now));
                case 2, 3 -> running.addAll(store.queue().claimNext(1 + random.nextInt(2), now));
                case 4 -> store.jobs().cancelIfQueued(queued.isEmpty() ? "none" : queued.get(random.nextInt(queued.size())), now);
                case 5, 6 -> finishOne(running, random, now);
                default -> store.queue().rescueStuck(now.minusSeconds(random.nextInt(30)));
            }
            assertEquals(fx.count("SELECT COUNT(*) FROM jobs WHERE state = 'queued'"), store.queue().queuedCount(), "step " + step);
        }
        assertTrue(store.queue().queuedCount() > 0 && fx.count("SELECT COUNT(*) FROM jobs WHERE state <> 'queued'") > 0,
                "the walk left jobs both in and out of the queue");
    }

    /** Retries, fails or completes one claimed job (whichever attempt still holds it). */
    private void finishOne(List<ClaimedJob> running, java.util.Random random, Instant now) {
        if (running.isEmpty()) {
            return;
        }
        ClaimedJob job = running.remove(random.nextInt(running.size()));
        switch (random.nextInt(3)) {
            case 0 -> store.queue().retryIfRunning(job.id(), job.attempt(), "again", now);
            case 1 -> store.queue().failIfRunning(job.id(), job.attempt(), "no", null, now);
            default -> store.queue().completeIfRunning(job.id(), job.attempt(), null, "{}", now);
        }
    }

    @Test
    void enqueue_adds_a_regression_job_with_its_params() {
        String id = store.queue().enqueue("regression", null, "{\"suite\":\"nightly\"}", T1);
        JobRow row = store.jobs().findJob(id).orElseThrow();
        assertEquals(List.of("regression", "queued", "{\"suite\":\"nightly\"}", T1),
                List.of(row.kind(), row.state(), row.paramsJson(), row.createdAt()));
        assertNull(row.traceId());
        assertEquals(1, store.queue().queuedCount());
    }

    @Test
    void enqueue_of_an_unknown_kind_names_the_kinds_expected() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> store.queue().enqueue("train", null, null, T1));
        assertTrue(e.getMessage().startsWith("got kind 'train', expected one of "), e.getMessage());
    }

    private Submission submit(String unit, Instant at) throws QueueFullException {
        return store.traces().submitTrace(StoreFixture.trace(unit), null, ROOMY, at);
    }

    private static NewEstimate estimateOf(Submission s, String summary) {
        return StoreFixture.estimate(s.traceId(), "unit-1", "pump", 1, List.of("converged"), summary);
    }
}
