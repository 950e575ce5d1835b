package backstate.store;

import backstate.jobs.NewEstimate;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobQueue;
import java.nio.file.Path;
import java.sql.Connection;
import java.time.Clock;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import java.util.function.UnaryOperator;

/**
 * {@link Store} and {@link JobQueue} on one SQLite file.
 *
 * <p>Construction opens the file, migrates the schema with Flyway, and rescues every job left
 * {@code running}: only one process serves a file, so such a job was abandoned by a crash or a
 * shutdown that timed out.
 *
 * <p>Connections ({@link SqliteConnections}): one write connection, on which the writes waiting
 * at any moment are committed together in one {@code BEGIN IMMEDIATE} transaction, a savepoint
 * each, job-queue writes first ({@link SqliteWriter}: group commit); and a fixed set of read
 * connections that WAL lets read alongside the writer. The statements live with the rows
 * they serve ({@link SqliteModels}, {@link SqliteSubmissions}, {@link SqliteJobs},
 * {@link SqliteEstimates}); this class only routes calls to them.
 */
public final class SqliteStore implements Store, JobQueue {

    private final SqliteConnections db;
    private final SqliteModels models;
    private final SqliteSubmissions submissions;
    private final SqliteJobs jobs;
    private final SqliteEstimates estimates;

    public SqliteStore(Path file, Clock clock) {
        this(file, clock, SqliteSettings.defaults());
    }

    public SqliteStore(Path file, Clock clock, SqliteSettings settings) {
        this(file, clock, settings, UnaryOperator.identity());
    }

    /** For fault tests: {@code writerDecorator} wraps the write connection once it is open. */
    SqliteStore(Path file, Clock clock, SqliteSettings settings, UnaryOperator<Connection> writerDecorator) {
        Expect.notNull("file", file);
        Expect.notNull("clock", clock);
        Expect.notNull("settings", settings);
        this.db = new SqliteConnections(file, settings, writerDecorator);
        try {
            SqliteMigrations.migrate(db.dataSource());
            this.models = new SqliteModels(db);
            this.submissions = new SqliteSubmissions(db);
            this.jobs = new SqliteJobs(db, clock, settings.maxAttempts());
            this.estimates = new SqliteEstimates(db);
            jobs.rescueAllRunning();
        } catch (RuntimeException e) {
            db.close();
            throw e;
        }
    }

    // ---- Store: models

    @Override
    public boolean createFamily(String name, String description, Instant now) {
        return models.createFamily(name, description, now);
    }

    @Override
    public Optional<FamilyRow> findFamily(String name) {
        return models.findFamily(name);
    }

    @Override
    public List<FamilyRow> listFamilies() {
        return models.listFamilies();
    }

    @Override
    public ModelVersionRow publishVersion(NewModelVersion v, Instant now) {
        return models.publishVersion(v, now);
    }

    @Override
    public Optional<ModelVersionRow> findVersion(String family, int version) {
        return models.findVersion(family, version);
    }

    @Override
    public List<ModelVersionRow> listVersions(String family) {
        return models.listVersions(family);
    }

    @Override
    public boolean retireVersion(String family, int version) {
        return models.retireVersion(family, version);
    }

    // ---- Store: traces, jobs, estimates

    @Override
    public Submission submitTrace(NewTrace trace, IdempotencyKey idempotencyKeyOrNull, int maxQueued, Instant now)
            throws QueueFullException {
        return submissions.submitTrace(trace, idempotencyKeyOrNull, maxQueued, now);
    }

    @Override
    public Optional<TraceRow> findTrace(String id) {
        return submissions.findTrace(id);
    }

    @Override
    public Optional<JobRow> findJob(String id) {
        return jobs.findJob(id);
    }

    @Override
    public boolean cancelIfQueued(String jobId, Instant now) {
        return jobs.cancelIfQueued(jobId, now);
    }

    @Override
    public Optional<EstimateRow> latestEstimate(String unitId) {
        return estimates.latestEstimate(unitId);
    }

    @Override
    public EstimatePage estimateHistory(String unitId, EstimateFilter filter, String cursorOrNull, int limit) {
        return estimates.estimateHistory(unitId, filter, cursorOrNull, limit);
    }

    @Override
    public Optional<EstimateRow> findEstimate(String id) {
        return estimates.findEstimate(id);
    }

