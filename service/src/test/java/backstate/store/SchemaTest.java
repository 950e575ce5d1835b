package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class SchemaTest {

    @TempDir
    Path dir;
    StoreFixture fx;

    @BeforeEach
    void open() {
        fx = new StoreFixture(dir);
    }

    @AfterEach
    void close() {
        fx.close();
    }

    @Test
    void migrations_create_every_table_and_index() throws SQLException {
        List<String> names = strings("SELECT name FROM sqlite_schema WHERE type IN ('table', 'index', 'trigger')"
                + " AND name NOT LIKE 'sqlite_%' AND name NOT LIKE 'flyway_%' ORDER BY name");
        assertEquals(List.of("api_keys", "api_keys_are_immutable", "api_keys_stay_revoked",
                "estimate_channels", "estimate_states",
                "estimates", "estimates_by_model_recorded", "estimates_by_unit_recorded", "idempotency_keys",
                "jobs", "jobs_by_state_and_age", "jobs_running_by_lease", "model_families", "model_versions",
                "model_versions_are_immutable", "model_versions_stay_retired",
                "queue_length", "queue_length_on_delete", "queue_length_on_insert", "queue_length_on_leaving",
                "queue_length_on_return", "regressions", "regressions_by_family_newest", "regressions_newest", "traces",
                "traces_by_family_unit_recorded", "traces_by_model_recorded",
                "unit_latest", "unit_latest_by_recording", "unit_version_latest", "unit_version_latest_by_recording"), names);
    }

    @Test
    void store_connections_use_wal_full_sync_and_foreign_keys() throws SQLException {
        // journal_mode belongs to the file; the others are per connection, so ask a store's own.
        assertEquals(List.of("wal"), strings("PRAGMA journal_mode"));
        Connection[] writer = new Connection[1];
        try (SqliteDatabase second = new SqliteDatabase(fx.file, fx.clock, SqliteSettings.defaults(), c -> writer[0] = c)) {
            assertEquals("2", pragma(writer[0], "synchronous")); // 2 = FULL
            assertEquals("1", pragma(writer[0], "foreign_keys"));
            assertEquals(String.valueOf(SqliteSettings.DEFAULT_BUSY_TIMEOUT.toMillis()),
                    pragma(writer[0], "busy_timeout"));
        }
    }

    private static String pragma(Connection c, String name) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery("PRAGMA " + name)) {
            rs.next();
            return rs.getString(1);
        }
    }

    @Test
    void reopening_keeps_rows_and_does_not_migrate_again() throws SQLException {
        fx.close();
        long migrations = fx.count("SELECT COUNT(*) FROM flyway_schema_history WHERE success = 1");
        try (SqliteDatabase reopened = new SqliteDatabase(fx.file, fx.clock)) {
            assertEquals(1, reopened.models().listVersions(StoreFixture.FAMILY).size());
        }
        assertEquals(migrations, fx.count("SELECT COUNT(*) FROM flyway_schema_history WHERE success = 1"));
    }

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

    /** V9: failure details only on a failed job, and only valid JSON. */
    @Test
    void failure_details_on_a_job_that_did_not_fail_or_that_are_not_json_are_rejected() throws SQLException {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, failure_json)"
                + " VALUES ('j', 'regression', 'queued', 0, 1, '{}')");
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{not json')");
        try (Connection c = fx.raw(); Statement s = c.createStatement()) {
            s.execute("INSERT INTO jobs (id, kind, state, attempt, created_at, started_at, finished_at, failure_json)"
                    + " VALUES ('j', 'regression', 'failed', 1, 1, 1, 2, '{\"unobservableDirections\":[]}')");
        }
    }

    /** V9: a request fingerprint is a SHA-256, 32 bytes. */
    @Test
    void a_fingerprint_that_is_not_32_bytes_is_rejected() throws Exception {
        Submission s = fx.store.traces().submitTrace(StoreFixture.trace("unit-1"), StoreFixture.key("k"), 10, StoreFixture.T0);
        assertRejected("UPDATE idempotency_keys SET fingerprint = x'00' WHERE job_id = '" + s.jobId() + "'");
    }

    @Test
    void a_text_where_an_integer_belongs_is_rejected() {
        assertRejected("INSERT INTO jobs (id, kind, state, attempt, created_at)"
                + " VALUES ('j', 'regression', 'queued', 'zero', 1)");
    }

    @Test
    void a_published_version_cannot_be_edited_or_unretired() throws SQLException {
        assertRejected("UPDATE model_versions SET states = 3 WHERE family = 'pump'");
        assertTrue(fx.store.models().retireVersion(StoreFixture.FAMILY, StoreFixture.VERSION));
        assertRejected("UPDATE model_versions SET status = 'active' WHERE family = 'pump'");
    }

    @Test
    void a_second_estimate_for_one_job_is_rejected() throws SQLException {
        try (Connection c = fx.raw(); Statement s = c.createStatement()) {
            s.execute("INSERT INTO jobs (id, kind, state, attempt, created_at) VALUES ('j', 'regression', 'queued', 0, 1)");
            s.execute("INSERT INTO traces VALUES ('t', 'u', 'pump', 1, 1, 3, 0.0, 1.0, x'00')");
            s.execute(estimateInsert("e1"));
        }
        assertRejected(estimateInsert("e2"));
    }

    private static String estimateInsert(String id) {
        return "INSERT INTO estimates (id, job_id, trace_id, unit_id, family, version, created_at, window_start,"
                + " window_end, flags, summary_json) VALUES ('" + id + "', 'j', 't', 'u', 'pump', 1, 1, 0.0, 1.0, '', '{}')";
    }

    private void assertRejected(String sql) {
        assertThrows(SQLException.class, () -> {
            try (Connection c = fx.raw(); Statement s = c.createStatement()) {
                s.execute(sql);
            }
        }, sql);
    }

    /** V6 starts the kept queue length from the jobs already queued in a file made before it. */
    @Test
    void migrating_a_version_5_file_starts_the_queue_length_at_its_queued_jobs() throws Exception {
        Path file = dir.resolve("v5.db");
        org.flywaydb.core.Flyway.configure().dataSource("jdbc:sqlite:" + file, null, null)
                .locations(Migrations.SQLITE).target("5").load().migrate();
        try (Connection c = java.sql.DriverManager.getConnection("jdbc:sqlite:" + file); Statement st = c.createStatement()) {
            for (String state : List.of("queued", "queued", "running", "failed", "queued")) {
                boolean running = state.equals("running");
                boolean done = state.equals("failed");
                st.executeUpdate("INSERT INTO jobs (id, kind, state, params_json, attempt, created_at, started_at, finished_at)"
                        + " VALUES (lower(hex(randomblob(8))), 'regression', '" + state + "', '{}', 0, 1, "
                        + (running || done ? "1" : "NULL") + ", " + (done ? "2" : "NULL") + ")");
            }
        }
        try (SqliteDatabase migrated = new SqliteDatabase(file, fx.clock)) {
            // 3 queued, plus the running one: opening the store rescues it (a crash left it running).
            assertEquals(4, migrated.queue().queuedCount());
        }
        try (Connection c = java.sql.DriverManager.getConnection("jdbc:sqlite:" + file);
             ResultSet rs = c.createStatement().executeQuery("SELECT COUNT(*) FROM jobs WHERE state = 'queued'")) {
            assertEquals(4, rs.getInt(1), "the closed form agrees");
        }
    }

    /**
     * V7 copies each trace's received time onto its estimates and rebuilds the derived rows in
     * recording order: a late upload written last is not a unit's newest estimate.
     */
    @Test
    void migrating_a_version_6_file_orders_its_estimates_by_recording_time() throws Exception {
        Path file = dir.resolve("v6.db");
        org.flywaydb.core.Flyway.configure().dataSource("jdbc:sqlite:" + file, null, null)
                .locations(Migrations.SQLITE).target("6").load().migrate();
        String document = "{\"states\":[{\"name\":\"x\",\"estimate\":1.0}],"
                + "\"residuals\":{\"channels\":[{\"output\":\"pos\",\"rms\":0.5}]}}";
        try (Connection c = java.sql.DriverManager.getConnection("jdbc:sqlite:" + file); Statement st = c.createStatement()) {
            st.executeUpdate("INSERT INTO model_families VALUES ('pump', '', 1)");
            st.executeUpdate("INSERT INTO model_versions VALUES ('pump', 1, 'active', 'continuous', 1, 1, 0, '{}', '{}', 1)");
            // (trace, recorded from, received at, estimate written at): the second is the late upload.
            for (Object[] t : new Object[][] {{"recent", 2000.0, 10, 20}, {"late", 1000.0, 30, 40}}) {
                st.executeUpdate("INSERT INTO traces VALUES ('" + t[0] + "', 'u', 'pump', 1, " + t[2] + ", 3, " + t[1]
                        + ", " + t[1] + " + 2, x'00')");
                st.executeUpdate("INSERT INTO jobs (id, kind, state, trace_id, attempt, created_at, started_at, finished_at)"
                        + " VALUES ('j-" + t[0] + "', 'estimate', 'succeeded', '" + t[0] + "', 1, " + t[2] + ", " + t[3]
                        + ", " + t[3] + ")");
                st.executeUpdate("INSERT INTO estimates VALUES ('e-" + t[0] + "', 'j-" + t[0] + "', '" + t[0] + "', 'u', 'pump', 1, "
                        + t[3] + ", " + t[1] + ", " + t[1] + " + 2, 1.0, '', '" + document + "')");
                // Written with the estimate by version 6 too; V7 keeps this table as it is.
                st.executeUpdate("INSERT INTO estimate_states (estimate_id, state, value) VALUES ('e-" + t[0] + "', 'x', 1.0)");
            }
        }
        try (SqliteDatabase migrated = new SqliteDatabase(file, fx.clock)) {
            assertEquals("e-recent", migrated.estimates().latestEstimate("u").orElseThrow().id());
            assertEquals(java.time.Instant.ofEpochMilli(30), migrated.estimates().findEstimate("e-late").orElseThrow().receivedAt());
            assertEquals(List.of("e-recent"), migrated.fleet().fleetUnits(new UnitFilter("pump", null, null), UnitSort.UNIT_ID, null, 5)
                    .items().stream().map(UnitLatestRow::estimateId).toList());
            assertEquals(List.of("e-recent", "e-late"), migrated.fleet().stateTrend("u", "x", "pump", null, TimeFilter.NONE, 5).stream()
                    .map(StatePoint::estimateId).toList());
            FleetSummary recordedEarly = migrated.fleet().fleetSummary(new FleetSummaryQuery("pump", java.util.Map.of(1, List.of("pos")),
                    TimeFilter.recorded(java.time.Instant.ofEpochSecond(0), java.time.Instant.ofEpochSecond(1500)), null,
                    java.time.Instant.ofEpochSecond(0), 5));
            assertEquals(List.of(1L, 1L, 1), List.of(recordedEarly.versions().get(0).estimates(),
                    recordedEarly.versions().get(0).traces(), recordedEarly.versions().get(0).channelRms().get("pos").count()));
        }
    }

    private List<String> strings(String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Connection c = fx.raw(); Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                out.add(rs.getString(1));
            }
        }
        return out;
    }
}
