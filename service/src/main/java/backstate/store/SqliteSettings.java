package backstate.store;

import java.time.Duration;

/**
 * Tuning for {@link SqliteDatabase}.
 *
 * @param readConnections connections kept for reads; WAL lets them read while the one writer writes
 * @param busyTimeout     how long a statement waits for a lock held by another process before
 *                        the store reports itself unavailable
 * @param maxAttempts     attempts a job gets before a crash or an exception fails it for good
 */
public record SqliteSettings(int readConnections, Duration busyTimeout, int maxAttempts) {

    /** Two cores serve us; four readers keep HTTP reads from queueing behind one another. */
    public static final int DEFAULT_READ_CONNECTIONS = 4;
    /** Long enough to ride out a checkpoint or another process's short write. */
    public static final Duration DEFAULT_BUSY_TIMEOUT = Duration.ofSeconds(5);
    /** One first try and two retries: enough for a crash or a transient fault, not for a poison job. */
    public static final int DEFAULT_MAX_ATTEMPTS = 3;

    public SqliteSettings {
        Expect.atLeast("readConnections", readConnections, 1);
        Expect.notNull("busyTimeout", busyTimeout);
        if (busyTimeout.isNegative() || busyTimeout.toMillis() > Integer.MAX_VALUE) {
            throw new IllegalArgumentException("got busyTimeout " + busyTimeout
                    + ", expected between 0 and " + Integer.MAX_VALUE + " ms");
        }
        Expect.atLeast("maxAttempts", maxAttempts, 1);
    }

    public static SqliteSettings defaults() {
        return new SqliteSettings(DEFAULT_READ_CONNECTIONS, DEFAULT_BUSY_TIMEOUT, DEFAULT_MAX_ATTEMPTS);
    }
}
