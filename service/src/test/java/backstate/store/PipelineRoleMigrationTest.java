package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import org.flywaydb.core.Flyway;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * V8 rebuilds api_keys to admit the 'pipeline' role: keys stored before it keep every column,
 * the table keeps its other checks, and both triggers guard the new table as V4's guarded the old.
 */
class PipelineRoleMigrationTest {
    static final String COLUMNS = "id, role, unit_pattern, label, hex(salt), hex(hash), created_at, created_by, revoked_at";
    static final String SALT = "x'" + "11".repeat(16) + "'";
    static final String HASH = "x'" + "22".repeat(32) + "'";
    /** The CHECKs as written in V4 and V8; SQLite quotes them in "CHECK constraint failed: …". */
    static final String V4_ROLES = "CHECK constraint failed: role IN ('admin', 'gateway', 'reader')";
    static final String V8_ROLES = "CHECK constraint failed: role IN ('admin', 'gateway', 'reader', 'pipeline')";
    static final String PATTERN_IFF_GATEWAY = "CHECK constraint failed: (role = 'gateway') = (unit_pattern IS NOT NULL)";

    @TempDir
    Path dir;

    @Test
    void keys_from_a_version_6_file_survive_and_the_new_role_is_admitted() throws Exception {
        Path file = dir.resolve("v6.db");
        Flyway.configure().dataSource("jdbc:sqlite:" + file, null, null).locations(Migrations.SQLITE)
                .target("6").load().migrate();
        try (Connection c = open(file); Statement s = c.createStatement()) {
            s.executeUpdate(insert("00000000000000a1", "admin", null, "first admin", 10, null, null));
            s.executeUpdate(insert("00000000000000b2", "gateway", "'RCX-1*'", "yard", 20, "'00000000000000a1'", null));
            s.executeUpdate(insert("00000000000000c3", "reader", null, "dashboard", 30, "'00000000000000a1'", "40"));
            assertRejected(c, insert("00000000000000d4", "pipeline", null, "ci", 50, null, null), V4_ROLES);
        }
        List<List<String>> before = rows(file);

        try (SqliteDatabase migrated = new SqliteDatabase(file, new TestClock(StoreFixture.T0))) {
            assertTrue(migrated.keys().hasActiveAdminKey());
        }

        assertEquals(before, rows(file));
        try (Connection c = open(file); Statement s = c.createStatement()) {
            s.executeUpdate(insert("00000000000000d4", "pipeline", null, "release pipeline", 50, "'00000000000000a1'", null));
            assertRejected(c, insert("00000000000000e5", "owner", null, "unknown role", 60, null, null), V8_ROLES);
            assertRejected(c, insert("00000000000000f6", "gateway", null, "gateway without a pattern", 60, null, null), PATTERN_IFF_GATEWAY);
            assertRejected(c, insert("00000000000000f7", "pipeline", "'RCX-*'", "pattern on a pipeline key", 60, null, null),
                    PATTERN_IFF_GATEWAY);
            assertRejected(c, "UPDATE api_keys SET role = 'admin' WHERE id = '00000000000000d4'", "API keys are immutable except their revocation");
            assertRejected(c, "UPDATE api_keys SET revoked_at = NULL WHERE id = '00000000000000c3'", "a revoked API key stays revoked");
        }
        assertEquals(List.of("api_keys_are_immutable", "api_keys_stay_revoked"),
                strings(file, "SELECT name FROM sqlite_schema WHERE type = 'trigger' AND tbl_name = 'api_keys' ORDER BY name"));
        assertEquals(List.of("ok"), strings(file, "PRAGMA integrity_check"));
    }

    static String insert(String id, String role, String patternSql, String label, long createdAt, String createdBySql,
                         String revokedAtSql) {
        return "INSERT INTO api_keys (id, role, unit_pattern, label, salt, hash, created_at, created_by, revoked_at) VALUES ('"
                + id + "', '" + role + "', " + patternSql + ", '" + label + "', " + SALT + ", " + HASH + ", " + createdAt
                + ", " + createdBySql + ", " + revokedAtSql + ")";
    }

    static Connection open(Path file) throws SQLException {
        return DriverManager.getConnection("jdbc:sqlite:" + file);
    }

    /** Refused by the rule SQLite names in its message (a CHECK by its expression, a trigger by its RAISE text). */
    static void assertRejected(Connection c, String sql, String rule) {
        SQLException e = assertThrows(SQLException.class, () -> {
            try (Statement s = c.createStatement()) {
                s.executeUpdate(sql);
            }
        }, sql);
        assertTrue(e.getMessage().contains(rule), sql + " refused by " + e.getMessage() + ", expected " + rule);
    }

    static List<List<String>> rows(Path file) throws SQLException {
        List<List<String>> rows = new ArrayList<>();
        try (Connection c = open(file); Statement s = c.createStatement();
             ResultSet rs = s.executeQuery("SELECT " + COLUMNS + " FROM api_keys ORDER BY id")) {
            while (rs.next()) {
                List<String> row = new ArrayList<>();
                for (int i = 1; i <= rs.getMetaData().getColumnCount(); i++) {
                    row.add(rs.getString(i));
                }
                rows.add(row);
            }
        }
        assertEquals(3, rows.size());
        return rows;
    }

    static List<String> strings(Path file, String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Connection c = open(file); Statement s = c.createStatement(); ResultSet rs = s.executeQuery(sql)) {
            while (rs.next()) {
                out.add(rs.getString(1));
            }
        }
        return out;
    }
}
