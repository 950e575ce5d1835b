package backstate.store;

import backstate.jobs.NewEstimate;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobQueue;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.type.TypeReference;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Clock;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import java.util.Set;

/**
 * The job queue's named statements, after River: claim in one statement, and change a claimed
 * job only {@code WHERE state = 'running' AND attempt = ?}, so zero rows means the job was
 * taken from the caller (rescued, or finished by another attempt) and nothing is overwritten.
 */
final class SqlJobs implements JobQueue, JobStore {

    static final String KIND_ESTIMATE = "estimate";
    static final Set<String> KINDS = Set.of(KIND_ESTIMATE, "regression");

    private static final String JOB_COLUMNS = "id, kind, state, trace_id, params_json, result_json, attempt,"
            + " created_at, started_at, finished_at, errors, progress_done, progress_total, failure_json";
    // Back to the queue while attempts remain, otherwise failed for good; bound as
    // (maxAttempts, maxAttempts, now).
    private static final String REQUEUE_OR_FAIL = "state = CASE WHEN attempt < ? THEN 'queued' ELSE 'failed' END,"
            + " finished_at = CASE WHEN attempt < ? THEN NULL ELSE ? END";
    private static final String RESCUE_MESSAGE = "rescued: left running by a worker that crashed, stopped or hung";

    // Kept by the triggers of V6__queue_length.sql in the same transaction as every job change.
    private static final String COUNT_QUEUED = "SELECT queued FROM queue_length WHERE id = 1";
    private static final String INSERT_JOB = "INSERT INTO jobs (id, kind, state, trace_id, params_json, attempt,"
            + " created_at, progress_done, progress_total) VALUES (?, ?, 'queued', ?, ?, 0, ?, 0, 0)";
    private static final String FIND_JOB = "SELECT " + JOB_COLUMNS + " FROM jobs WHERE id = ?";
    private static final String CANCEL_IF_QUEUED =
            "UPDATE jobs SET state = 'cancelled', finished_at = ? WHERE id = ? AND state = 'queued'";
    private static final String COMPLETE_IF_RUNNING = "UPDATE jobs SET state = 'succeeded', finished_at = ?,"
            + " result_json = ? WHERE id = ? AND state = 'running' AND attempt = ?";
    private static final String REPORT_PROGRESS = "UPDATE jobs SET progress_done = ?, progress_total = ?"
            + " WHERE id = ? AND state = 'running' AND attempt = ?";
    private static final String RENEW_LEASE = "UPDATE jobs SET lease_expires_at = ?"
            + " WHERE id = ? AND state = 'running' AND attempt = ?";
    private static final String LEASE_MESSAGE =
            "rescued: its lease ran out (the worker holding it crashed, was killed or lost the database)";

    // Statements with an engine-specific fragment (Dialect), built once per store.
    // RETURNING gives the claimed rows in no particular order on either engine.
    private final String claimNext;
    private final String failIfRunning;
    private final String retryIfRunning;
    private final String rescueStuck;
    private final String rescueExpiredLeases;

    private static final TypeReference<List<String>> STRING_LIST = new TypeReference<>() {
    };

    private final Connections db;
    private final Clock clock;
    private final int maxAttempts;
    private final ObjectMapper json = new ObjectMapper();

    SqlJobs(Connections db, Clock clock, int maxAttempts) {
        String appendError = db.dialect().appendError();
        this.claimNext = "UPDATE jobs SET state = 'running', attempt = attempt + 1, started_at = ?,"
                + " lease_expires_at = ? WHERE " + db.dialect().jobsToClaim()
                + " RETURNING id, kind, trace_id, params_json, attempt";
        this.failIfRunning = "UPDATE jobs SET state = 'failed', finished_at = ?, failure_json = ?, errors = "
                + appendError + " WHERE id = ? AND state = 'running' AND attempt = ?";
        this.retryIfRunning = "UPDATE jobs SET " + REQUEUE_OR_FAIL + ", errors = " + appendError
                + " WHERE id = ? AND state = 'running' AND attempt = ?";
        this.rescueStuck = "UPDATE jobs SET " + REQUEUE_OR_FAIL + ", errors = " + appendError
                + " WHERE state = 'running' AND started_at < ?";
        this.rescueExpiredLeases = "UPDATE jobs SET " + REQUEUE_OR_FAIL + ", errors = " + appendError
                + " WHERE state = 'running' AND lease_expires_at < ?";
        this.db = db;
        this.clock = clock;
        this.maxAttempts = maxAttempts;
    }

    @Override
    public String enqueue(String kind, String traceIdOrNull, String paramsJsonOrNull, Instant now) {
        if (!KINDS.contains(kind)) {
            throw new IllegalArgumentException("got kind '" + kind + "', expected one of " + KINDS);
        }
        if (KIND_ESTIMATE.equals(kind)) {
            Expect.notBlank("traceId of an estimate job", traceIdOrNull);
        }
        return db.write(c -> insertJob(c, kind, traceIdOrNull, paramsJsonOrNull, now));
    }

