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
import java.util.function.Supplier;
import java.util.function.UnaryOperator;
import org.sqlite.SQLiteConfig;
import org.sqlite.SQLiteDataSource;

/**
 * The connections to one SQLite file: a single write connection owned by the writer thread of
 * {@link SqliteWriter}, which commits the writes waiting at any moment together (group commit),
 * and a fixed set of read connections handed out one caller at a time. Work on either sees a
 * connection only as its {@link Statements}.
 *
 * <p>SQLite admits one writer at a time, so writes queue in Java (cheap, and visible in a thread
 * dump) rather than on SQLite's file lock; every write transaction starts with
 * {@code BEGIN IMMEDIATE}, which takes the file's write lock up front so a transaction never
 * fails half-way on a lock upgrade. In WAL mode readers see the last committed snapshot without
 * waiting for the writer. The read set is a plain blocking queue rather than a pool library:
 * local-file connections never go stale, so the validation, eviction and leak hunting a pool
 * offers would have nothing to do.
 *
 * <p>Every connection is opened with the same pragmas: WAL journal, {@code synchronous=FULL}
 * (a commit survives power loss, not just a crash), foreign keys on, and a busy timeout for
 * locks held by other processes. Read connections also set {@code query_only}. Checkpoints run
 * on a connection and thread of their own ({@link WalCheckpoints}), not in the writer's commits.
 */
final class SqliteConnections implements Connections {

    /** The WAL file's size kept after a checkpoint restarts it: 4 MiB (SQLite keeps the largest without a limit). */
    static final int JOURNAL_SIZE_LIMIT_BYTES = 4 << 20;
    /** How long close() waits for a borrowed read connection to come back before closing anyway. */
    private static final long CLOSE_WAIT_SECONDS = 5;

    private final SQLiteDataSource dataSource;
    private final SqliteWriter writer;
    private final WalCheckpoints checkpoints;
    private final List<Connection> allReaders = new ArrayList<>();
    /** Idle read connections, each with its statements, kept compiled across reads as the writer's are. */
    private final BlockingQueue<Statements> idleReaders;
    private final DamageLatch damage = new DamageLatch();
    /** The file opened, checked after every write ({@link SqliteFileIdentity}); null where it cannot be told. */
    private final SqliteFileIdentity opened;
    private volatile boolean closed;

    SqliteConnections(Path file, SqliteSettings settings, UnaryOperator<Connection> writerDecorator,
                      SqliteMeters meters) {
        this.dataSource = new SQLiteDataSource(pragmas(settings));
        dataSource.setUrl("jdbc:sqlite:" + file.toAbsolutePath());
        this.idleReaders = new ArrayBlockingQueue<>(settings.readConnections());
        Connection writerConnection = null;
        WalCheckpoints checkpointer = null;
        try {
            Connection raw = dataSource.getConnection();
            writerConnection = raw;
            WalCheckpoints.raiseWriterThreshold(raw);
            writerConnection = writerDecorator.apply(raw);
            for (int i = 0; i < settings.readConnections(); i++) {
                Connection reader = openReader();
                allReaders.add(reader);
                idleReaders.add(new Statements(reader));
            }
            checkpointer = new WalCheckpoints(dataSource, WalCheckpoints.DEFAULT_INTERVAL, meters);
        } catch (SQLException e) {
            closeQuietly(writerConnection);
            allReaders.forEach(SqliteConnections::closeQuietly);
            throw SqliteErrors.translate(e);
        }
        this.checkpoints = checkpointer;
        this.writer = new SqliteWriter(writerConnection, meters);
        this.opened = SqliteFileIdentity.of(file.toAbsolutePath());
    }

    /** Where Flyway and tests open their own connections, with the same pragmas. */
    SQLiteDataSource dataSource() {
        return dataSource;
    }

    @Override
    public Dialect dialect() {
        return Dialect.SQLITE;
    }

