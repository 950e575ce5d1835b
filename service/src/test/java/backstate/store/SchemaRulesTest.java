package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.util.Locale;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;
import org.postgresql.util.PSQLException;
import org.postgresql.util.ServerErrorMessage;

/**
 * The rules the schema itself enforces, behind the store's back, on both engines: job CHECKs,
 * immutable model versions and API keys, one estimate per job. Each write below goes through a
 * raw connection and must be refused by the one rule the test names, not by any error:
 * <ul>
 * <li>SQLite names the rule in its message (https://sqlite.org/rescode.html): "CHECK constraint
 * failed: &lt;the CHECK's expression as written&gt;", "UNIQUE constraint failed: table.column",
 * the text of a trigger's RAISE, or, for a STRICT table, "cannot store TEXT value in INTEGER
 * column table.column" (https://sqlite.org/stricttables.html).</li>
 * <li>PostgreSQL names the violated constraint in the error's constraint field (PostgreSQL manual,
 * "Error Message Fields", and pgjdbc's ServerErrorMessage.getConstraint()). The schema's CHECKs
 * are unnamed, so PostgreSQL made up their names (jobs_check1, …) in declaration order; the test
 * matches the constraint by the table and columns it covers (pg_constraint.conkey) instead, which
 * does not change when a CHECK is added. A trigger's RAISE EXCEPTION comes as SQLSTATE P0001 with
 * its text; a value of the wrong type as 22P02 (appendix A).</li>
 * </ul>
 */
class SchemaRulesTest extends StoreContractTestBase {

    /** The rule a refusal must come from, as each engine reports it. */
    private interface Rule {
        /** A fragment of SQLite's message. */
        String sqlite();

        /** PostgreSQL's refusal, in the form {@link #postgresRule} gives it. */
        String postgres();
    }

    /** A CHECK on {@code table} over {@code columns}, written in the SQLite migration as {@code expression}. */
    private record Check(String table, String expression, Set<String> columns) implements Rule {
        public String sqlite() {
            return "CHECK constraint failed: " + expression;
        }

        public String postgres() {
            return "constraint on " + table + " " + new TreeSet<>(columns);
        }
    }

    /** A UNIQUE constraint on one column. */
    private record Unique(String table, String column) implements Rule {
        public String sqlite() {
            return "UNIQUE constraint failed: " + table + "." + column;
        }

        public String postgres() {
            return "constraint on " + table + " [" + column + "]";
        }
    }

    /** A trigger that raises {@code message} (the same text in both engines' migrations). */
    private record Raised(String message) implements Rule {
        public String sqlite() {
            return message;
        }

        public String postgres() {
            return "message " + message;
        }
    }

    /** A value of the wrong type for {@code column}: SQLite's STRICT table, PostgreSQL's input syntax. */
    private record WrongType(String table, String column, String type) implements Rule {
        public String sqlite() {
            return "cannot store TEXT value in " + type.toUpperCase(Locale.ROOT) + " column " + table + "." + column;
        }

        public String postgres() {
            return "message invalid input syntax for type " + type;
        }
    }

    private static final Rule FINISHED_AT_IFF_ENDED = new Check("jobs",
            "(finished_at IS NOT NULL) = (state IN ('succeeded', 'failed', 'cancelled'))", Set.of("finished_at", "state"));
    private static final Rule RUNNING_HAS_STARTED_AT = new Check("jobs",
            "state <> 'running' OR started_at IS NOT NULL", Set.of("state", "started_at"));
    private static final Rule ESTIMATE_HAS_TRACE = new Check("jobs",
            "kind <> 'estimate' OR trace_id IS NOT NULL", Set.of("kind", "trace_id"));
    private static final Rule PROGRESS_WITHIN_TOTAL = new Check("jobs",
            "progress_done >= 0 AND progress_done <= progress_total", Set.of("progress_done", "progress_total"));
    private static final Rule KNOWN_STATE = new Check("jobs",
            "state IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')", Set.of("state"));
    private static final Rule KNOWN_KIND = new Check("jobs", "kind IN ('estimate', 'regression')", Set.of("kind"));
    private static final Rule ERRORS_ARE_AN_ARRAY = new Check("jobs",
            "errors IS NULL OR json_type(errors) = 'array'", Set.of("errors"));
    private static final Rule FAILURE_ONLY_WHEN_FAILED = new Check("jobs",
            "failure_json IS NULL OR (state = 'failed' AND json_valid(failure_json))", Set.of("failure_json", "state"));
    private static final Rule FINGERPRINT_IS_32_BYTES = new Check("idempotency_keys",
            "fingerprint IS NULL OR length(fingerprint) = 32", Set.of("fingerprint"));
    private static final Rule VERSION_IMMUTABLE = new Raised("model versions are immutable except status");
    private static final Rule RETIRED_STAYS_RETIRED = new Raised("a retired model version cannot become active again");
    private static final Rule KEY_IMMUTABLE = new Raised("API keys are immutable except their revocation");
    private static final Rule REVOKED_STAYS_REVOKED = new Raised("a revoked API key stays revoked");
    private static final Rule ONE_ESTIMATE_PER_JOB = new Unique("estimates", "job_id");
    private static final Rule ATTEMPT_IS_AN_INTEGER = new WrongType("jobs", "attempt", "integer");
    /** PostgreSQL: the CHECK's own cast (failure_json::jsonb) raises; the column is TEXT, so nothing else can. */
    private static final Rule FAILURE_JSON_PARSES = new Raised("invalid input syntax for type json");

