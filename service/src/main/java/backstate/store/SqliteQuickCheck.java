package backstate.store;

import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import javax.sql.DataSource;
import org.sqlite.ProgressHandler;
import org.sqlite.SQLiteConnection;

/**
 * The start's integrity check of a SQLite file: {@code PRAGMA quick_check}, which reads every
 * page of every table and index (O(file size): roughly the time to read the file once, about a
 * second per few hundred MB from a warm cache) but skips the index-content cross-check of
 * {@code integrity_check}. It is bounded in time: past {@link #DEFAULT_BUDGET} SQLite's progress
 * handler interrupts it and the file counts as not checked, not as damaged.
 */
final class SqliteQuickCheck {
    /** Longer than a quick check of a file of a few GB takes from disk; a start never waits longer. */
    static final Duration DEFAULT_BUDGET = Duration.ofSeconds(20);
    /** SQLite virtual-machine steps between looks at the clock. */
    private static final int STEPS_PER_LOOK = 100_000;
    /** At most this many problems are listed; one is enough to be not ready. */
    private static final String QUICK_CHECK = "PRAGMA quick_check(5)";

    private SqliteQuickCheck() {
    }

    /** Null when the file is sound (or the check ran out of time); otherwise what SQLite found, on one line. */
    static String damageOrNull(DataSource dataSource, Duration budget) {
        long deadline = System.nanoTime() + budget.toNanos();
        try (Connection c = dataSource.getConnection()) {
            ProgressHandler.setHandler(c.unwrap(SQLiteConnection.class), STEPS_PER_LOOK, new ProgressHandler() {
                @Override
                protected int progress() {
                    return System.nanoTime() - deadline > 0 ? 1 : 0;
                }
            });
            return run(c);
        } catch (SQLException e) {
            if (System.nanoTime() - deadline > 0) {
                return null; // interrupted by the budget: not checked
            }
            StoreException translated = SqliteErrors.translate(e);
            if (translated instanceof CorruptDataException) {
                return translated.getMessage();
            }
            throw translated;
        }
    }

    private static String run(Connection c) throws SQLException {
        StringBuilder found = new StringBuilder();
        try (Statement s = c.createStatement(); ResultSet rs = s.executeQuery(QUICK_CHECK)) {
            while (rs.next()) {
                String line = rs.getString(1);
                if (!"ok".equals(line)) {
                    found.append(found.isEmpty() ? "" : "; ").append(line);
                }
            }
        }
        return found.isEmpty() ? null : "quick_check: " + found;
    }
}