    @Override
    public Optional<EstimateRow> findEstimateForJob(String jobId) {
        return estimates.findEstimateForJob(jobId);
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
        db.close();
    }

    // ---- JobQueue

    @Override
    public List<ClaimedJob> claimNext(int limit, Instant now) {
        return jobs.claimNext(limit, now);
    }

    @Override
    public boolean completeIfRunning(String jobId, int attempt, NewEstimate estimateOrNull, String resultJsonOrNull,
                                     Instant now) {
        return jobs.completeIfRunning(jobId, attempt, estimateOrNull, resultJsonOrNull, now);
    }

    @Override
    public boolean failIfRunning(String jobId, int attempt, String error, String detailsJsonOrNull, Instant now) {
        return jobs.failIfRunning(jobId, attempt, error, detailsJsonOrNull, now);
    }

    @Override
    public boolean retryIfRunning(String jobId, int attempt, String error, Instant now) {
        return jobs.retryIfRunning(jobId, attempt, error, now);
    }

    @Override
    public boolean reportProgress(String jobId, int attempt, int done, int total) {
        return jobs.reportProgress(jobId, attempt, done, total);
    }

    @Override
    public int rescueStuck(Instant startedBefore) {
        return jobs.rescueStuck(startedBefore);
    }

    @Override
    public int queuedCount() {
        return jobs.queuedCount();
    }

    @Override
    public String enqueue(String kind, String traceIdOrNull, String paramsJsonOrNull, Instant now) {
        return jobs.enqueue(kind, traceIdOrNull, paramsJsonOrNull, now);
    }

    // ---- Store: API keys

    @Override
    public boolean insertApiKey(NewApiKey key, Instant now) {
        return SqliteApiKeys.insertApiKey(db, key, now);
    }

    @Override
    public Optional<ApiKeyRow> findApiKey(String id) {
        return SqliteApiKeys.findApiKey(db, id);
    }

    @Override
    public List<ApiKeyRow> listApiKeys() {
        return SqliteApiKeys.listApiKeys(db);
    }

    @Override
    public KeyRevocation revokeApiKey(String id, Instant now) {
        return SqliteApiKeys.revokeApiKey(db, id, now);
    }

    @Override
    public boolean hasActiveAdminKey() {
        return SqliteApiKeys.hasActiveAdminKey(db);
    }

    @Override
    public Optional<String> unitOfJob(String jobId) {
        return SqliteApiKeys.unitOfJob(db, jobId);
    }

    // ---- Store: regression runs

    @Override
    public List<TraceRef> selectTraces(TraceSelection selection) {
        return SqliteRegressions.selectTraces(db, selection);
    }

    @Override
    public String createRegression(NewRegression regression, int maxQueued, Instant now) throws QueueFullException {
        return SqliteRegressions.createRegression(db, regression, maxQueued, now);
    }

    @Override
    public Optional<RegressionRow> findRegression(String id) {
        return SqliteRegressions.findRegression(db, id);
    }

    @Override
    public RegressionPage listRegressions(String familyOrNull, String cursorOrNull, int limit) {
        return SqliteRegressions.listRegressions(db, familyOrNull, cursorOrNull, limit);
    }

    @Override
    public boolean requestRegressionCancel(String id, Instant now) {
        return SqliteRegressions.requestCancel(db, id, now);
    }

    @Override
    public boolean regressionCancelRequested(String id) {
        return SqliteRegressions.cancelRequested(db, id);
    }

    @Override
    public boolean cancelRegressionIfRunning(String id, int attempt, String resultJsonOrNull, Instant now) {
        return SqliteRegressions.cancelIfRunning(db, id, attempt, resultJsonOrNull, now);
    }

    // ---- Store: fleet views

    @Override
    public FleetSummary fleetSummary(FleetSummaryQuery query) {
        return SqliteFleet.summary(db, query);
    }

    @Override
    public UnitPage fleetUnits(UnitFilter filter, UnitSort sort, String cursorOrNull, int limit) {
        return SqliteFleet.units(db, filter, sort, cursorOrNull, limit);
    }

    @Override
    public List<StatePoint> stateTrend(String unitId, String state, String family, Integer versionOrNull, TimeFilter times,
                                       int limit) {
        return SqliteFleet.stateTrend(db, unitId, state, family, versionOrNull, times, limit);
    }
}