    @Test
    void finished_at_on_a_queued_job_is_rejected() throws SQLException {
        assertRejected(FINISHED_AT_IFF_ENDED, "INSERT INTO jobs (id, kind, state, attempt, created_at, finished_at)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, 2)");
    }

    @Test
    void a_succeeded_job_without_finished_at_is_rejected() throws SQLException {
        assertRejected(FINISHED_AT_IFF_ENDED, "INSERT INTO jobs (id, kind, state, attempt, created_at, started_at)"
                + " VALUES ('j', 'regression', 'succeeded', 1, 1, 2)");
    }

    @Test
    void a_running_job_without_started_at_is_rejected() throws SQLException {
        assertRejected(RUNNING_HAS_STARTED_AT, "INSERT INTO jobs (id, kind, state, attempt, created_at)"
                + " VALUES ('j', 'regression', 'running', 1, 1)");
    }

    @Test
    void an_unknown_job_state_or_kind_is_rejected() throws SQLException {
        assertRejected(KNOWN_STATE, "INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'regression', 'paused', 0, 1)");
        assertRejected(KNOWN_KIND, "INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'train', 'queued', 0, 1)");
    }

    @Test
    void an_estimate_job_without_a_trace_is_rejected() throws SQLException {
        assertRejected(ESTIMATE_HAS_TRACE, "INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'estimate', 'queued', 0, 1)");
    }

    @Test
    void progress_beyond_its_total_is_rejected() throws SQLException {
        assertRejected(PROGRESS_WITHIN_TOTAL, "INSERT INTO jobs (id, kind, state, attempt, created_at, progress_done, progress_total)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, 5, 4)");
    }

    @Test
    void errors_that_are_not_a_json_array_are_rejected() throws SQLException {
        assertRejected(ERRORS_ARE_AN_ARRAY, "INSERT INTO jobs (id, kind, state, attempt, created_at, errors)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, '\"boom\"')");
    }

    /** Failure details only on a failed job, and only valid JSON. */
    @Test
    void failure_details_on_a_job_that_did_not_fail_or_that_are_not_json_are_rejected() throws SQLException {
        assertRejected(FAILURE_ONLY_WHEN_FAILED, "INSERT INTO jobs (id, kind, state, attempt, created_at, failure_json)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, '{}')");
        assertRejected(backend == Backend.SQLITE ? FAILURE_ONLY_WHEN_FAILED : FAILURE_JSON_PARSES, "INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{not json')");
        execute("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{\"unobservableDirections\":[]}')");
        assertEquals(1, fx.count("SELECT count(*) FROM jobs WHERE id = 'j'"));
    }

