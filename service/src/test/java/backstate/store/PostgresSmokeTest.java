package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.util.List;
import org.junit.jupiter.api.Test;

/** The PostgreSQL store takes a trace, queues its job, and a claim and completion write one estimate. */
class PostgresSmokeTest {

    @Test
    void a_trace_is_stored_claimed_and_completed_once_on_postgresql() throws Exception {
        TestClock clock = new TestClock(StoreFixture.T0);
        try (PostgresDatabase db = new PostgresDatabase(PostgresServer.settings(PostgresServer.newDatabase()), clock)) {
            StoreFixture.publishPump(db);
            Submission s = db.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k1"), 10, StoreFixture.T0);
            Submission replay = db.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k1"), 10, StoreFixture.T0);
            assertEquals(List.of(s.traceId(), s.jobId(), true), List.of(replay.traceId(), replay.jobId(), replay.replayed()));
            assertEquals(1, db.queue().queuedCount());
            List<ClaimedJob> claimed = db.queue().claimNext(4, StoreFixture.T0);
            assertEquals(1, claimed.size());
            ClaimedJob job = claimed.get(0);
            assertTrue(db.queue().completeIfRunning(job.id(), job.attempt(), StoreFixture.estimate(s.traceId(), "unit-1",
                    StoreFixture.FAMILY, StoreFixture.VERSION, List.of("model_mismatch"), "{}"), "{}", StoreFixture.T0));
            assertEquals("succeeded", db.jobs().findJob(job.id()).orElseThrow().state());
            assertEquals(job.id(), db.estimates().latestEstimate("unit-1").orElseThrow().jobId());
            assertTrue(db.isReachable());
        }
    }
}
