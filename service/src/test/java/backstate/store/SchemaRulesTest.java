package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.SQLException;
import java.sql.Statement;
import org.junit.jupiter.api.Test;

/**
 * The rules the schema itself enforces, behind the store's back, on both engines: job CHECKs,
 * immutable model versions and API keys, one estimate per job. Each write below goes through a
 * raw connection and must be refused by a rule: on SQLite a constraint (result code
 * SQLITE_CONSTRAINT, 19, https://sqlite.org/rescode.html), on PostgreSQL an integrity violation
 * (SQLSTATE class 23), a trigger's RAISE EXCEPTION (P0001) or a value of the wrong type (class 22),
 * per the PostgreSQL manual, appendix A. A syntax error in the test's own SQL fails the test.
 */
class SchemaRulesTest extends StoreContractTestBase {

    private static final int SQLITE_CONSTRAINT = 19;
    private static final int PRIMARY_CODE_MASK = 0xFF;

    @Test
    void finished_at_on_a_queued_job_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, finished_at)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, 2)");
    }

    @Test
    void a_succeeded_job_without_finished_at_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at)"
                + " VALUES ('j', 'regression', 'succeeded', 1, 1, 2)");
    }

    @Test
    void a_running_job_without_started_at_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at)"
                + " VALUES ('j', 'regression', 'running', 1, 1)");
    }

    @Test
    void an_unknown_job_state_or_kind_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'regression', 'paused', 0, 1)");
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'train', 'queued', 0, 1)");
    }

    @Test
    void an_estimate_job_without_a_trace_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'estimate', 'queued', 0, 1)");
    }

    @Test
    void progress_beyond_its_total_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, progress_done, progress_total)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, 5, 4)");
    }

    @Test
    void errors_that_are_not_a_json_array_are_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, errors)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, '\"boom\"')");
    }

    /** Failure details only on a failed job, and only valid JSON. */
    @Test
    void failure_details_on_a_job_that_did_not_fail_or_that_are_not_json_are_rejected() throws SQLException {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, failure_json)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, '{}')");
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{not json')");
        execute("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{\"unobservableDirections\":[]}')");
        assertEquals(1, fx.count("SELECT count(*) FROM jobs WHERE id = 'j'"));
    }

    /** A request fingerprint is a SHA-256, 32 bytes. */
    @Test
    void a_fingerprint_that_is_not_32_bytes_is_rejected() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k"), 10, StoreFixture.T0);
        assertRejected("UPDATE idempotency_keys SET fingerprint = ? WHERE job_id = ?", new byte[1], s.jobId());
    }

    @Test
    void a_text_where_an_integer_belongs_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at)"
                + " VALUES ('j', 'regression', 'queued', 'zero', 1)");
    }

    @Test
    void a_published_version_cannot_be_edited_or_unretired() throws SQLException {
        assertRejected("UPDATE model_versions SET states = 3 WHERE family = 'pump'");
        assertTrue(store.models().retireVersion(StoreFixture.FAMILY, StoreFixture.VERSION));
        assertRejected("UPDATE model_versions SET status = 'active' WHERE family = 'pump'");
        assertEquals("retired", store.models().findVersion(StoreFixture.FAMILY, StoreFixture.VERSION).orElseThrow().status());
        assertEquals(2, store.models().findVersion(StoreFixture.FAMILY, StoreFixture.VERSION).orElseThrow().states());
    }

    @Test
    void an_api_key_cannot_be_edited_and_a_revoked_key_stays_revoked() throws SQLException {
        assertTrue(store.keys().insertApiKey(ApiKeyStoreTest.key("admin-key-000001", "admin"), StoreFixture.T0));
        assertTrue(store.keys().insertApiKey(ApiKeyStoreTest.key("reader-key-00001", "reader"), StoreFixture.T0));
        assertRejected("UPDATE api_keys SET role = 'admin' WHERE id = 'reader-key-00001'");
        assertRejected("UPDATE api_keys SET label = 'renamed' WHERE id = 'reader-key-00001'");
        execute("UPDATE api_keys SET revoked_at = 5 + created_at WHERE id = 'reader-key-00001'");
        assertRejected("UPDATE api_keys SET revoked_at = NULL WHERE id = 'reader-key-00001'");
        assertRejected("UPDATE api_keys SET revoked_at = revoked_at + 1 WHERE id = 'reader-key-00001'");
        assertEquals(StoreFixture.T0.plusMillis(5),
                store.keys().findApiKey("reader-key-00001").orElseThrow().revokedAt());
    }

    @Test
    void a_second_estimate_for_one_job_is_rejected() throws SQLException {
        execute("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'regression', 'queued', 0, 1)");
        execute("INSERT INTO traces VALUES ('t', 'u', 'pump', 1, 1, 3, 0.0, 1.0, ?)", new byte[] {0});
        execute(estimateInsert("e1"));
        assertRejected(estimateInsert("e2"));
        assertEquals(1, fx.rows("estimates"));
    }

    private static String estimateInsert(String id) {
        return "INSERT INTO estimates (id, job_id, trace_id, unit_id, family, version, created_at, window_start,"
                + " window_end, flags, summary_json) VALUES ('" + id + "', 'j', 't', 'u', 'pump', 1, 1, 0.0, 1.0, '', '{}')";
    }

    private void execute(String sql, Object... params) throws SQLException {
        try (Connection c = fx.raw(); PreparedStatement ps = Sql.bind(c.prepareStatement(sql), params)) {
            ps.execute();
        }
    }

    private void assertRejected(String sql, Object... params) {
        SQLException e = assertThrows(SQLException.class, () -> execute(sql, params), sql);
        assertTrue(refusedByARule(e), backend + " refused " + sql + " with " + e.getSQLState() + "/" + e.getErrorCode()
                + ": " + e.getMessage() + ", expected a rule of the schema");
    }

    private boolean refusedByARule(SQLException e) {
        if (backend == Backend.SQLITE) {
            return (e.getErrorCode() & PRIMARY_CODE_MASK) == SQLITE_CONSTRAINT;
        }
        String state = e.getSQLState();
        return state.startsWith("23") || state.startsWith("22") || state.equals("P0001");
    }
}
