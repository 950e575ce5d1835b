package backstate.store;

import backstate.jobs.JobQueue;
import io.micrometer.core.instrument.MeterRegistry;
import java.time.Clock;

/**
 * One PostgreSQL database and its stores, shared by any number of service replicas. The
 * aggregate classes and their statements are the same as on SQLite ({@link Dialect} holds the few
 * fragments that differ); what differs is around them: pooled connections with concurrent
 * transactions ({@link PostgresConnections}), claims that skip rows other replicas hold, leases
 * instead of a start-up rescue (another replica's running jobs are live work, not leftovers), and
 * NOTIFY to wake idle workers of every replica ({@link PostgresNotifications}).
 *
 * <p>Opening migrates the schema (Flyway serialises replicas starting together with an advisory
 * lock). It does not need the server to be up when the migration has run before: a replica that
 * starts during an outage fails its start, since it cannot know the schema is current.
 */
public final class PostgresDatabase implements Database {

    private final PostgresConnections db;
    private final PostgresNotifications notifications;
    private final SqlModels models;
    private final SqlSubmissions traces;
    private final SqlJobs jobs;
    private final SqlEstimates estimates;
    private final SqlFleet fleet;
    private final SqlApiKeys keys;
    private final SqlRegressions regressions;

    public PostgresDatabase(PostgresSettings settings, Clock clock) {
        this(settings, clock, null);
    }

    /** With {@code registryOrNull}, the connection pool's meters are published in it. */
    public PostgresDatabase(PostgresSettings settings, Clock clock, MeterRegistry registryOrNull) {
        Expect.notNull("settings", settings);
        Expect.notNull("clock", clock);
        this.db = new PostgresConnections(settings, registryOrNull);
        try {
            migrate(settings);
            this.models = new SqlModels(db);
            this.traces = new SqlSubmissions(db);
            this.jobs = new SqlJobs(db, clock, settings.maxAttempts());
            this.estimates = new SqlEstimates(db);
            this.fleet = new SqlFleet(db);
            this.keys = new SqlApiKeys(db);
            this.regressions = new SqlRegressions(db);
            this.notifications = new PostgresNotifications(settings);
        } catch (RuntimeException e) {
            db.close();
            throw e;
        }
    }

    /**
     * Flyway reports an unreachable server as the pool's timeout; the cause at the bottom of the
     * chain (connection refused, unknown host, authentication failed, no such database) is what
     * an operator needs, so the failure names it and the server.
     */
    private void migrate(PostgresSettings settings) {
        try {
            Migrations.migrate(db.dataSource(), Migrations.POSTGRESQL);
        } catch (StoreException e) {
            Throwable root = e;
            while (root.getCause() != null && root.getCause() != root) {
                root = root.getCause();
            }
            throw new StoreException("opening the PostgreSQL database " + settings.jdbcUrl() + " as " + settings.user()
                    + " failed: " + root.getMessage(), e);
        }
    }

    @Override
    public ModelCatalogue models() {
        return models;
    }

    @Override
    public TraceIntakeStore traces() {
        return traces;
    }

    @Override
    public JobQueue queue() {
        return jobs;
    }

    @Override
    public JobStore jobs() {
        return jobs;
    }

    @Override
    public EstimateStore estimates() {
        return estimates;
    }

    @Override
    public FleetStore fleet() {
        return fleet;
    }

    @Override
    public ApiKeyStore keys() {
        return keys;
    }

    @Override
    public RegressionStore regressions() {
        return regressions;
    }

    @Override
    public boolean sharedByReplicas() {
        return true;
    }

    @Override
    public void onJobsQueued(Runnable wakeUp) {
        notifications.onJobsQueued(wakeUp);
    }

    @Override
    public boolean isReachable() {
        try {
            return db.read(c -> Sql.firstOrNull(c.prepare("SELECT 1"), rs -> true) != null);
        } catch (RuntimeException e) {
            return false;
        }
    }

    @Override
    public void close() {
        notifications.close();
        db.close();
    }
}