    /** A request fingerprint is a SHA-256, 32 bytes. */
    @Test
    void a_fingerprint_that_is_not_32_bytes_is_rejected() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k"), 10, StoreFixture.T0);
        assertRejected(FINGERPRINT_IS_32_BYTES, "UPDATE idempotency_keys SET fingerprint = ? WHERE job_id = ?", new byte[1], s.jobId());
    }

    @Test
    void a_text_where_an_integer_belongs_is_rejected() throws SQLException {
        assertRejected(ATTEMPT_IS_AN_INTEGER, "INSERT INTO jobs (id, kind, state, attempt, created_at)"
                + " VALUES ('j', 'regression', 'queued', 'zero', 1)");
    }

    @Test
    void a_published_version_cannot_be_edited_or_unretired() throws SQLException {
        assertRejected(VERSION_IMMUTABLE, "UPDATE model_versions SET states = 3 WHERE family = 'pump'");
        assertTrue(store.models().retireVersion(StoreFixture.FAMILY, StoreFixture.VERSION));
        assertRejected(RETIRED_STAYS_RETIRED, "UPDATE model_versions SET status = 'active' WHERE family = 'pump'");
        assertEquals("retired", store.models().findVersion(StoreFixture.FAMILY, StoreFixture.VERSION).orElseThrow().status());
        assertEquals(2, store.models().findVersion(StoreFixture.FAMILY, StoreFixture.VERSION).orElseThrow().states());
    }

    @Test
    void an_api_key_cannot_be_edited_and_a_revoked_key_stays_revoked() throws SQLException {
        assertTrue(store.keys().insertApiKey(ApiKeyStoreTest.key("admin-key-000001", "admin"), StoreFixture.T0));
        assertTrue(store.keys().insertApiKey(ApiKeyStoreTest.key("reader-key-00001", "reader"), StoreFixture.T0));
        assertRejected(KEY_IMMUTABLE, "UPDATE api_keys SET role = 'admin' WHERE id = 'reader-key-00001'");
        assertRejected(KEY_IMMUTABLE, "UPDATE api_keys SET label = 'renamed' WHERE id = 'reader-key-00001'");
        execute("UPDATE api_keys SET revoked_at = 5 + created_at WHERE id = 'reader-key-00001'");
        assertRejected(REVOKED_STAYS_REVOKED, "UPDATE api_keys SET revoked_at = NULL WHERE id = 'reader-key-00001'");
        assertRejected(REVOKED_STAYS_REVOKED, "UPDATE api_keys SET revoked_at = revoked_at + 1 WHERE id = 'reader-key-00001'");
        assertEquals(StoreFixture.T0.plusMillis(5),
                store.keys().findApiKey("reader-key-00001").orElseThrow().revokedAt());
    }

    @Test
    void a_second_estimate_for_one_job_is_rejected() throws SQLException {
        execute("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'regression', 'queued', 0, 1)");
        execute("INSERT INTO traces VALUES ('t', 'u', 'pump', 1, 1, 3, 0.0, 1.0, ?)", new byte[] {0});
        execute(estimateInsert("e1"));
        assertRejected(ONE_ESTIMATE_PER_JOB, estimateInsert("e2"));
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

    private void assertRejected(Rule rule, String sql, Object... params) throws SQLException {
        SQLException e = assertThrows(SQLException.class, () -> execute(sql, params), sql);
        String refusedBy = backend == Backend.SQLITE ? e.getMessage() : postgresRule(e);
        String expected = backend == Backend.SQLITE ? rule.sqlite() : rule.postgres();
        assertTrue(refusedBy.contains(expected), backend + " refused " + sql + " by " + refusedBy
                + " (" + e.getSQLState() + "), expected " + expected);
    }

    /**
     * PostgreSQL's refusal as "constraint on TABLE [COLUMNS]" when it names a constraint (its
     * columns read from pg_constraint), else as "message TEXT".
     */
    private String postgresRule(SQLException e) throws SQLException {
        ServerErrorMessage server = e instanceof PSQLException p ? p.getServerErrorMessage() : null;
        if (server == null || server.getConstraint() == null) {
            return "message " + (server == null ? e.getMessage() : server.getMessage());
        }
        try (Connection c = fx.raw(); PreparedStatement ps = Sql.bind(c.prepareStatement(CONSTRAINT_COLUMNS),
                server.getTable(), server.getConstraint()); ResultSet rs = ps.executeQuery()) {
            Set<String> columns = new TreeSet<>();
            while (rs.next()) {
                columns.add(rs.getString(1));
            }
            return "constraint on " + server.getTable() + " " + columns;
        }
    }

    /** The columns a constraint covers (pg_constraint.conkey holds their attribute numbers). */
    private static final String CONSTRAINT_COLUMNS = "SELECT a.attname FROM pg_constraint k"
            + " JOIN pg_attribute a ON a.attrelid = k.conrelid AND a.attnum = ANY (k.conkey)"
            + " WHERE k.conrelid = ?::regclass AND k.conname = ?";
}
