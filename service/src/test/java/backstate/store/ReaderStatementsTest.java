package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.List;
import java.util.function.UnaryOperator;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Read connections keep their statements compiled across reads, and an idle one holds no read
 * snapshot: SQLite's wal_checkpoint(TRUNCATE) reports busy = 1 while any reader is inside a read
 * transaction and empties the WAL otherwise (https://sqlite.org/pragma.html#pragma_wal_checkpoint).
 */
class ReaderStatementsTest {
    private static final String SELECT_ALL = "SELECT id FROM t ORDER BY id";

    @TempDir
    Path dir;
    private SqliteConnections connections;

    @BeforeEach
    void open() throws Exception {
        connections = new SqliteConnections(dir.resolve("t.db"), new SqliteSettings(1, SqliteSettings.DEFAULT_BUSY_TIMEOUT,
                SqliteSettings.DEFAULT_MAX_ATTEMPTS), UnaryOperator.identity(), SqliteMeters.unpublished());
        connections.write(s -> {
            s.execute("CREATE TABLE t (id INTEGER PRIMARY KEY)");
            for (int i = 1; i <= 3; i++) {
                s.execute("INSERT INTO t (id) VALUES (" + i + ")");
            }
            return null;
        });
    }

    @AfterEach
    void close() {
        connections.close();
    }

    @Test
    void the_one_reader_hands_out_the_same_compiled_statement_to_the_next_read() {
        PreparedStatement first = connections.read(s -> s.prepare(SELECT_ALL));
        PreparedStatement second = connections.read(s -> s.prepare(SELECT_ALL));
        assertSame(first, second);
        assertEquals(List.of(1, 2, 3), connections.read(s -> Sql.list(s.prepare(SELECT_ALL), rs -> rs.getInt(1))));
    }

    @Test
    void after_reads_that_read_to_the_end_or_stop_early_a_checkpoint_empties_the_wal() throws Exception {
        connections.read(s -> Sql.list(s.prepare(SELECT_ALL), rs -> rs.getInt(1)));
        connections.read(s -> Sql.firstOrNull(s.prepare(SELECT_ALL), rs -> rs.getInt(1)));
        assertEquals(0, truncateCheckpointBusy());
        assertEquals(0, Files.size(dir.resolve("t.db-wal")));
    }

    @Test
    void a_result_left_open_holds_a_snapshot_so_the_checkpoint_above_can_fail() throws Exception {
        ResultSet open = connections.read(s -> {
            ResultSet rs = s.prepare(SELECT_ALL).executeQuery();
            rs.next();
            return rs; // against the rule: left mid-step
        });
        assertEquals(1, truncateCheckpointBusy());
        open.close();
        assertEquals(0, truncateCheckpointBusy());
    }

    @Test
    void a_failed_read_compiles_its_statements_afresh() throws Exception {
        PreparedStatement before = connections.read(s -> s.prepare(SELECT_ALL));
        assertThrows(IllegalStateException.class, () -> connections.read(s -> {
            s.prepare(SELECT_ALL);
            throw new IllegalStateException("refused");
        }));
        PreparedStatement after = connections.read(s -> s.prepare(SELECT_ALL));
        assertEquals(List.of(true, false), List.of(before.isClosed(), after.isClosed()));
    }

    /** busy (first column) of PRAGMA wal_checkpoint(TRUNCATE) on a connection of its own. */
    private int truncateCheckpointBusy() throws Exception {
        try (Connection c = connections.dataSource().getConnection(); Statement s = c.createStatement();
             ResultSet rs = s.executeQuery("PRAGMA wal_checkpoint(TRUNCATE)")) {
            rs.next();
            return rs.getInt(1);
        }
    }
}
