package backstate.api;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;

/** Reads a test server's SQLite file directly, to check what a request did or did not store. */
final class Database {
    private Database() {
    }

    static long count(Path file, String table) {
        return single(file, "SELECT count(*) FROM " + table);
    }

    static long single(Path file, String sql) {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + file);
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery(sql)) {
            return r.next() ? r.getLong(1) : -1;
        } catch (SQLException e) {
            throw new AssertionError(e);
        }
    }

    /** Rows in traces, jobs and estimates, as one comparable string. */
    static String signature(Path file) {
        return count(file, "traces") + "/" + count(file, "jobs") + "/" + count(file, "estimates")
                + "/" + count(file, "model_versions");
    }
}
