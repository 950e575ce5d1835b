package backstate.store;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import org.sqlite.SQLiteConfig;
import org.sqlite.SQLiteDataSource;

/**
 * The SQLite side of {@link DatabaseCopy}: checks the file is a backstate database before anything
 * writes to it, counts the jobs a stopped service left running, and opens read-only connections.
 */
final class DatabaseCopySource {

    private static final String FIND_JOBS_TABLE = "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'jobs'";
    // Bound with maxAttempts: the rescue on opening re-queues a running job below it and fails the others.
    private static final String COUNT_LEFT_RUNNING =
            "SELECT count(*), coalesce(sum(attempt >= ?), 0) FROM jobs WHERE state = 'running'";

    /** Jobs found running in a file no service has open: a service start re-queues or fails them. */
    record LeftRunning(int requeued, int failed) {
    }

    private DatabaseCopySource() {
    }

    /**
     * The jobs left running in the file, once it is known to be a backstate SQLite database.
     *
     * @throws DatabaseCopyRefusedException naming the file and what is wrong with it
     */
    static LeftRunning inspect(Path file, int maxAttempts) {
        if (!Files.isRegularFile(file)) {
            throw new DatabaseCopyRefusedException("the SQLite file " + file
                    + (Files.isDirectory(file) ? " is a folder, expected a file" : " does not exist"));
        }
        try {
            DatabaseFile.usable(file);
        } catch (IllegalArgumentException e) {
            throw new DatabaseCopyRefusedException(e.getMessage());
        }
        try (Connection c = open(file); Statement s = c.createStatement(); ResultSet tables = s.executeQuery(FIND_JOBS_TABLE)) {
            tables.next();
            if (tables.getInt(1) == 0) {
                throw new DatabaseCopyRefusedException(file + " holds no backstate tables (no table jobs)");
            }
            try (PreparedStatement ps = Sql.bind(c.prepareStatement(COUNT_LEFT_RUNNING), maxAttempts);
                 ResultSet running = ps.executeQuery()) {
                running.next();
                int failed = running.getInt(2);
                return new LeftRunning(running.getInt(1) - failed, failed);
            }
        } catch (SQLException e) {
            throw new DatabaseCopyRefusedException(file + " is not a readable SQLite database: "
                    + DatabaseCopy.reason(e));
        }
    }

    /** A connection that cannot write (query_only), for reading in one transaction's snapshot. */
    static Connection open(Path file) throws SQLException {
        SQLiteConfig config = new SQLiteConfig();
        config.setBusyTimeout((int) SqliteSettings.DEFAULT_BUSY_TIMEOUT.toMillis());
        SQLiteDataSource dataSource = new SQLiteDataSource(config);
        dataSource.setUrl("jdbc:sqlite:" + file.toAbsolutePath());
        Connection c = dataSource.getConnection();
        try (Statement s = c.createStatement()) {
            s.execute("PRAGMA query_only = ON");
        } catch (SQLException e) {
            c.close();
            throw e;
        }
        return c;
    }
}
