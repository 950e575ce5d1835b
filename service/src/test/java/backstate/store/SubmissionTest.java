package backstate.store;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.sql.SQLException;
import java.util.List;
import org.junit.jupiter.api.Test;

class SubmissionTest extends StoreContractTestBase {

    private static final int ROOMY = 100;



    @Test
    void a_submission_stores_the_trace_and_queues_one_estimate_job() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-7"), null, ROOMY, StoreFixture.T0);

        assertFalse(s.replayed());
        TraceRow trace = store.traces().findTrace(s.traceId()).orElseThrow();
        assertEquals(List.of("unit-7", "pump", 1, StoreFixture.T0, 3, 0.0, 2.0),
                List.of(trace.unitId(), trace.family(), trace.version(), trace.receivedAt(), trace.samples(),
                        trace.windowStart(), trace.windowEnd()));
        assertArrayEquals("unit-7".getBytes(StandardCharsets.UTF_8), trace.payload());
        JobRow job = store.jobs().findJob(s.jobId()).orElseThrow();
        assertEquals(new JobRow(s.jobId(), "estimate", "queued", s.traceId(), null, null, 0, StoreFixture.T0,
                null, null, List.of(), 0, 0, null), job);
    }

    @Test
    void retried_submit_with_same_key_returns_first_job() throws Exception {
        Submission first = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0);
        Submission retry = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0.plusSeconds(3));

        assertEquals(new Submission(first.traceId(), first.jobId(), true), retry);
        assertEquals(List.of(1L, 1L, 1L), List.of(fx.rows("traces"), fx.rows("jobs"), fx.rows("idempotency_keys")));
    }

    @Test
    void the_same_key_with_another_request_is_refused_and_writes_nothing() throws Exception {
        Submission first = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0);
        IdempotencyKeyReusedException e = assertThrows(IdempotencyKeyReusedException.class,
                () -> store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1", "another body"), ROOMY,
                        StoreFixture.T0.plusSeconds(3)));
        assertEquals("key-1", e.key());
        assertEquals(List.of(1L, 1L, 1L), List.of(fx.rows("traces"), fx.rows("jobs"), fx.rows("idempotency_keys")));
        assertEquals(new Submission(first.traceId(), first.jobId(), true), store.traces().submitTrace(StoreFixture.trace("unit-7"),
                StoreFixture.key("key-1"), ROOMY, StoreFixture.T0.plusSeconds(6)), "the first request still replays");
    }

    @Test
    void a_key_kept_before_fingerprints_replays_whatever_the_request() throws Exception {
        Submission first = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0);
        try (java.sql.Connection c = fx.raw(); java.sql.Statement st = c.createStatement()) {
            st.executeUpdate("UPDATE idempotency_keys SET fingerprint = NULL"); // as V9 leaves rows from before it
        }
        Submission retry = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1", "another body"), ROOMY,
                StoreFixture.T0.plusSeconds(3));
        assertEquals(new Submission(first.traceId(), first.jobId(), true), retry);
    }

    @Test
    void the_same_key_from_another_unit_is_a_new_submission() throws Exception {
        Submission first = store.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0);
        Submission other = store.traces().submitTrace(StoreFixture.trace("unit-8"), StoreFixture.key("key-1"), ROOMY, StoreFixture.T0);

        assertFalse(other.replayed());
        assertNotEquals(first.jobId(), other.jobId());
        assertEquals(2, fx.rows("jobs"));
    }

    @Test
    void a_full_queue_refuses_with_the_queued_count_and_writes_nothing() throws Exception {
        store.traces().submitTrace(StoreFixture.trace("unit-1"), null, 2, StoreFixture.T0);
        store.traces().submitTrace(StoreFixture.trace("unit-2"), null, 2, StoreFixture.T0);

        QueueFullException e = assertThrows(QueueFullException.class,
                () -> store.traces().submitTrace(StoreFixture.trace("unit-3"), StoreFixture.key("key-3"), 2, StoreFixture.T0));
        assertEquals(2, e.queued());
        assertEquals(List.of(2L, 2L, 0L), List.of(fx.rows("traces"), fx.rows("jobs"), fx.rows("idempotency_keys")));
    }

    @Test
    void a_replay_is_answered_even_when_the_queue_is_full() throws Exception {
        Submission first = store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("key-1"), 1, StoreFixture.T0);
        assertEquals(first.jobId(), store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("key-1"), 1, StoreFixture.T0).jobId());
    }

    @Test
    void claimed_jobs_no_longer_count_against_the_queue_limit() throws Exception {
        store.traces().submitTrace(StoreFixture.trace("unit-1"), null, 1, StoreFixture.T0);
        store.queue().claimNext(1, StoreFixture.T0);
        assertTrue(store.traces().submitTrace(StoreFixture.trace("unit-2"), null, 1, StoreFixture.T0).jobId() != null);
        assertEquals(1, store.queue().queuedCount());
    }

    @Test
    void a_trace_for_an_unpublished_version_is_refused_and_writes_nothing() throws SQLException {
        NewTrace trace = new NewTrace("unit-1", "pump", 4, 3, 0.0, 2.0, new byte[] {1});
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> store.traces().submitTrace(trace, StoreFixture.key("key-1"), ROOMY, StoreFixture.T0));
        assertEquals("got model pump version 4, expected a published version", e.getMessage());
        assertEquals(0, fx.rows("traces") + fx.rows("jobs") + fx.rows("idempotency_keys"));
    }

    @Test
    void an_inverted_window_is_refused_with_both_bounds() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> new NewTrace("unit-1", "pump", 1, 3, 2.0, 1.0, new byte[0]));
        assertEquals("got window [2.0, 1.0], expected finite bounds with start <= end", e.getMessage());
    }
}
