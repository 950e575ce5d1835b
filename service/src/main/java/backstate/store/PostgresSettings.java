package backstate.store;

import java.time.Duration;

/**
 * Where and how {@link PostgresDatabase} connects. The password is never printed: {@link #toString}
 * leaves it out.
 *
 * @param jdbcUrl           {@code jdbc:postgresql://host:port/database[?parameters]}
 * @param user              the role to log in as
 * @param passwordOrNull    null when the server needs none (trust, peer, or a .pgpass file)
 * @param poolSize          connections per replica; the server's max_connections must cover the
 *                          sum over replicas plus one listener connection each
 * @param connectionTimeout how long a request waits for a connection before the store reports
 *                          itself unavailable (HTTP 503 with Retry-After)
 * @param maxAttempts       attempts a job gets before a crash or an exception fails it for good
 */
public record PostgresSettings(String jdbcUrl, String user, String passwordOrNull, int poolSize,
                               Duration connectionTimeout, int maxAttempts) {

    /** Enough for the HTTP reads, the intake and two solving slots on a 2-core replica. */
    public static final int DEFAULT_POOL_SIZE = 8;
    /** Short, so a post during an outage gets its 503 in about a second, not after half a minute. */
    public static final Duration DEFAULT_CONNECTION_TIMEOUT = Duration.ofMillis(1500);

    public PostgresSettings {
        Expect.notBlank("jdbcUrl", jdbcUrl);
        if (!jdbcUrl.startsWith("jdbc:postgresql://")) {
            throw new IllegalArgumentException("got jdbcUrl " + jdbcUrl + ", expected jdbc:postgresql://...");
        }
        Expect.notBlank("user", user);
        Expect.atLeast("poolSize", poolSize, 2);
        Expect.notNull("connectionTimeout", connectionTimeout);
        if (connectionTimeout.toMillis() < 250) {
            throw new IllegalArgumentException("got connectionTimeout " + connectionTimeout + ", expected >= 250 ms");
        }
        Expect.atLeast("maxAttempts", maxAttempts, 1);
    }

    public static PostgresSettings of(String jdbcUrl, String user, String passwordOrNull) {
        return new PostgresSettings(jdbcUrl, user, passwordOrNull, DEFAULT_POOL_SIZE, DEFAULT_CONNECTION_TIMEOUT,
                SqliteSettings.DEFAULT_MAX_ATTEMPTS);
    }

    @Override
    public String toString() {
        return "PostgresSettings[" + jdbcUrl + " as " + user + ", password " + (passwordOrNull == null ? "none" : "set")
                + ", pool " + poolSize + "]";
    }
}