    /** Runs read-only work on an idle read connection, outside any explicit transaction. */
    @Override
    public <T> T read(SqlWork<T> work) {
        Statements reader = borrowReader();
        try {
            return work.run(reader);
        } catch (SQLException e) {
            reader.close(); // SQLite may have left a statement mid-step: compile afresh next time
            throw damage.noted(SqliteErrors.translate(e));
        } catch (RuntimeException | Error e) {
            reader.close();
            throw e;
        } finally {
            idleReaders.add(reader);
        }
    }

    /**
     * Runs read-only work that needs one consistent view over several statements in a read
     * transaction: in WAL mode it sees the database as of its first read, so figures read
     * together agree even while writes commit. (PostgreSQL: REPEATABLE READ.)
     */
    @Override
    public <T> T readInOneSnapshot(SqlWork<T> work) {
        return read(reader -> {
            reader.connection().setAutoCommit(false);
            try {
                return work.run(reader);
            } finally {
                reader.connection().rollback();
                reader.connection().setAutoCommit(true);
            }
        });
    }

    /**
     * Runs work in a write transaction, shared with other waiting writes but rolled back alone if
     * it throws; returns once the transaction has committed.
     */
    @Override
    public <T> T write(SqlWork<T> work) {
        return committed(() -> writer.write(work));
    }

    /**
     * As {@link #write}, for the job queue's consumers (claim, complete, fail, retry, progress,
     * rescue): ahead of client writes, so a burst of posts cannot starve the workers.
     */
    @Override
    public <T> T writeForWorker(SqlWork<T> work) {
        return committed(() -> writer.writeForWorker(work));
    }

    /**
     * A write through the writer, its damage noted, and checked once committed to have gone to the
     * file the path still names: one committed to a file deleted or replaced is lost at the next
     * start, so it is not acknowledged.
     */
    private <T> T committed(Supplier<T> write) {
        T result;
        try {
            result = write.get();
        } catch (StoreException e) {
            throw damage.noted(e);
        }
        if (opened != null) {
            opened.requireSame();
        }
        return result;
    }

    /** True while the path still names the file opened (or where that cannot be told). */
    boolean fileInPlace() {
        return opened == null || opened.same();
    }

    /** The first damage to the file SQLite reported since it was opened; null while none was. */
    String damageReportedOrNull() {
        return damage.firstOrNull();
    }

    @Override
    public synchronized void close() {
        if (closed) {
            return;
        }
        closed = true;
        checkpoints.close();
        writer.close();
        awaitBorrowedReaders();
        allReaders.forEach(SqliteConnections::closeQuietly);
    }

    private static SQLiteConfig pragmas(SqliteSettings settings) {
        SQLiteConfig config = new SQLiteConfig();
        config.setJournalMode(SQLiteConfig.JournalMode.WAL);
        config.setSynchronous(SQLiteConfig.SynchronousMode.FULL);
        config.enforceForeignKeys(true);
        config.setBusyTimeout((int) settings.busyTimeout().toMillis());
        // A WAL that grew (a long write burst, or retries after a full disk) is cut back to this size at
        // the next checkpoint that restarts it, instead of keeping its largest size on the disk.
        config.setJournalSizeLimit(JOURNAL_SIZE_LIMIT_BYTES);
        // No key is read back (IDs are made in Java): without this sqlite-jdbc compiles and runs
        // "SELECT last_insert_rowid()" after every INSERT and UPDATE.
        config.setGetGeneratedKeys(false);
        return config;
    }

    private Connection openReader() throws SQLException {
        Connection reader = dataSource.getConnection();
        try (Statement s = reader.createStatement()) {
            s.execute("PRAGMA query_only = ON");
        }
        return reader;
    }

    private Statements borrowReader() {
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

    private static void closeQuietly(Connection c) {
        try {
            if (c != null) {
                c.close();
            }
        } catch (SQLException ignored) {
            // Closing is best effort: the data is already committed or rolled back.
        }
    }
}
