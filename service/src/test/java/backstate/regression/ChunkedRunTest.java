package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.store.JobRow;
import backstate.store.SqliteDatabase;
import backstate.store.StoreFixture;
import backstate.store.TestClock;
import com.fasterxml.jackson.databind.JsonNode;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A run over the 20 demo traces split 3 traces a chunk (7 chunks of 2 or 3), on SQLite, its jobs
 * worked by hand in a fixed order rather than by timing: the run's job in the test thread, and,
 * where a test says so, chunk jobs "on another worker" from inside the run's progress writes.
 * The reference for every result is the same request run in one piece by the same code path
 * that ran before chunks existed (RegressionRunTest checks that one against numpy).
 */
class ChunkedRunTest {
    static final int PER_CHUNK = 3;
    static final int CHUNKS = 7;

    TestClock clock = new TestClock(StoreFixture.T0);
    Path file;
    DemoRuns demo;

    @BeforeEach
    void start(@TempDir Path dir) throws Exception {
        file = dir.resolve("test.db");
        demo = new DemoRuns(new SqliteDatabase(file, clock), clock);
    }

    @AfterEach
    void stop() {
        demo.close();
    }

    @Test
    void a_run_split_into_chunks_gives_the_result_of_the_run_in_one_piece_field_for_field() throws Exception {
        JsonNode reference = demo.resultInOnePiece();
        String id = demo.startRun();
        ClaimedJob job = demo.claim(id);
        List<String> byWorker = new ArrayList<>();
        // At the run's first progress past 0 (it has queued its chunks and is doing one), "another
        // worker" does two of the others.
        RegressionJobHandler run = withAnotherWorker(id, 2, byWorker);

        JobOutcome.Succeeded done = assertInstanceOf(JobOutcome.Succeeded.class, run.handle(job));
        assertTrue(demo.store.queue().completeIfRunning(id, job.attempt(), null, done.resultJsonOrNull(), clock.instant()));

        assertEquals(2, byWorker.size());
        List<JobRow> chunks = demo.chunks(id, PER_CHUNK);
        assertEquals(CHUNKS, chunks.size());
        for (JobRow chunk : chunks) {
            // Done by the worker: succeeded with its comparisons; taken back by the run: cancelled, done there.
            assertEquals(byWorker.contains(chunk.id()) ? "succeeded" : "cancelled", chunk.state(), chunk.id());
        }
        JsonNode result = demo.run(id).get("result");
        assertEquals(reference, result);
        assertEquals(DemoRuns.TRACES, result.get("tracesDone").asInt());
        assertFalse(result.get("verdict").get("pass").asBoolean(), "v2 is worse on the demo fleet (RegressionRunTest)");
    }

    /** Chunks finished elsewhere between two of the run's progress writes still bring its progress to the total. */
    @Test
    void a_run_whose_last_chunks_finish_on_other_workers_ends_with_its_progress_at_the_total() throws Exception {
        String id = demo.startRun();
        ClaimedJob job = demo.claim(id);
        List<String> byWorker = new ArrayList<>();
        RegressionJobHandler run = withAnotherWorker(id, CHUNKS, byWorker);

        JobOutcome.Succeeded done = assertInstanceOf(JobOutcome.Succeeded.class, run.handle(job));
        assertTrue(demo.store.queue().completeIfRunning(id, job.attempt(), null, done.resultJsonOrNull(), clock.instant()));

        assertEquals(CHUNKS - 1, byWorker.size(), "every chunk but the run's own was done elsewhere");
        JsonNode row = demo.run(id);
        assertEquals(DemoRuns.TRACES, row.get("result").get("tracesDone").asInt());
        assertEquals(DemoRuns.TRACES, row.get("progress").get("done").asInt(), row.get("progress").toString());
    }

