package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import backstate.cli.DemoLoader;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The fleet rows written from the typed estimate in Java are the rows the retired SQL views made
 * from the stored JSON document: the demo fleet is loaded through the API, then the views of
 * V2__fleet_views.sql (states) and V7__recording_time.sql (channels), as those migrations define
 * them, are created as temporary views over the same estimates and compared row for row.
 *
 * <p>SQLite only: the views are SQLite SQL (json_each, json_extract) and the demo fleet comes in
 * through the HTTP test server, which opens a SQLite file. PostgreSQL's derived rows are compared
 * with SQLite's row for row in {@link FleetViewsAgreeAcrossEnginesTest}, so they equal these too.
 */
class FleetRowsFromTypedEstimatesTest {

    private static final String STATE_COLUMNS = "estimate_id, state, value, standard_error, lower, upper";
    private static final String CHANNEL_COLUMNS = "estimate_id, family, version, channel, window_start, received_at, rms";

    @Test
    void the_demo_fleets_rows_equal_what_the_json_views_produced(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir)) {
            new DemoLoader(server.base()).load();
            try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + dir.resolve("test.db").toAbsolutePath())) {
                awaitNoJobsPending(c);
                createOldView(c, "V2__fleet_views.sql", "estimate_document_states");
                createOldView(c, "V7__recording_time.sql", "estimate_document_channels");

                List<String> states = rows(c, "SELECT " + STATE_COLUMNS + " FROM estimate_states ORDER BY 1, 2");
                List<String> channels = rows(c, "SELECT " + CHANNEL_COLUMNS + " FROM estimate_channels ORDER BY 1, 4");
                assertTrue(states.size() >= 20 && channels.size() >= 20,
                        "got " + states.size() + " state and " + channels.size() + " channel rows, expected the demo fleet's");
                assertEquals(rows(c, "SELECT " + STATE_COLUMNS + " FROM estimate_document_states ORDER BY 1, 2"), states);
                assertEquals(rows(c, "SELECT " + CHANNEL_COLUMNS + " FROM estimate_document_channels ORDER BY 1, 4"),
                        channels);
            }
        }
    }

    /** The view exactly as its migration created it, as a temporary view on this connection. */
    private static void createOldView(Connection c, String migration, String view) throws IOException, SQLException {
        String sql;
        try (InputStream in = FleetRowsFromTypedEstimatesTest.class.getResourceAsStream("/db/migration/sqlite/" + migration)) {
            sql = new String(in.readAllBytes(), StandardCharsets.UTF_8);
        }
        Matcher m = Pattern.compile("CREATE VIEW " + view + " AS.*?;", Pattern.DOTALL).matcher(sql);
        assertTrue(m.find(), migration + " should define " + view);
        try (Statement s = c.createStatement()) {
            s.execute(m.group().replaceFirst("CREATE VIEW", "CREATE TEMP VIEW"));
        }
    }

    /** Waits, bounded, until the workers have finished every job the demo load queued. */
    private static void awaitNoJobsPending(Connection c) throws SQLException, InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(120).toNanos();
        while (count(c, "SELECT count(*) FROM jobs WHERE state IN ('queued', 'running')") > 0) {
            if (System.nanoTime() > deadline) {
                throw new AssertionError("the demo fleet's jobs did not finish within 120 s");
            }
            Thread.sleep(50);
        }
    }

    private static long count(Connection c, String sql) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            rs.next();
            return rs.getLong(1);
        }
    }

    /** Each row as text, columns joined with '|' (REAL values in SQLite's own text form). */
    private static List<String> rows(Connection c, String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            int columns = rs.getMetaData().getColumnCount();
            while (rs.next()) {
                StringBuilder row = new StringBuilder();
                for (int i = 1; i <= columns; i++) {
                    row.append(i > 1 ? "|" : "").append(rs.getObject(i));
                }
                out.add(row.toString());
            }
        }
        return out;
    }
}
