package backstate.reliability;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;

/**
 * Reads a server's SQLite file from outside the server, as SQLite's own crash tests do: a fresh
 * connection per question, so nothing cached in the server can hide what is on disk.
 */
final class ServerDb {
    /** Tables whose row counts make up the content signature. */
    private static final List<String> SIGNED_TABLES =
            List.of("model_families", "model_versions", "traces", "jobs", "estimates", "idempotency_keys");

    private final Path file;

    ServerDb(Path file) {
        this.file = file;
    }

    Path file() {
        return file;
    }

    long count(String sql) {
        List<String> rows = strings(sql);
        return rows.isEmpty() ? -1 : Long.parseLong(rows.get(0));
    }

    /** Row counts of the content tables plus the jobs by state, as one comparable string (one connection). */
    String signature() {
        try (Connection c = open(); Statement s = c.createStatement()) {
            StringBuilder out = new StringBuilder();
            for (String table : SIGNED_TABLES) {
                out.append(table).append('=').append(column(s, "SELECT COUNT(*) FROM " + table).get(0)).append(' ');
            }
            return out.append("jobStates=")
                    .append(column(s, "SELECT state || ':' || COUNT(*) FROM jobs GROUP BY state ORDER BY state")).toString();
        } catch (SQLException e) {
            throw new AssertionError("reading " + file, e);
        }
    }

    /** {@code PRAGMA integrity_check}'s answer: "ok", or the problems it found. */
    String integrityCheck() {
        return String.join("; ", strings("PRAGMA integrity_check"));
    }

    /** Rows that break a foreign key; empty when every reference holds. */
    List<String> foreignKeyViolations() {
        return strings("SELECT \"table\" || ' rowid ' || rowid || ' -> ' || parent FROM pragma_foreign_key_check");
    }

    /** The first column of every row, as text. */
    List<String> strings(String sql) {
        try (Connection c = open(); Statement s = c.createStatement()) {
            return column(s, sql);
        } catch (SQLException e) {
            throw new AssertionError("reading " + file + ": " + sql, e);
        }
    }

    private Connection open() throws SQLException {
        return DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath());
    }

    private static List<String> column(Statement s, String sql) throws SQLException {
        try (ResultSet r = s.executeQuery(sql)) {
            List<String> out = new ArrayList<>();
            while (r.next()) {
                out.add(r.getString(1));
            }
            return out;
        }
    }
}
