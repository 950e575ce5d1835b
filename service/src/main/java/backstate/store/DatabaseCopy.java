package backstate.store;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Clock;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Consumer;
import java.util.stream.Collectors;
import org.postgresql.ds.PGSimpleDataSource;

/**
 * Copies a SQLite database into an empty PostgreSQL database and verifies the copy, for a fleet
 * that moves from one process to replicas. Promised:
 * <ul>
 * <li>Nothing is written anywhere when the SQLite file is missing or not a backstate database, or
 *     when the target already holds rows ({@link DatabaseCopyRefusedException}).</li>
 * <li>Both schemas are brought up to date first, by opening each store as the service does; the
 *     SQLite file's jobs left running by a stopped service are re-queued (attempt kept) or failed
 *     (out of attempts), as the service's own start would, and copied so.</li>
 * <li>All tables are copied in one PostgreSQL transaction, parents first, rows streamed and
 *     inserted in JDBC batches: a failure leaves the target as empty as it was. The target's
 *     queue length is counted by its trigger as jobs are inserted, and checked before commit; the
 *     fleet's running totals are recomputed from the copied rows (fleet_totals_rebuild()).</li>
 * <li>After commit every table is read back on both sides and compared by row count and
 *     checksum ({@link DatabaseCopyChecksum}); {@link Result#verified()} says whether all match.</li>
 * </ul>
 * Run it with no service on either database: the copy locks the target's tables against writers,
 * but a service still running on the SQLite file would go on changing it.
 */
public final class DatabaseCopy {

    /** Rows per JDBC batch. */
    static final int BATCH_ROWS = 500;
    /** A batch is also sent once it holds this much, since one trace's payload can take megabytes. */
    static final long BATCH_BYTES = 32L << 20;

    private static final String LOCK_TARGET = "LOCK TABLE " + DatabaseCopyTable.COPIED.stream()
            .map(DatabaseCopyTable::name).collect(Collectors.joining(", ")) + " IN EXCLUSIVE MODE";
    /** PostgreSQL V2's function: the fleet's running totals from the rows, as its migration filled them. */
    private static final String REBUILD_FLEET_TOTALS = "SELECT fleet_totals_rebuild()";
    private static final String COUNT_QUEUED_BOTH_WAYS =
            "SELECT (SELECT queued FROM queue_length WHERE id = 1), (SELECT count(*) FROM jobs WHERE state = 'queued')";

    /**
     * What a copy did: the jobs found left running (see {@link DatabaseCopySource.LeftRunning}) and
     * each table's verification, in copy order, then queue_length and the fleet totals.
     */
    public record Result(int leftRunningRequeued, int leftRunningFailed, List<DatabaseCopyCheck> checks) {

        public Result {
            checks = List.copyOf(checks);
        }

        /** True when every table's rows and checksum match. */
        public boolean verified() {
            return checks.stream().allMatch(DatabaseCopyCheck::matches);
        }
    }

    private DatabaseCopy() {
    }

    /**
     * Copies {@code sqliteFile} into the empty database {@code target}, then verifies it.
     * {@code progress} gets a line per table copied.
     *
     * @throws DatabaseCopyRefusedException when it would not start (nothing was written)
     * @throws StoreException when the copy failed (the target was left empty) or a database could not be reached
     */
    public static Result copy(Path sqliteFile, PostgresSettings target, Clock clock, Consumer<String> progress) {
        DatabaseCopySource.LeftRunning left = DatabaseCopySource.inspect(sqliteFile, SqliteSettings.DEFAULT_MAX_ATTEMPTS);
        try (ServiceFileLock ignored = lockAgainstAService(sqliteFile)) {
            new PostgresDatabase(target, clock).close();
            withTarget(target, "checking the target is empty", DatabaseCopy::refuseUnlessEmpty);
            new SqliteDatabase(sqliteFile, clock).close();
            copyAll(sqliteFile, target, progress);
            return new Result(left.requeued(), left.failed(), verify(sqliteFile, target));
        }
    }

    /** Held for the whole copy: a live service on the file is refused before anything is written, and none starts meanwhile. */
    private static ServiceFileLock lockAgainstAService(Path sqliteFile) {
        try {
            return ServiceFileLock.acquire(sqliteFile, "migrate");
        } catch (ServiceFileLock.DatabaseInUseException e) {
            throw new DatabaseCopyRefusedException(e.getMessage());
        }
    }

    /** Reads every checked table back on both sides and compares them. */
    static List<DatabaseCopyCheck> verify(Path sqliteFile, PostgresSettings target) {
        try (Connection source = DatabaseCopySource.open(sqliteFile); Connection pg = connect(target)) {
            source.setAutoCommit(false);
            pg.setAutoCommit(false);
            pg.setTransactionIsolation(Connection.TRANSACTION_REPEATABLE_READ);
            pg.setReadOnly(true);
            List<DatabaseCopyCheck> checks = new ArrayList<>();
            for (DatabaseCopyTable table : DatabaseCopyTable.checked()) {
                DatabaseCopyChecksum.Sum from = DatabaseCopyChecksum.of(source, table, Dialect.SQLITE);
                DatabaseCopyChecksum.Sum to = DatabaseCopyChecksum.of(pg, table, Dialect.POSTGRESQL);
                checks.add(new DatabaseCopyCheck(table.name(), from.rows(), to.rows(), from.sha256(), to.sha256()));
            }
            source.rollback();
            pg.rollback();
            return checks;
        } catch (SQLException e) {
            throw new StoreException("verifying the copy failed: " + reason(e), e);
        }
    }

