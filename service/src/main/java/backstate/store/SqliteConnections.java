package backstate.store;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.ReentrantLock;
import java.util.function.UnaryOperator;
import org.sqlite.SQLiteConfig;
import org.sqlite.SQLiteDataSource;

/**
 * The connections to one SQLite file: a single write connection behind a fair lock, and a fixed
 * set of read connections handed out one caller at a time.
 *
 * <p>sqlite-jdbc connections are not thread-safe and SQLite admits one writer at a time anyway,
 * so writes queue on a Java lock (cheap, fair, and visible in a thread dump) rather than on
 * SQLite's file lock; every write transaction starts with {@code BEGIN IMMEDIATE}, which takes
 * the file's write lock up front so a transaction never fails half-way on a lock upgrade. In WAL
 * mode readers see the last committed snapshot without waiting for the writer. The read set is
 * a plain blocking queue rather than a pool library: local-file connections never go stale, so
 * the validation, eviction and leak hunting a pool offers would have nothing to do.
 *
 * <p>Every connection is opened with the same pragmas: WAL journal, {@code synchronous=FULL}
 * (a commit survives power loss, not just a crash), foreign keys on, and a busy timeout for
 * locks held by other processes. Read connections also set {@code query_only}.
 */
final class SqliteConnections implements AutoCloseable {

    /** How long close() waits for a borrowed read connection to come back before closing anyway. */
    private static final long CLOSE_WAIT_SECONDS = 5;

    private final SQLiteDataSource dataSource;
    private final ReentrantLock writeLock = new ReentrantLock(true);
    private final Connection writer;
    private final List<Connection> allReaders = new ArrayList<>();
    private final BlockingQueue<Connection> idleReaders;
    private volatile boolean closed;

    SqliteConnections(Path file, SqliteSettings settings, UnaryOperator<Connection> writerDecorator) {
        this.dataSource = new SQLiteDataSource(pragmas(settings));
        dataSource.setUrl("jdbc:sqlite:" + file.toAbsolutePath());
        this.idleReaders = new ArrayBlockingQueue<>(settings.readConnections());
        try {
            this.writer = writerDecorator.apply(dataSource.getConnection());
            for (int i = 0; i < settings.readConnections(); i++) {
                Connection reader = openReader();
                allReaders.add(reader);
                idleReaders.add(reader);
            }
        } catch (SQLException e) {
            closeAll();
            throw SqliteErrors.translate(e);
        }
    }

    /** Where Flyway and tests open their own connections, with the same pragmas. */
    SQLiteDataSource dataSource() {
        return dataSource;
    }

    /** Runs read-only work on an idle read connection, outside any explicit transaction. */
    <T> T read(SqlWork<T> work) {
        Connection reader = borrowReader();
        try {
            return work.run(reader);
        } catch (SQLException e) {
            throw SqliteErrors.translate(e);
        } finally {
            idleReaders.add(reader);
        }
    }

    /** Runs work in one write transaction: committed if it returns, rolled back if it throws. */
    <T> T write(SqlWork<T> work) {
        writeLock.lock();
        try {
            requireOpen();
            return inImmediateTransaction(work);
        } catch (SQLException e) {
            throw SqliteErrors.translate(e);
        } finally {
            writeLock.unlock();
        }
    }

    @Override
    public void close() {
        writeLock.lock();
        try {
            if (closed) {
                return;
            }
            closed = true;
            awaitBorrowedReaders();
            closeAll();
        } finally {
            writeLock.unlock();
        }
    }

    private static SQLiteConfig pragmas(SqliteSettings settings) {
        SQLiteConfig config = new SQLiteConfig();
        config.setJournalMode(SQLiteConfig.JournalMode.WAL);
        config.setSynchronous(SQLiteConfig.SynchronousMode.FULL);
        config.enforceForeignKeys(true);
        config.setBusyTimeout((int) settings.busyTimeout().toMillis());
        return config;
    }

    private Connection openReader() throws SQLException {
        Connection reader = dataSource.getConnection();
        try (Statement s = reader.createStatement()) {
            s.execute("PRAGMA query_only = ON");
        }
        return reader;
    }

    private <T> T inImmediateTransaction(SqlWork<T> work) throws SQLException {
        // BEGIN IMMEDIATE is SQLite's; PostgreSQL's plain BEGIN plus row locks does the same job.
        execute("BEGIN IMMEDIATE");
        try {
            T result = work.run(writer);
            execute("COMMIT");
            return result;
        } catch (SQLException | RuntimeException e) {
            rollbackAfter(e);
            throw e;
        }
    }

    private void rollbackAfter(Exception failure) {
        try {
            execute("ROLLBACK");
        } catch (SQLException rollbackFailure) {
            // SQLite rolls back by itself after some errors (SQLITE_FULL among them), and then
            // ROLLBACK reports that no transaction is active: keep it, but as a footnote.
            failure.addSuppressed(rollbackFailure);
        }
    }

    private void execute(String sql) throws SQLException {
        try (Statement s = writer.createStatement()) {
            s.execute(sql);
        }
    }

    private Connection borrowReader() {
        requireOpen();
        try {
            return idleReaders.take();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new StoreException("interrupted while waiting for a read connection", e);
        }
    }

    private void requireOpen() {
        if (closed) {
            throw new IllegalStateException("got a call on a closed store, expected an open one");
        }
    }

    private void awaitBorrowedReaders() {
        try {
            for (int i = 0; i < allReaders.size(); i++) {
                if (idleReaders.poll(CLOSE_WAIT_SECONDS, TimeUnit.SECONDS) == null) {
                    return;
                }
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private void closeAll() {
        List<Connection> all = new ArrayList<>(allReaders);
        if (writer != null) {
            all.add(writer);
        }
        for (Connection c : all) {
            try {
                c.close();
            } catch (SQLException ignored) {
                // Closing is best effort: the data is already committed or rolled back.
            }
        }
    }
}
