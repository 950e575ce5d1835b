package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * SQLite's own side of the schema: its objects, pragmas and the migrations of files made by
 * earlier versions. The rules the schema enforces are checked on both engines by {@link SchemaRulesTest}.
 */
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
                "estimate_channels", "estimate_channels_by_rms", "estimate_states",
                "estimates", "estimates_by_model_chi2", "estimates_by_model_recorded", "estimates_by_unit_recorded",
                "fleet_chi2_bins", "fleet_rms_bins", "fleet_unit_estimates", "fleet_unit_flags", "fleet_unit_traces",
                "fleet_unit_traces_count", "idempotency_keys",
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

    @Test
    void migrating_a_version_1_file_fills_the_derived_rows_of_its_estimates() throws Exception {
        Path file = dir.resolve("v1.db");
        org.flywaydb.core.Flyway.configure().dataSource("jdbc:sqlite:" + file, null, null).locations(Migrations.SQLITE)
                .target("1").load().migrate();
        long at = StoreFixture.T0.toEpochMilli();
        try (Connection c = java.sql.DriverManager.getConnection("jdbc:sqlite:" + file)) {
            execute(c, "INSERT INTO model_families VALUES ('pump', '', ?)", at);
            execute(c, "INSERT INTO model_versions VALUES ('pump', 1, 'active', 'continuous', 2, 2, 0, '{}', '{}', ?)", at);
            for (int i = 0; i < 3; i++) {
                execute(c, "INSERT INTO traces VALUES (?, 'unit-1', 'pump', 1, ?, 3, 0, 2, x'00')", "t" + i, at);
                execute(c, "INSERT INTO jobs (id, kind, state, trace_id, attempt, created_at, started_at, finished_at)"
                        + " VALUES (?, 'estimate', 'succeeded', ?, 1, ?, ?, ?)", "j" + i, "t" + i, at, at, at);
                execute(c, "INSERT INTO estimates VALUES (?, ?, ?, 'unit-1', 'pump', 1, ?, 0, 2, ?, '', ?, NULL)",
                        "e" + i, "j" + i, "t" + i, at + i * 1000L, 1.0 + i, FleetStoreTest.DOCUMENT);
            }
        }
        try (SqliteDatabase migrated = new SqliteDatabase(file, fx.clock)) {
            // One recording window for all three: the newest written wins the tie.
            assertEquals(List.of("e2"), migrated.fleet().fleetUnits(new UnitFilter("pump", 1, null), UnitSort.UNIT_ID, null, 5)
                    .items().stream().map(UnitLatestRow::estimateId).toList());
            assertEquals(List.of("e2", "e1", "e0"), migrated.fleet().stateTrend("unit-1", "x", "pump", null, TimeFilter.NONE, 5)
                    .stream().map(StatePoint::estimateId).toList());
            assertEquals(3, migrated.fleet().fleetSummary(new FleetSummaryQuery("pump", Map.of(1, List.of("pos")), TimeFilter.NONE,
                    null, StoreFixture.T0, 5)).versions().get(0).channelRms().get("pos").count());
            // V7 copied each trace's received time onto its estimate.
            assertEquals(StoreFixture.T0, migrated.estimates().findEstimate("e1").orElseThrow().receivedAt());
        }
    }

    private static void execute(Connection c, String sql, Object... params) throws SQLException {
        try (PreparedStatement ps = Sql.bind(c.prepareStatement(sql), params)) {
            ps.executeUpdate();
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