    @Override
    public Optional<JobRow> findJob(String id) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(FIND_JOB), id);
            return Optional.ofNullable(Sql.firstOrNull(ps, this::jobRow));
        });
    }

    @Override
    public int queuedCount() {
        return db.read(SqlJobs::countQueued);
    }

    @Override
    public boolean cancelIfQueued(String jobId, Instant now) {
        return db.write(c -> updatedOne(c, CANCEL_IF_QUEUED, Sql.millis(now), jobId));
    }

    @Override
    public List<ClaimedJob> claimNext(int limit, Instant now, Instant leaseUntil) {
        Expect.atLeast("limit", limit, 1);
        if (!leaseUntil.isAfter(now)) {
            throw new IllegalArgumentException("got leaseUntil " + leaseUntil + ", expected after now " + now);
        }
        return db.writeForWorker(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(claimNext), Sql.millis(now), Sql.millis(leaseUntil), limit);
            return Sql.list(ps, SqlJobs::claimedJob);
        });
    }

    @Override
    public boolean completeIfRunning(String jobId, int attempt, NewEstimate estimateOrNull, String resultJsonOrNull,
                              Instant now) {
        return db.writeForWorker(c -> {
            if (!updatedOne(c, COMPLETE_IF_RUNNING, Sql.millis(now), resultJsonOrNull, jobId, attempt)) {
                return false;
            }
            if (estimateOrNull != null) {
                String estimateId = SqlEstimates.insertEstimate(c, jobId, estimateOrNull, now);
                SqlFleet.recordEstimate(c, estimateId, estimateOrNull); // the fleet views' rows, same transaction
            }
            return true;
        });
    }

    @Override
    public boolean failIfRunning(String jobId, int attempt, String error, String detailsJsonOrNull, Instant now) {
        Expect.notNull("error", error);
        return workerUpdatedOne(failIfRunning, Sql.millis(now), detailsJsonOrNull, error, jobId, attempt);
    }

    @Override
    public boolean retryIfRunning(String jobId, int attempt, String error, Instant now) {
        Expect.notNull("error", error);
        return workerUpdatedOne(retryIfRunning, maxAttempts, maxAttempts, Sql.millis(now), error, jobId, attempt);
    }

    @Override
    public boolean reportProgress(String jobId, int attempt, int done, int total) {
        if (done < 0 || done > total) {
            throw new IllegalArgumentException("got progress " + done + "/" + total + ", expected 0 <= done <= total");
        }
        return workerUpdatedOne(REPORT_PROGRESS, done, total, jobId, attempt);
    }

    @Override
    public int rescueStuck(Instant startedBefore) {
        return rescueStartedBefore(Sql.millis(startedBefore));
    }

    @Override
    public int renewLeases(List<ClaimedJob> held, Instant leaseUntil) {
        Expect.notNull("held", held);
        if (held.isEmpty()) {
            return 0;
        }
        return db.writeForWorker(c -> {
            int renewed = 0;
            for (ClaimedJob job : held) {
                renewed += updatedOne(c, RENEW_LEASE, Sql.millis(leaseUntil), job.id(), job.attempt()) ? 1 : 0;
            }
            return renewed;
        });
    }

    @Override
    public int rescueExpiredLeases(Instant now) {
        long nowMillis = Sql.millis(now);
        return db.writeForWorker(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(rescueExpiredLeases),
                    maxAttempts, maxAttempts, nowMillis, LEASE_MESSAGE, nowMillis);
            return ps.executeUpdate();
        });
    }

    /** At start-up every running job was left so by a process that is gone. */
    int rescueAllRunning() {
        return rescueStartedBefore(Long.MAX_VALUE);
    }

    static int countQueued(Statements c) throws SQLException {
        PreparedStatement ps = c.prepare(COUNT_QUEUED);
        return Sql.firstOrNull(ps, rs -> rs.getInt(1));
    }

    static String insertJob(Statements c, String kind, String traceIdOrNull, String paramsJsonOrNull, Instant now)
            throws SQLException {
        String id = Sql.newId();
        PreparedStatement ps = Sql.bind(c.prepare(INSERT_JOB),
                id, kind, traceIdOrNull, paramsJsonOrNull, Sql.millis(now));
        ps.executeUpdate();
        return id;
    }

    private int rescueStartedBefore(long startedBeforeMillis) {
        long now = Sql.millis(clock.instant());
        return db.writeForWorker(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(rescueStuck),
                    maxAttempts, maxAttempts, now, RESCUE_MESSAGE, startedBeforeMillis);
            return ps.executeUpdate();
        });
    }

    /** A claimed job's update, ahead of client writes (see {@link Connections#writeForWorker}). */
    private boolean workerUpdatedOne(String sql, Object... values) {
        return db.writeForWorker(c -> updatedOne(c, sql, values));
    }

    private static boolean updatedOne(Statements c, String sql, Object... values) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(sql), values);
        return ps.executeUpdate() == 1;
    }

    private static ClaimedJob claimedJob(ResultSet rs) throws SQLException {
        return new ClaimedJob(rs.getString("id"), rs.getString("kind"), rs.getString("trace_id"),
                rs.getString("params_json"), rs.getInt("attempt"));
    }

    private JobRow jobRow(ResultSet rs) throws SQLException {
        return new JobRow(rs.getString("id"), rs.getString("kind"), rs.getString("state"),
                rs.getString("trace_id"), rs.getString("params_json"), rs.getString("result_json"),
                rs.getInt("attempt"), Sql.instant(rs, "created_at"), Sql.instant(rs, "started_at"),
                Sql.instant(rs, "finished_at"), errors(rs.getString("errors")),
                rs.getInt("progress_done"), rs.getInt("progress_total"), rs.getString("failure_json"));
    }

    private List<String> errors(String errorsJsonOrNull) {
        if (errorsJsonOrNull == null) {
            return List.of();
        }
        try {
            return json.readValue(errorsJsonOrNull, STRING_LIST);
        } catch (JsonProcessingException e) {
            throw new StoreException("jobs.errors is not a JSON array of strings: " + errorsJsonOrNull, e);
        }
    }
}
