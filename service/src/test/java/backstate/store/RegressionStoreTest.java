package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/**
 * The regression statements: trace selection by unit, recording window, received time and
 * recency of recording; runs, their list, cancel requests.
 */
class RegressionStoreTest extends StoreContractTestBase {
    static final Instant T1 = StoreFixture.T0.plus(Duration.ofHours(1));
    static final Instant T2 = StoreFixture.T0.plus(Duration.ofHours(2));

    String a0;
    String a1;
    String a2;
    String b1;
    /** Unit A's earliest recording (T0 − 1 h), uploaded last (T2 + 1 h). */
    String late;

    @BeforeEach
    void seed() throws Exception {
        fx.store.models().publishVersion(StoreFixture.pumpVersion(), StoreFixture.T0); // version 2
        a0 = submit("A", StoreFixture.T0, StoreFixture.T0);
        a1 = submit("A", T1, T1);
        b1 = submit("B", T1, T1);
        a2 = submit("A", T2, T2);
        late = submit("A", StoreFixture.T0.minus(Duration.ofHours(1)), T2.plus(Duration.ofHours(1)));
    }

    /** A trace recorded from {@code recorded} for 2 s and received at {@code received}. */
    String submit(String unit, Instant recorded, Instant received) throws QueueFullException {
        double start = recorded.getEpochSecond();
        return fx.store.traces().submitTrace(new NewTrace(unit, StoreFixture.FAMILY, StoreFixture.VERSION, 3, start, start + 2,
                new byte[] {1}), null, 1000, received).traceId();
    }

    List<String> select(List<String> units, TimeFilter times, Integer latest, int maxRows) {
        return fx.store.regressions().selectTraces(new TraceSelection(StoreFixture.FAMILY, units, times, latest, maxRows))
                .stream().map(TraceRef::id).toList();
    }

    @Test
    void selection_orders_by_unit_then_recording_time() {
        assertEquals(List.of(late, a0, a1, a2, b1), select(null, TimeFilter.NONE, null, 100));
        assertEquals(List.of(late, a0), select(null, TimeFilter.NONE, null, 2));
        assertEquals(List.of(b1), select(List.of("B", "C"), TimeFilter.NONE, null, 100));
        assertEquals(List.of(), fx.store.regressions().selectTraces(new TraceSelection("other", null, TimeFilter.NONE, null, 100)));
    }

    @Test
    void latest_k_per_unit_are_the_newest_recordings_within_the_window() {
        assertEquals(List.of(a1, a2, b1), select(null, TimeFilter.NONE, 2, 100));
        assertEquals(List.of(a2, b1), select(null, TimeFilter.NONE, 1, 100));
        // The window [T0, T2) is applied first: A's latest recording inside it is a1.
        assertEquals(List.of(a1, b1), select(null, TimeFilter.recorded(StoreFixture.T0, T2), 1, 100));
        assertEquals(List.of(a1, b1), select(null, TimeFilter.recorded(T1, T2), null, 100));
    }

    @Test
    void received_time_selects_the_late_upload_in_its_recording_place() {
        assertEquals(List.of(late, a2), select(null, TimeFilter.received(T2, null), null, 100));
        assertEquals(List.of(a2), select(null, TimeFilter.received(T2, null), 1, 100));
        assertEquals(List.of(late), select(null, new TimeFilter(null, StoreFixture.T0, T2, null), null, 100));
    }

    @Test
    void a_full_queue_refuses_a_run_and_writes_nothing() throws Exception {
        long jobs = fx.rows("jobs");
        assertThrows(QueueFullException.class, () -> fx.store.regressions().createRegression(run(), 4, T2));
        assertEquals(jobs, fx.rows("jobs"));
        assertEquals(0, fx.rows("regressions"));
    }

    @Test
    void cancel_request_is_kept_for_queued_and_running_runs_only() throws Exception {
        String id = fx.store.regressions().createRegression(run(), 1000, T2);
        assertFalse(fx.store.regressions().regressionCancelRequested(id));
        ClaimedJob job = fx.store.queue().claimNext(100, T2).stream().filter(j -> j.id().equals(id)).findFirst().orElseThrow();
        assertTrue(fx.store.regressions().requestRegressionCancel(id, T2));
        assertTrue(fx.store.regressions().regressionCancelRequested(id));
        assertFalse(fx.store.regressions().cancelRegressionIfRunning(id, job.attempt() + 1, "{}", T2), "another attempt's");
        assertTrue(fx.store.regressions().cancelRegressionIfRunning(id, job.attempt(), "{\"complete\":false}", T2));
        RegressionRow row = fx.store.regressions().findRegression(id).orElseThrow();
        assertEquals("cancelled", row.state());
        assertEquals(T2, row.cancelRequestedAtOrNull());
        assertNull(row.passOrNull());
        assertEquals("{\"complete\":false}", fx.store.jobs().findJob(id).orElseThrow().resultJson());
        assertFalse(fx.store.regressions().requestRegressionCancel(id, T2), "a finished run takes no cancel request");
        assertFalse(fx.store.regressions().findRegression(a0).isPresent(), "a trace ID is not a run");
    }

    @Test
    void runs_list_newest_first_with_the_verdict_read_from_the_result() throws Exception {
        String older = fx.store.regressions().createRegression(run(), 1000, T1);
        String newer = fx.store.regressions().createRegression(run(), 1000, T2);
        ClaimedJob job = fx.store.queue().claimNext(100, T2).stream().filter(j -> j.id().equals(older)).findFirst().orElseThrow();
        assertTrue(fx.store.queue().completeIfRunning(older, job.attempt(), null, "{\"verdict\":{\"pass\":true}}", T2));
        RegressionPage first = fx.store.regressions().listRegressions(StoreFixture.FAMILY, null, 1);
        assertEquals(List.of(newer), ids(first));
        RegressionPage second = fx.store.regressions().listRegressions(StoreFixture.FAMILY, first.nextCursorOrNull(), 1);
        assertEquals(List.of(older), ids(second));
        assertEquals(Boolean.TRUE, second.items().get(0).passOrNull());
        assertNull(second.nextCursorOrNull());
        assertEquals(List.of(), ids(fx.store.regressions().listRegressions("other", null, 10)));
        assertThrows(InvalidCursorException.class, () -> fx.store.regressions().listRegressions(null, "!!", 10));
    }

    static NewRegression run() {
        return new NewRegression(StoreFixture.FAMILY, 1, 2, "{}");
    }

    static List<String> ids(RegressionPage page) {
        List<String> ids = new ArrayList<>();
        page.items().forEach(r -> ids.add(r.id()));
        return ids;
    }
}
