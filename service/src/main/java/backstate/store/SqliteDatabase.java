package backstate.store;

import backstate.jobs.JobQueue;
import io.micrometer.core.instrument.MeterRegistry;
import java.nio.file.Path;
import java.sql.Connection;
import java.time.Clock;
import java.util.Objects;
import java.util.function.UnaryOperator;

/**
 * One SQLite file and its stores. Opening migrates the schema with Flyway and rescues every job
 * left {@code running}: only one process serves a file, so such a job was abandoned by a crash or
 * a shutdown that timed out.
 *
 * <p>Connections ({@link SqliteConnections}): one write connection owned by the writer thread
 * ({@link SqliteWriter}: group commit, job-queue writes first), and a fixed set of read
 * connections that WAL lets read alongside it. Each aggregate's class holds its named SQL:
 * {@link SqlModels}, {@link SqlSubmissions}, {@link SqlJobs}, {@link SqlEstimates},
 * {@link SqlFleet}, {@link SqlApiKeys}, {@link SqlRegressions}.
 */
public final class SqliteDatabase implements Database {

    private final SqliteConnections db;
    private final SqlModels models;
    private final SqlSubmissions traces;
    private final SqlJobs jobs;
    private final SqlEstimates estimates;
    private final SqlFleet fleet;
    private final SqlApiKeys keys;
    private final SqlRegressions regressions;
    private final String damage;
    /** The service's lock on the file ({@link #forService}), released at close; null otherwise. */
    private final ServiceFileLock serviceLock;

    public SqliteDatabase(Path file, Clock clock) {
        this(file, clock, SqliteSettings.defaults());
    }

    public SqliteDatabase(Path file, Clock clock, SqliteSettings settings) {
        this(file, clock, settings, UnaryOperator.identity(), SqliteMeters.unpublished(), null);
    }

    /**
     * The service's store: the file locked for this process ({@link ServiceFileLock}) before it is
     * opened, so no second service or {@code migrate} runs on it meanwhile, and meters published.
     *
     * @throws ServiceFileLock.DatabaseInUseException when another process holds the file
     */
    public static SqliteDatabase forService(Path file, Clock clock, MeterRegistry registry) {
        ServiceFileLock lock = ServiceFileLock.acquire(file, "a service");
        try {
            return new SqliteDatabase(file, clock, SqliteSettings.defaults(), UnaryOperator.identity(),
                    new SqliteMeters(Objects.requireNonNull(registry, "registry")), lock);
        } catch (RuntimeException e) {
            lock.close();
            throw e;
        }
    }

    /** With the writer's and checkpointer's meters ({@link SqliteMeters}) published in {@code registry}. */
    public SqliteDatabase(Path file, Clock clock, MeterRegistry registry) {
        this(file, clock, SqliteSettings.defaults(), UnaryOperator.identity(),
                new SqliteMeters(Objects.requireNonNull(registry, "registry")), null);
    }

    /** For fault tests: {@code writerDecorator} wraps the write connection once it is open. */
    SqliteDatabase(Path file, Clock clock, SqliteSettings settings, UnaryOperator<Connection> writerDecorator) {
        this(file, clock, settings, writerDecorator, SqliteMeters.unpublished(), null);
    }

    private SqliteDatabase(Path file, Clock clock, SqliteSettings settings, UnaryOperator<Connection> writerDecorator,
                           SqliteMeters meters, ServiceFileLock serviceLockOrNull) {
        Expect.notNull("file", file);
        this.serviceLock = serviceLockOrNull;
        Expect.notNull("clock", clock);
        Expect.notNull("settings", settings);
        this.db = new SqliteConnections(file, settings, writerDecorator, meters);
        try {
            this.damage = SqliteQuickCheck.damageOrNull(db.dataSource(), SqliteQuickCheck.DEFAULT_BUDGET);
            Migrations.migrate(db.dataSource(), Migrations.SQLITE);
            this.models = new SqlModels(db);
            this.traces = new SqlSubmissions(db);
            this.jobs = new SqlJobs(db, clock, settings.maxAttempts());
            this.estimates = new SqlEstimates(db);
            this.fleet = new SqlFleet(db);
            this.keys = new SqlApiKeys(db);
            this.regressions = new SqlRegressions(db);
            jobs.rescueAllRunning();
        } catch (RuntimeException e) {
            db.close();
            throw e;
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

    /**
     * What the start's {@code PRAGMA quick_check} found ({@link SqliteQuickCheck}), else the first
     * damage SQLite reported since ({@link DamageLatch}); null while neither found any.
     */
    @Override
    public String damageOrNull() {
        return damage != null ? damage : db.damageReportedOrNull();
    }

    @Override
    public boolean sharedByReplicas() {
        return false;
    }

    @Override
    public boolean isReachable() {
        if (!db.fileInPlace()) {
            return false; // deleted or replaced under the service: what it writes now is lost at the next start
        }
        try {
            return db.read(c -> Sql.firstOrNull(c.prepare("SELECT 1"), rs -> true) != null);
        } catch (RuntimeException e) {
            return false;
        }
    }

    @Override
    public void close() {
        try {
            db.close();
        } finally {
            if (serviceLock != null) {
                serviceLock.close();
            }
        }
    }
}
