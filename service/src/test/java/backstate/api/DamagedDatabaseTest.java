package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.cli.DemoLoader;
import java.io.RandomAccessFile;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.Arrays;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A SQLite file with a damaged table page: the root page of {@code traces} (found in
 * {@code sqlite_schema.rootpage}, at byte offset (page − 1) × {@code PRAGMA page_size}, the file
 * format of https://sqlite.org/fileformat2.html) overwritten with garbage while the service is
 * stopped. SQLite's own {@code PRAGMA quick_check} is the oracle that the page is damaged; the
 * service must then answer {@code /readyz} 503 naming what it found, and a read of the damaged
 * table a problem naming the database, while the health check and other tables still answer.
 */
class DamagedDatabaseTest {

    @Test
    void a_damaged_table_page_makes_readyz_answer_503_naming_it_and_reads_of_it_answer_a_clear_problem(
            @TempDir Path dir) throws Exception {
        TestDatabase database = Engine.SQLITE.newDatabase(dir, "damaged");
        String estimateId;
        try (TestServer server = new TestServer(database, Map.of())) {
            new DemoLoader(server.base()).load();
            assertEquals(200, server.get("/readyz").status());
            estimateId = firstEstimate(database);
        }
        damageRootPage(database, "traces");
        assertTrue(quickCheck(database).startsWith("*** in database main ***"), "SQLite's own check sees the damage");

        try (TestServer server = new TestServer(database, Map.of())) {
            TestServer.Reply ready = server.get("/readyz");
            assertEquals(503, ready.status(), ready.body());
            assertEquals("/problems/database-damaged", ready.json().get("type").asText());
            assertTrue(ready.json().get("detail").asText().startsWith("the database is damaged (quick_check: *** in database main ***"),
                    ready.body());
            assertEquals(200, server.get("/healthz").status());

            TestServer.Reply series = server.get("/v1/estimates/" + estimateId + "/series");
            StoredCorruptionTest.assertCorruptProblem(series, "the database file");
            TestServer.Reply estimate = server.get("/v1/estimates/" + estimateId);
            assertEquals(200, estimate.status(), "the estimates table is intact: " + estimate.body());
        }
    }

    /**
     * The same damage made while the service runs: the start's check passed, so readiness must
     * learn of it from the first statement SQLite refuses (here a trace post, which writes the
     * damaged table; the test's checkpoint resets the WAL, so no connection keeps the old page
     * cached, https://sqlite.org/wal.html section 2).
     */
    @Test
    void damage_that_appears_while_running_turns_readyz_503_at_the_first_statement_that_meets_it(@TempDir Path dir)
            throws Exception {
        TestDatabase database = Engine.SQLITE.newDatabase(dir, "damaged-later");
        try (TestServer server = new TestServer(database, Map.of())) {
            new DemoLoader(server.base()).load();
            String estimateId = firstEstimate(database);
            assertEquals(200, server.get("/readyz").status());

            damageRootPage(database, "traces");
            TestServer.Reply series = server.get("/v1/estimates/" + estimateId + "/series");
            StoredCorruptionTest.assertCorruptProblem(series, "the database file");

            TestServer.Reply ready = server.get("/readyz");
            assertEquals(503, ready.status(), ready.body());
            assertEquals("/problems/database-damaged", ready.json().get("type").asText());
            assertTrue(ready.json().get("detail").asText().startsWith("the database is damaged (reported while running: "
                    + "the database file is corrupt in storage: SQLite reports it damaged"), ready.body());
            assertEquals(200, server.get("/healthz").status());
            assertEquals(200, server.get("/v1/estimates/" + estimateId).status(), "the estimates table is intact");
        }
    }

    /** Overwrites the table's root page, but its first 100 bytes when it is page 1 (the file header). */
    private static void damageRootPage(TestDatabase database, String table) throws Exception {
        int page;
        int pageSize;
        try (Connection c = database.connect(); Statement s = c.createStatement()) {
            try (ResultSet rs = s.executeQuery("SELECT rootpage FROM sqlite_schema WHERE type = 'table' AND name = '" + table + "'")) {
                rs.next();
                page = rs.getInt(1);
            }
            try (ResultSet rs = s.executeQuery("PRAGMA page_size")) {
                rs.next();
                pageSize = rs.getInt(1);
            }
            s.execute("PRAGMA wal_checkpoint(TRUNCATE)");
        }
        Path file = Path.of(database.serviceValue());
        assertTrue(Files.size(file) >= (long) page * pageSize, "the page is inside the file");
        byte[] garbage = new byte[pageSize];
        Arrays.fill(garbage, (byte) 0x5a);
        try (RandomAccessFile raf = new RandomAccessFile(file.toFile(), "rw")) {
            raf.seek((long) (page - 1) * pageSize);
            raf.write(garbage);
        }
    }

    private static String firstEstimate(TestDatabase database) throws Exception {
        for (int tries = 0; tries < 3000; tries++) {
            try (Connection c = database.connect(); Statement s = c.createStatement();
                 ResultSet rs = s.executeQuery("SELECT id FROM estimates ORDER BY id LIMIT 1")) {
                if (rs.next()) {
                    return rs.getString(1);
                }
            }
            Thread.sleep(20);
        }
        throw new AssertionError("no demo estimate within 60 s");
    }

    private static String quickCheck(TestDatabase database) throws Exception {
        try (Connection c = database.connect(); Statement s = c.createStatement();
             ResultSet rs = s.executeQuery("PRAGMA quick_check")) {
            rs.next();
            return rs.getString(1);
        }
    }
}
