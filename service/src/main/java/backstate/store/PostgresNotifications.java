package backstate.store;

import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.List;
import java.util.Properties;
import java.util.concurrent.CopyOnWriteArrayList;
import org.postgresql.PGConnection;
import org.postgresql.PGNotification;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Listens on the channel the schema's queue trigger notifies when a job joins the queue
 * ({@code backstate_jobs}) and runs the registered wake-ups, so an idle worker of any replica
 * claims a job queued by another at once. One connection of its own, outside the pool (a
 * listening connection must stay the same session); reconnects after a failure. A lost
 * notification costs only latency: workers also poll.
 */
final class PostgresNotifications implements AutoCloseable {

    static final String CHANNEL = "backstate_jobs";
    private static final int WAIT_MILLIS = 1000;
    private static final long RECONNECT_PAUSE_MILLIS = 1000;
    private static final Logger LOG = LoggerFactory.getLogger(PostgresNotifications.class);

    private final PostgresSettings settings;
    private final List<Runnable> wakeUps = new CopyOnWriteArrayList<>();
    private final Thread listener;
    private volatile boolean closed;
    private volatile Connection connection;

    PostgresNotifications(PostgresSettings settings) {
        this.settings = settings;
        this.listener = new Thread(this::listenUntilClosed, "backstate-listen");
        listener.setDaemon(true);
        listener.start();
    }

    void onJobsQueued(Runnable wakeUp) {
        wakeUps.add(wakeUp);
    }

    @Override
    public void close() {
        closed = true;
        listener.interrupt();
        closeQuietly(connection);
        try {
            listener.join(WAIT_MILLIS * 2L);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private void listenUntilClosed() {
        while (!closed) {
            try (Connection c = connect()) {
                connection = c;
                try (Statement s = c.createStatement()) {
                    s.execute("LISTEN " + CHANNEL);
                }
                wakeAll(); // jobs may have been queued while this connection was down
                PGConnection pg = c.unwrap(PGConnection.class);
                while (!closed) {
                    PGNotification[] received = pg.getNotifications(WAIT_MILLIS);
                    if (received != null && received.length > 0) {
                        wakeAll();
                    }
                }
            } catch (SQLException | RuntimeException e) {
                if (!closed) {
                    LOG.debug("listening for queued jobs failed; reconnecting", e);
                    pause();
                }
            }
        }
    }

    private Connection connect() throws SQLException {
        Properties properties = new Properties();
        properties.setProperty("user", settings.user());
        if (settings.passwordOrNull() != null) {
            properties.setProperty("password", settings.passwordOrNull());
        }
        properties.setProperty("ApplicationName", "backstate-listen");
        properties.setProperty("connectTimeout", Long.toString(Math.max(1, settings.connectionTimeout().toSeconds())));
        properties.setProperty("tcpKeepAlive", "true");
        return DriverManager.getConnection(settings.jdbcUrl(), properties);
    }

    private void wakeAll() {
        for (Runnable wakeUp : wakeUps) {
            wakeUp.run();
        }
    }

    private void pause() {
        try {
            Thread.sleep(RECONNECT_PAUSE_MILLIS);
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
            // Closing is best effort.
        }
    }
}