    /** The run's handler, with "another worker" doing up to {@code chunks} queued chunks at the run's first progress past 0. */
    private RegressionJobHandler withAnotherWorker(String id, int chunks, List<String> byWorker) {
        return demo.handler(demo.watching((jobId, done) -> {
            if (jobId.equals(id) && byWorker.isEmpty() && done > 0) {
                for (ClaimedJob chunk : demo.store.queue().claimNext(chunks, clock.instant())) {
                    byWorker.add(chunk.id());
                    assertInstanceOf(JobOutcome.Succeeded.class, demo.work(demo.handler(demo.store.queue(), PER_CHUNK), chunk));
                }
            }
        }), PER_CHUNK);
    }

    /** While the run does its own chunk, chunks finished elsewhere count in its progress at the next read (a poll later). */
    @Test
    void a_run_doing_its_own_chunk_counts_the_chunks_finished_elsewhere_as_they_finish() throws Exception {
        String id = demo.startRun();
        ClaimedJob job = demo.claim(id);
        List<String> byWorker = new ArrayList<>();
        List<Integer> progress = new ArrayList<>();
        RegressionJobHandler run = demo.handler(demo.watching((jobId, done) -> {
            if (!jobId.equals(id)) {
                return;
            }
            progress.add(done);
            if (byWorker.isEmpty() && done > 0) {
                for (ClaimedJob chunk : demo.store.queue().claimNext(CHUNKS, clock.instant())) {
                    byWorker.add(chunk.id());
                    assertInstanceOf(JobOutcome.Succeeded.class, demo.work(demo.handler(demo.store.queue(), PER_CHUNK), chunk));
                }
                clock.advance(java.time.Duration.ofSeconds(1)); // past the run's poll interval (20 ms here)
            }
        }), PER_CHUNK);

        assertInstanceOf(JobOutcome.Succeeded.class, run.handle(job));
        assertEquals(CHUNKS - 1, byWorker.size());
        // The write after the other chunks finished (its own chunk's next trace) already holds their traces:
        // more than its own chunk's at most 3 (before, it was 2, and the rest came at the chunk's end).
        assertEquals(List.of(0, 1), progress.subList(0, 2));
        assertTrue(progress.get(2) > PER_CHUNK, "progress " + progress);
        assertEquals(DemoRuns.TRACES, progress.get(progress.size() - 1));
    }

    @Test
    void progress_rises_to_the_total_and_never_falls() throws Exception {
        String id = demo.startRun();
        ClaimedJob job = demo.claim(id);
        List<Integer> progress = new ArrayList<>();
        RegressionJobHandler run = demo.handler(demo.watching((jobId, done) -> {
            if (jobId.equals(id)) {
                progress.add(done);
            }
        }), PER_CHUNK);

        JobOutcome.Succeeded done = assertInstanceOf(JobOutcome.Succeeded.class, run.handle(job));
        demo.store.queue().completeIfRunning(id, job.attempt(), null, done.resultJsonOrNull(), clock.instant());

        assertEquals(0, progress.get(0));
        assertEquals(DemoRuns.TRACES, progress.get(progress.size() - 1));
        for (int i = 1; i < progress.size(); i++) {
            assertTrue(progress.get(i) > progress.get(i - 1), "progress " + progress);
        }
        assertEquals(DemoRuns.TRACES + 1, progress.size(), "one write per trace: 20 traces are under 200 writes");
        JsonNode row = demo.run(id);
        assertEquals("succeeded", row.get("state").asText());
        assertEquals(DemoRuns.TRACES, row.get("progress").get("done").asInt());
    }

