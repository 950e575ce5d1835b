package backstate.store;

import backstate.jobs.NewEstimate;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.nio.file.Path;
import java.sql.SQLException;
import java.util.List;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * After SQLite's own harness: fail the Nth storage call for N = 1, 2, ... until the operation
 * succeeds, and after each failure check that the caller got "disk full" and that the database
 * holds all of the operation or none of it.
 */
class FaultLoopTest {

    /** Far more storage calls than any one operation makes: the loop must end well before. */
    private static final int MAX_CALLS = 50;

    @TempDir
    Path dir;
    FaultInjector faults = new FaultInjector();
    StoreFixture fx;
    SqliteDatabase store;

    @BeforeEach
    void open() {
        fx = new StoreFixture(dir);
        fx.close();
        store = new SqliteDatabase(fx.file, fx.clock, SqliteSettings.defaults(), faults::wrap);
    }

    @AfterEach
    void close() {
        store.close();
    }

    @Test
    void a_submission_failing_at_any_call_writes_nothing_and_then_succeeds_once() throws Exception {
        int failures = 0;
        for (int n = 1; n <= MAX_CALLS; n++) {
            faults.failCall(n);
            try {
                store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("key-1"), 10, StoreFixture.T0);
            } catch (StoreUnavailableException e) {
                assertFailedCleanly(e);
                assertEquals(List.of(0L, 0L, 0L), counts());
                failures++;
                continue;
            }
            assertFalse(faults.failedSinceArmed());
            break;
        }
        assertEquals(10, failures,
                "BEGIN, SAVEPOINT, key lookup, queue count, version lookup, 3 inserts, RELEASE, COMMIT");
        assertEquals(List.of(1L, 1L, 1L), counts());
        faults.failCall(0);
        assertTrue(store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("key-1"), 10, StoreFixture.T0).replayed());
    }

    @Test
    void a_completion_failing_at_any_call_leaves_the_job_running_and_then_writes_one_estimate() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-1"), null, 10, StoreFixture.T0);
        ClaimedJob job = store.queue().claimNext(1, StoreFixture.T0).get(0);
        NewEstimate estimate = StoreFixture.estimate(s.traceId(), "unit-1", "pump", 1, List.of(), FleetStoreTest.DOCUMENT);
        int failures = 0;
        for (int n = 1; n <= MAX_CALLS; n++) {
            faults.failCall(n);
            try {
                assertTrue(store.queue().completeIfRunning(job.id(), job.attempt(), estimate, "{}", StoreFixture.T0));
            } catch (StoreUnavailableException e) {
                assertFailedCleanly(e);
                assertEquals("running", store.jobs().findJob(job.id()).orElseThrow().state());
                assertEquals(0, fx.rows("estimates"));
                assertEquals(0, fx.rows("unit_latest") + fx.rows("unit_version_latest") + fx.rows("estimate_states")
                        + fx.rows("estimate_channels") + fx.rows("fleet_unit_estimates") + fx.rows("fleet_chi2_bins")
                        + fx.rows("fleet_rms_bins"));
                failures++;
                continue;
            }
            break;
        }
        assertEquals(16, failures, "BEGIN, SAVEPOINT, job update, estimate insert, 2 state rows, 2 channel rows"
                + " with their 2 RMS-bin upserts, 2 newest-estimate upserts, the unit-total and χ²-bin upserts, RELEASE, COMMIT");
        assertEquals("succeeded", store.jobs().findJob(job.id()).orElseThrow().state());
        assertEquals(List.of(1L, 2L, 2L), List.of(fx.rows("estimates"), fx.rows("estimate_states"),
                fx.rows("estimate_channels")));
    }

    @Test
    void a_claim_failing_at_any_call_claims_nothing_and_then_claims_the_job_once() throws Exception {
        store.traces().submitTrace(StoreFixture.trace("unit-1"), null, 10, StoreFixture.T0);
        int failures = 0;
        List<ClaimedJob> claimed = List.of();
        for (int n = 1; n <= MAX_CALLS && claimed.isEmpty(); n++) {
            faults.failCall(n);
            try {
                claimed = store.queue().claimNext(1, StoreFixture.T0);
            } catch (StoreUnavailableException e) {
                assertFailedCleanly(e);
                assertEquals(1, store.queue().queuedCount());
                failures++;
            }
        }
        assertEquals(5, failures, "BEGIN, SAVEPOINT, claim, RELEASE, COMMIT");
        assertEquals(1, claimed.get(0).attempt());
    }

    private void assertFailedCleanly(StoreUnavailableException e) throws SQLException {
        assertEquals("disk full", e.reason());
        assertTrue(faults.failedSinceArmed());
        assertEquals("ok", fx.integrityCheck());
    }

    private List<Long> counts() throws SQLException {
        return List.of(fx.rows("traces"), fx.rows("jobs"), fx.rows("idempotency_keys"));
    }
}
