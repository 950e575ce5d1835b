package backstate.store;

import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.time.Duration;
import java.util.Objects;
import java.util.concurrent.locks.LockSupport;
import javax.sql.DataSource;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Copies committed pages from the WAL into the database file on a thread and connection of its
 * own, so the copy and its fsync never hold up a batch of writes.
 *
 * <p>SQLite's automatic checkpoint runs inside the COMMIT of whichever write crosses the WAL
 * threshold (1 000 pages by default), on the one write connection that every client write waits
 * for. Here the write connection's threshold is raised to {@link #WRITER_BACKSTOP_PAGES}, and this
 * thread runs {@code PRAGMA wal_checkpoint(PASSIVE)} every {@code interval}: PASSIVE takes no
 * write lock and waits for nobody, copying what readers no longer need. It changes nothing about
 * durability: a commit is durable once its WAL frames are synced (synchronous=FULL), and a
 * checkpoint only moves pages that already are.
 *
 * <p>Under a load without pauses a PASSIVE checkpoint never quite reaches the WAL's end (new
 * frames arrive while it copies), and SQLite restarts the WAL only after a complete one. The
 * backstop bounds that: once the WAL holds {@code WRITER_BACKSTOP_PAGES} pages the writer
 * checkpoints by itself as before, finding most pages already copied, and the WAL starts over.
 */
final class WalCheckpoints implements AutoCloseable {
    /** How often the WAL is copied into the database; about what 1 000 pages take to fill at full ingest. */
    static final Duration DEFAULT_INTERVAL = Duration.ofMillis(200);
    /** 32 MiB of 4 KiB pages: the WAL size at which the writer checkpoints by itself after all. */
    static final int WRITER_BACKSTOP_PAGES = 8192;
    /** How long close() waits for a checkpoint under way. */
    private static final long CLOSE_WAIT_MILLIS = 5_000;

    private static final Logger LOG = LoggerFactory.getLogger(WalCheckpoints.class);

    private final Connection connection;
    private final Duration interval;
    private final SqliteMeters meters;
    private final Thread thread;
    private volatile boolean closed;
    private String lastFailure;

    /** Opens its own connection from {@code dataSource} and starts checkpointing. */
    WalCheckpoints(DataSource dataSource, Duration interval) throws SQLException {
        this(dataSource, interval, SqliteMeters.unpublished());
    }

    /** As above, timing each round in {@code meters}. */
    WalCheckpoints(DataSource dataSource, Duration interval, SqliteMeters meters) throws SQLException {
        this.interval = Objects.requireNonNull(interval, "interval");
        this.meters = Objects.requireNonNull(meters, "meters");
        this.connection = dataSource.getConnection();
        this.thread = new Thread(this::checkpointUntilClosed, "backstate-checkpoint");
        thread.setDaemon(true);
        thread.start();
    }

    /** Sets the write connection's own threshold to the backstop; call once on the raw connection. */
    static void raiseWriterThreshold(Connection writer) throws SQLException {
        try (Statement s = writer.createStatement()) {
            s.execute("PRAGMA wal_autocheckpoint = " + WRITER_BACKSTOP_PAGES);
        }
    }

    /**
     * One PASSIVE checkpoint: SQLite's answer as {busy, frames in the WAL, frames copied}
     * (-1, -1 when the file is not in WAL mode).
     */
    int[] checkpoint() throws SQLException {
        synchronized (connection) {
            long start = System.nanoTime();
            try (Statement s = connection.createStatement();
                 ResultSet rs = s.executeQuery("PRAGMA wal_checkpoint(PASSIVE)")) {
                rs.next();
                int[] answer = {rs.getInt(1), rs.getInt(2), rs.getInt(3)};
                meters.checkpointed(System.nanoTime() - start, answer[1]);
                return answer;
            }
        }
    }

    private void checkpointUntilClosed() {
        while (!closed) {
            LockSupport.parkNanos(this, interval.toNanos());
            if (closed) {
                return;
            }
            try {
                checkpoint();
                if (lastFailure != null) {
                    LOG.info("WAL checkpoints work again");
                    lastFailure = null;
                }
            } catch (SQLException e) {
                // Busy (another process's lock) or full disk: the writes report it to their
                // callers; here it is said once, and the next round tries again.
                String reason = SqliteErrors.translate(e).getMessage();
                if (!reason.equals(lastFailure)) {
                    LOG.warn("WAL checkpoint failed, retrying every {}: {}", interval, reason);
                    lastFailure = reason;
                }
            }
        }
    }

    @Override
    public void close() {
        closed = true;
        LockSupport.unpark(thread);
        try {
            thread.join(CLOSE_WAIT_MILLIS);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
        synchronized (connection) {
            try {
                connection.close();
            } catch (SQLException ignored) {
                // Best effort: whatever the WAL holds is committed and stays readable.
            }
        }
    }
}