    private static void copyAll(Path sqliteFile, PostgresSettings target, Consumer<String> progress) {
        try (Connection source = DatabaseCopySource.open(sqliteFile)) {
            source.setAutoCommit(false); // one snapshot of the source for every table
            withTarget(target, "copying", pg -> {
                pg.setAutoCommit(false);
                try (Statement s = pg.createStatement()) {
                    s.execute(LOCK_TARGET);
                }
                refuseUnlessEmpty(pg);
                for (DatabaseCopyTable table : DatabaseCopyTable.COPIED) {
                    progress.accept("copied " + table.name() + ": " + copyTable(source, pg, table) + " rows");
                }
                try (Statement s = pg.createStatement()) {
                    s.execute(REBUILD_FLEET_TOTALS);
                }
                progress.accept("recomputed the fleet totals from the copied rows");
                requireQueueLengthCounted(pg);
                pg.commit();
            });
            source.rollback();
        } catch (SQLException e) {
            throw new StoreException("reading " + sqliteFile + " failed: " + reason(e), e);
        }
    }

    /** Streams the table's rows from the source into batched inserts; returns how many. */
    private static long copyTable(Connection source, Connection pg, DatabaseCopyTable table) throws SQLException {
        List<DatabaseCopyTable.Column> columns = table.columns();
        long rows = 0;
        try (PreparedStatement select = source.prepareStatement(table.selectInKeyOrder(Dialect.SQLITE));
             ResultSet rs = select.executeQuery();
             PreparedStatement insert = pg.prepareStatement(table.insert())) {
            int batched = 0;
            long bytes = 0;
            while (rs.next()) {
                for (int i = 0; i < columns.size(); i++) {
                    DatabaseCopyValue kind = columns.get(i).kind();
                    Object value = kind.read(rs, i + 1);
                    kind.bind(insert, i + 1, value);
                    bytes += kind.size(value);
                }
                insert.addBatch();
                rows++;
                if (++batched == BATCH_ROWS || bytes >= BATCH_BYTES) {
                    insert.executeBatch();
                    batched = 0;
                    bytes = 0;
                }
            }
            if (batched > 0) {
                insert.executeBatch();
            }
        } catch (SQLException e) {
            throw new SQLException("table " + table.name() + ": " + reason(e), e.getSQLState(), e);
        }
        return rows;
    }

    private static void refuseUnlessEmpty(Connection pg) throws SQLException {
        for (DatabaseCopyTable table : DatabaseCopyTable.COPIED) {
            try (Statement s = pg.createStatement();
                 ResultSet rs = s.executeQuery(table.selectWhetherAnyRow())) {
                rs.next();
                if (rs.getBoolean(1)) {
                    throw new DatabaseCopyRefusedException("the target already holds rows in " + table.name()
                            + ", expected an empty database (migrate copies into a new database only)");
                }
            }
        }
    }

    /** The trigger counted each queued job as it was inserted; a different count is a bug, so roll back. */
    private static void requireQueueLengthCounted(Connection pg) throws SQLException {
        try (Statement s = pg.createStatement(); ResultSet rs = s.executeQuery(COUNT_QUEUED_BOTH_WAYS)) {
            rs.next();
            if (rs.getLong(1) != rs.getLong(2)) {
                throw new SQLException("queue_length holds " + rs.getLong(1) + " after the copy, expected "
                        + rs.getLong(2) + ", the queued jobs");
            }
        }
    }

    @FunctionalInterface
    private interface TargetWork {
        void run(Connection pg) throws SQLException;
    }

    /** Runs work on a connection of its own; on any failure the open transaction rolls back with the close. */
    private static void withTarget(PostgresSettings target, String doing, TargetWork work) {
        try (Connection pg = connect(target)) {
            work.run(pg);
        } catch (SQLException e) {
            throw new StoreException(doing + " failed: " + reason(e), e);
        }
    }

    /**
     * A plain connection rather than the service's pool: batches of inserts are rewritten into
     * multi-row inserts (reWriteBatchedInserts), several times faster than one round trip a row.
     */
    private static Connection connect(PostgresSettings target) throws SQLException {
        PGSimpleDataSource dataSource = new PGSimpleDataSource();
        dataSource.setURL(target.jdbcUrl());
        dataSource.setUser(target.user());
        if (target.passwordOrNull() != null) {
            dataSource.setPassword(target.passwordOrNull());
        }
        dataSource.setReWriteBatchedInserts(true);
        dataSource.setApplicationName("backstate migrate");
        return dataSource.getConnection();
    }

    /**
     * The failure's first line; for a failed batch, the failure of the row inside it (pgjdbc's
     * own message would repeat the statement with the bound values, payloads included).
     */
    static String reason(SQLException e) {
        SQLException cause = e.getNextException() != null ? e.getNextException() : e;
        String message = cause.getMessage() == null ? cause.getClass().getSimpleName() : cause.getMessage();
        return message.strip().lines().findFirst().orElse(message);
    }
}