    @Test
    void a_cancel_mid_run_leaves_the_run_cancelled_and_no_chunk_queued_or_running() throws Exception {
        String id = demo.startRun();
        ClaimedJob job = demo.claim(id);
        ClaimedJob[] heldElsewhere = new ClaimedJob[1];
        RegressionJobHandler run = demo.handler(demo.watching((jobId, done) -> {
            if (jobId.equals(id) && done == 5 && heldElsewhere[0] == null) {
                // Another worker holds a chunk it has not started when the cancel comes.
                heldElsewhere[0] = demo.store.queue().claimNext(1, clock.instant()).get(0);
                assertEquals("running", demo.cancel(id, 202).get("state").asText());
            }
        }), PER_CHUNK);

        JobOutcome.Failed outcome = assertInstanceOf(JobOutcome.Failed.class, run.handle(job));

        assertEquals("cancelled on request after 5 of 20 traces", outcome.error());
        JsonNode cancelled = demo.run(id);
        assertEquals("cancelled", cancelled.get("state").asText());
        assertFalse(cancelled.get("result").get("complete").asBoolean());
        assertEquals(5, cancelled.get("result").get("tracesDone").asInt());
        assertFalse(cancelled.get("result").has("verdict"));
        for (JobRow chunk : demo.chunks(id, PER_CHUNK)) {
            assertTrue(Set.of("succeeded", "cancelled").contains(chunk.state()), chunk.id() + " is " + chunk.state());
        }
        assertEquals(0, demo.store.queue().queuedCount());
        // The worker holding a chunk starts it late: it stops at once, and the chunk stays cancelled.
        JobOutcome late = demo.work(demo.handler(demo.store.queue(), PER_CHUNK), heldElsewhere[0]);
        assertInstanceOf(JobOutcome.Failed.class, late);
        assertEquals("cancelled", demo.store.jobs().findJob(heldElsewhere[0].id()).orElseThrow().state());
    }

    @Test
    void a_run_reclaimed_after_its_worker_died_queues_no_chunk_twice_and_gives_the_same_result() throws Exception {
        JsonNode reference = demo.resultInOnePiece();
        String id = demo.startRun();
        ClaimedJob first = demo.claim(id);
        clock.advance(Duration.ofSeconds(1)); // the chunks are queued after the run, so it is claimed first again
        String[] byWorker = new String[1];
        RegressionJobHandler dying = demo.handler(demo.watching((jobId, done) -> {
            if (jobId.equals(id) && byWorker[0] == null && done > 0) {
                ClaimedJob chunk = demo.store.queue().claimNext(1, clock.instant()).get(0);
                byWorker[0] = chunk.id();
                demo.work(demo.handler(demo.store.queue(), PER_CHUNK), chunk);
            }
            if (jobId.equals(id) && done >= 8) {
                throw new IllegalStateException("simulated kill -9 of the run's worker");
            }
        }), PER_CHUNK);
        assertThrows(IllegalStateException.class, () -> dying.handle(first));
        JobRow doneByWorker = demo.store.jobs().findJob(byWorker[0]).orElseThrow();

        // Nobody renews the dead worker's lease: once it runs out, the run goes back to the queue.
        clock.advance(Duration.ofSeconds(31));
        assertTrue(demo.store.queue().rescueExpiredLeases(clock.instant()) >= 1);
        ClaimedJob second = demo.store.queue().claimNext(1, clock.instant()).get(0);
        assertEquals(id, second.id());
        assertEquals(2, second.attempt());
        JobOutcome.Succeeded done = assertInstanceOf(JobOutcome.Succeeded.class,
                demo.handler(demo.store.queue(), PER_CHUNK).handle(second));
        assertTrue(demo.store.queue().completeIfRunning(id, second.attempt(), null, done.resultJsonOrNull(),
                clock.instant()));

        // The chunks of both attempts are the same 7 jobs; the one a worker finished is not done again.
        assertEquals(CHUNKS, demo.chunks(id, PER_CHUNK).size());
        assertEquals(CHUNKS + 2, countRegressionJobs(), "the two runs' jobs and the 7 chunks");
        JobRow stillDone = demo.store.jobs().findJob(byWorker[0]).orElseThrow();
        assertEquals("succeeded", stillDone.state());
        assertEquals(doneByWorker.finishedAt(), stillDone.finishedAt());
        assertEquals(1, stillDone.attempt());
        assertEquals(reference, demo.run(id).get("result"));
    }

    /** Counted by SQLite itself, behind the store's back. */
    private long countRegressionJobs() throws Exception {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath());
             ResultSet rs = c.createStatement().executeQuery("SELECT COUNT(*) FROM jobs WHERE kind = 'regression'")) {
            rs.next();
            return rs.getLong(1);
        }
    }
}
