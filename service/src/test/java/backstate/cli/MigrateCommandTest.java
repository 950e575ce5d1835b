package backstate.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.store.Database;
import backstate.store.DatabaseCopyFixture;
import backstate.store.EstimateFilter;
import backstate.store.JobRow;
import backstate.store.PostgresDatabase;
import backstate.store.PostgresServer;
import backstate.store.SqliteDatabase;
import backstate.store.StoreFixture;
import backstate.store.TestClock;
import backstate.store.UnitFilter;
import backstate.store.UnitSort;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.regex.Pattern;
import java.util.stream.Stream;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code backstate migrate} in-process, from a SQLite store holding one of everything
 * ({@link DatabaseCopyFixture}) into a fresh database on the embedded PostgreSQL server: the
 * expected row counts are what the fixture stored, and PostgreSQL, opened as the service opens it,
 * must answer every read as SQLite does on the same file.
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class MigrateCommandTest {

    Path dir;
    Path file;
    String target;
    DatabaseCopyFixture.Stored stored;
    CommandRun run;

    @BeforeAll
    void fillAndMigrate(@TempDir Path dir) throws Exception {
        this.dir = dir;
        try (StoreFixture fx = new StoreFixture(dir)) {
            file = fx.file;
            stored = DatabaseCopyFixture.fill(fx.store);
        }
        target = PostgresServer.newEmptyDatabase();
        run = migrate(Map.of(), "--from", file.toString(), "--to", PostgresServer.serviceUrl(target));
    }

    static CommandRun migrate(Map<String, String> env, String... args) {
        return CommandRun.of((a, out, err) -> MigrateCommand.run(a, out, err, env), args);
    }

    @Test
    void prints_each_table_with_the_rows_the_fixture_stored_and_exits_0() {
        assertEquals(MigrateCommand.VERIFIED, run.exit(), run.out() + run.err());
        // Counted from DatabaseCopyFixture.fill: 3 units × 2 traces + failed, queued and running traces;
        // their 9 jobs and the regression's; 2 states and 2 channels per estimate of a document (3 of 6).
        Map<String, Integer> rows = new java.util.LinkedHashMap<>();
        rows.put("model_families", 1);
        rows.put("model_versions", 2);
        rows.put("traces", 9);
        rows.put("jobs", 10);
        rows.put("estimates", 6);
        rows.put("estimate_states", 6);
        rows.put("estimate_channels", 6);
        rows.put("unit_latest", 3);
        rows.put("unit_version_latest", 3);
        rows.put("idempotency_keys", 5);
        rows.put("regressions", 1);
        rows.put("api_keys", 3);
        rows.put("queue_length", 1);
        // The fleet's running totals (V12): per unit estimated (3 of them), per unit and version with traces, per
        // flagged unit, and the χ²/dof and RMS value bins the fixture's estimates fall in.
        rows.put("fleet_unit_estimates", 3);
        rows.put("fleet_unit_traces", 6);
        rows.put("fleet_unit_flags", 3);
        rows.put("fleet_chi2_bins", 3);
        rows.put("fleet_rms_bins", 1);
        List<String> lines = run.out().lines().toList();
        assertEquals("note: a stopped service left 1 job(s) running: 1 copied as queued with the attempt kept,"
                + " 0 as failed (out of attempts), as a service start does", lines.get(0));
        assertEquals("table                    rows  sha256 (start)    verified", lines.get(1));
        List<String> tableLines = lines.subList(2, lines.size() - 1);
        assertEquals(rows.size(), tableLines.size(), run.out());
        int i = 0;
        for (Map.Entry<String, Integer> table : rows.entrySet()) {
            Pattern expected = Pattern.compile(table.getKey() + " +" + table.getValue() + "  [0-9a-f]{16}  ok");
            assertTrue(expected.matcher(tableLines.get(i++)).matches(), expected + " in\n" + run.out());
        }
        assertEquals("backstate migrate: copied " + file + " to " + PostgresServer.serviceUrl(target)
                + ", 18 tables and 72 rows verified", lines.get(lines.size() - 1));
        assertTrue(run.err().contains("copied traces: 9 rows"), run.err());
    }

    @Test
    void postgresql_answers_the_reads_as_sqlite_does_and_runs_the_copied_queue() throws Exception {
        TestClock clock = new TestClock(StoreFixture.T0.plusSeconds(100));
        try (SqliteDatabase sqlite = new SqliteDatabase(file, clock);
             PostgresDatabase pg = new PostgresDatabase(PostgresServer.settings(target), clock)) {
            assertEquals(reads(sqlite), reads(pg));
            JobRow failed = pg.jobs().findJob(stored.jobIds().get(6)).orElseThrow();
            assertEquals(List.of("attempt 1: solver timed out, \"retrying\"", "attempt 2: diverged: ünits [1, 2]"),
                    failed.errors());
            JobRow leftRunning = pg.jobs().findJob(stored.jobIds().get(8)).orElseThrow();
            assertEquals(List.of("queued", 1), List.of(leftRunning.state(), leftRunning.attempt()));
            for (String unit : DatabaseCopyFixture.UNITS) {
                assertEquals(sqlite.traces().submitTrace(DatabaseCopyFixture.traceOf(unit), DatabaseCopyFixture.keyOf(unit),
                        100, clock.instant()), pg.traces().submitTrace(DatabaseCopyFixture.traceOf(unit),
                        DatabaseCopyFixture.keyOf(unit), 100, clock.instant()));
            }
            // The queued job, the re-queued one and the regression run: the trigger counted all three.
            assertEquals(3, pg.queue().queuedCount());
            assertEquals(3, pg.queue().claimNext(10, clock.instant()).size());
            assertEquals(0, pg.queue().queuedCount());
        }
    }

    @Test
    void a_second_migrate_into_the_same_database_is_refused_naming_the_first_table_with_rows() throws Exception {
        CommandRun again = migrate(Map.of(), "--from", file.toString(), "--to", PostgresServer.serviceUrl(target));
        assertEquals(MigrateCommand.REFUSED, again.exit(), again.out() + again.err());
        assertEquals("backstate migrate: the target already holds rows in model_families, expected an empty database"
                + " (migrate copies into a new database only)", again.err().strip());
        assertEquals("", again.out());
        assertEquals(1, count(target, "SELECT count(*) FROM model_families"));
    }

    @Test
    void a_missing_or_folder_from_file_is_refused_and_not_created() {
        Path missing = dir.resolve("nothing-here.db");
        CommandRun refused = migrate(Map.of(), "--from", missing.toString(), "--to",
                PostgresServer.serviceUrl(PostgresServer.newEmptyDatabase()));
        assertEquals(MigrateCommand.REFUSED, refused.exit());
        assertEquals("backstate migrate: the SQLite file " + missing + " does not exist", refused.err().strip());
        assertFalse(Files.exists(missing));
        CommandRun folder = migrate(Map.of(), "--from", dir.toString(), "--to",
                PostgresServer.serviceUrl(PostgresServer.newEmptyDatabase()));
        assertEquals(MigrateCommand.REFUSED, folder.exit());
        assertEquals("backstate migrate: the SQLite file " + dir + " is a folder, expected a file", folder.err().strip());
    }

    /**
     * Beside a live service, the copy would re-queue the service's running jobs as a crash's and miss
     * what it writes afterwards: refused before it opens the file; and a second service on the same
     * file is refused the same way. Once the service stops, the file is free again.
     */
    @Test
    void a_file_a_service_is_using_is_refused_and_so_is_a_second_service_on_it(@TempDir Path live) throws Exception {
        String emptyTarget = PostgresServer.newEmptyDatabase();
        Path database;
        try (backstate.api.TestServer server = new backstate.api.TestServer(live)) {
            server.publishDemoModels();
            database = live.resolve("test.db");
            CommandRun refused = migrate(Map.of(), "--from", database.toString(), "--to", PostgresServer.serviceUrl(emptyTarget));
            assertEquals(MigrateCommand.REFUSED, refused.exit(), refused.err());
            assertEquals("backstate migrate: " + database + " is in use by another backstate process (" + database
                    + ".service-lock is locked): stop the service using it first", refused.err().strip());
            IllegalStateException second = org.junit.jupiter.api.Assertions.assertThrows(IllegalStateException.class,
                    () -> new backstate.api.TestServer(live));
            assertTrue(second.getMessage().contains("is in use by another backstate process"), second.getMessage());
        }
        // The service stopped: its lock went with it, and the copy runs.
        CommandRun copied = migrate(Map.of(), "--from", database.toString(), "--to", PostgresServer.serviceUrl(emptyTarget));
        assertEquals(0, copied.exit(), copied.err());
    }

    @Test
    void a_file_that_is_not_a_sqlite_database_is_refused() throws Exception {
        Path text = Files.writeString(dir.resolve("notes.db"), "these are notes, not a database\n".repeat(40));
        CommandRun refused = migrate(Map.of(), "--from", text.toString(), "--to",
                PostgresServer.serviceUrl(PostgresServer.newEmptyDatabase()));
        assertEquals(MigrateCommand.REFUSED, refused.exit());
        // SQLite's own words for a file without its header.
        assertTrue(refused.err().startsWith("backstate migrate: " + text + " is not a readable SQLite database: "),
                refused.err());
        assertTrue(refused.err().contains("not a database"), refused.err());
        assertEquals(1, refused.err().lines().count(), refused.err());
    }

    @Test
    void a_password_in_the_url_is_refused_with_where_to_put_it() {
        CommandRun refused = migrate(Map.of(), "--from", file.toString(), "--to", "postgresql://app:secret@db:5432/fleet");
        assertEquals(MigrateCommand.REFUSED, refused.exit());
        assertEquals("backstate migrate: --to: got a password in the URL, expected it in BACKSTATE_DATABASE_PASSWORD or"
                + " BACKSTATE_DATABASE_PASSWORD_FILE (a URL shows in process lists and logs) (--help for usage)",
                refused.err().strip());
    }

    @Test
    void a_command_line_without_from_or_with_a_sqlite_target_is_refused() {
        assertEquals("backstate migrate: missing --from (--help for usage)",
                migrate(Map.of(), "--to", "postgresql://app@db/fleet").err().strip());
        assertEquals("backstate migrate: got --to other.db, expected postgresql://user@host:port/database"
                + " (--help for usage)", migrate(Map.of(), "--from", file.toString(), "--to", "other.db").err().strip());
        assertEquals("backstate migrate: got --into, expected --from FILE --to postgresql://user@host:port/database"
                + " (--help for usage)", migrate(Map.of(), "--into", "x").err().strip());
        assertEquals(MigrateCommand.REFUSED, migrate(Map.of(), "--from", file.toString()).exit());
    }

    @Test
    void an_unreachable_server_fails_in_one_line() throws Exception {
        int closedPort;
        try (java.net.ServerSocket socket = new java.net.ServerSocket(0)) {
            closedPort = socket.getLocalPort();
        }
        CommandRun failed = migrate(Map.of(), "--from", file.toString(), "--to",
                "postgresql://postgres@localhost:" + closedPort + "/fleet");
        assertEquals(MigrateCommand.FAILED, failed.exit(), failed.err());
        assertEquals(1, failed.err().lines().count(), failed.err());
        assertTrue(failed.err().startsWith("backstate migrate: "), failed.err());
    }

    /** Every read the service makes of what the fixture stored, as comparable values. */
    private List<Object> reads(Database db) {
        List<Object> reads = new ArrayList<>();
        stored.jobIds().forEach(id -> reads.add(db.jobs().findJob(id)));
        stored.traceIds().forEach(id -> reads.add(db.traces().findTrace(id).map(DatabaseCopyFixture::describe)));
        Stream.concat(DatabaseCopyFixture.UNITS.stream(), Stream.of(DatabaseCopyFixture.FAILED_UNIT)).forEach(unit -> {
            reads.add(db.estimates().latestEstimate(unit));
            reads.add(db.estimates().estimateHistory(unit, EstimateFilter.NONE, null, 10));
        });
        stored.jobIds().forEach(id -> reads.add(db.estimates().findEstimateForJob(id)));
        reads.add(db.fleet().fleetSummary(DatabaseCopyFixture.summaryQuery()));
        for (UnitSort sort : List.of(UnitSort.UNIT_ID, UnitSort.CHI_SQUARE)) {
            reads.add(db.fleet().fleetUnits(new UnitFilter(StoreFixture.FAMILY, null, null), sort, null, 10));
        }
        reads.add(db.keys().listApiKeys().stream().map(DatabaseCopyFixture::describe).toList());
        reads.add(db.regressions().findRegression(stored.regressionId()));
        reads.add(db.models().listVersions(StoreFixture.FAMILY));
        reads.add(db.queue().queuedCount());
        return reads;
    }

    private static long count(String jdbcUrl, String sql) throws Exception {
        try (Connection c = PostgresServer.connect(jdbcUrl); Statement s = c.createStatement();
             ResultSet rs = s.executeQuery(sql)) {
            rs.next();
            return rs.getLong(1);
        }
    }
}
