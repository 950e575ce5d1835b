package backstate.store;

import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.Optional;

/** Trace submission: the trace, its queued estimate job and its idempotency key, written together. */
final class SqlSubmissions implements TraceIntakeStore {

    private static final String FIND_IDEMPOTENCY_KEY =
            "SELECT trace_id, job_id, fingerprint FROM idempotency_keys WHERE unit_id = ? AND key = ?";
    private static final String INSERT_TRACE = "INSERT INTO traces"
            + " (id, unit_id, family, version, received_at, samples, window_start, window_end, payload)"
            + " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)";
    private static final String INSERT_IDEMPOTENCY_KEY = "INSERT INTO idempotency_keys"
            + " (unit_id, key, trace_id, job_id, created_at, fingerprint) VALUES (?, ?, ?, ?, ?, ?)";
    private static final String FIND_TRACE = "SELECT id, unit_id, family, version, received_at, samples,"
            + " window_start, window_end, payload FROM traces WHERE id = ?";

    private final Connections db;

    SqlSubmissions(Connections db) {
        this.db = db;
    }

    @Override
    public Submission submitTrace(NewTrace trace, IdempotencyKey keyOrNull, int maxQueued, Instant now)
            throws QueueFullException {
        Expect.notNull("trace", trace);
        Expect.atLeast("maxQueued", maxQueued, 0);
        Outcome outcome = db.write(c -> submitInTransaction(c, trace, keyOrNull, maxQueued, now));
        if (outcome instanceof Refused refused) {
            throw new QueueFullException(refused.queued(), maxQueued);
        }
        if (outcome instanceof KeyReused) {
            throw new IdempotencyKeyReusedException(keyOrNull.key());
        }
        return ((Accepted) outcome).submission();
    }

    @Override
    public Optional<Submission> findSubmission(String unitId, IdempotencyKey key) {
        Expect.notNull("key", key);
        Outcome earlier = db.read(c -> findByKey(c, unitId, key));
        if (earlier instanceof KeyReused) {
            throw new IdempotencyKeyReusedException(key.key());
        }
        return earlier == null ? Optional.empty() : Optional.of(((Accepted) earlier).submission());
    }

    @Override
    public Optional<TraceRow> findTrace(String id) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(FIND_TRACE), id);
            return Optional.ofNullable(Sql.firstOrNull(ps, SqlSubmissions::traceRow));
        });
    }

    /**
     * What the transaction decided. A refusal travels out as a value, having written nothing,
     * because the checked QueueFullException cannot cross the transaction's lambda.
     */
    private sealed interface Outcome permits Accepted, Refused, KeyReused {
    }

    private record Accepted(Submission submission) implements Outcome {
    }

    private record Refused(int queued) implements Outcome {
    }

    /** The key was first used with a different request. */
    private record KeyReused() implements Outcome {
    }

    private static Outcome submitInTransaction(Statements c, NewTrace trace, IdempotencyKey keyOrNull, int maxQueued,
                                              Instant now) throws SQLException {
        if (keyOrNull != null) {
            Outcome earlier = findByKey(c, trace.unitId(), keyOrNull);
            if (earlier != null) {
                return earlier;
            }
        }
        int queued = SqlJobs.countQueued(c);
        if (queued >= maxQueued) {
            return new Refused(queued);
        }
        requirePublishedVersion(c, trace);
        String traceId = insertTrace(c, trace, now);
        String jobId = SqlJobs.insertJob(c, SqlJobs.KIND_ESTIMATE, traceId, null, now);
        if (keyOrNull != null) {
            insertKey(c, trace.unitId(), keyOrNull, traceId, jobId, now);
        }
        return new Accepted(new Submission(traceId, jobId, false));
    }

    /** The first submission made with this key, replayed; refused if it was another request; null if none. */
    private static Outcome findByKey(Statements c, String unitId, IdempotencyKey key) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(FIND_IDEMPOTENCY_KEY), unitId, key.key());
        return Sql.firstOrNull(ps, rs -> key.sameRequestAs(rs.getBytes("fingerprint"))
                ? new Accepted(new Submission(rs.getString("trace_id"), rs.getString("job_id"), true))
                : new KeyReused());
    }

    private static void requirePublishedVersion(Statements c, NewTrace trace) throws SQLException {
        if (SqlModels.findVersion(c, trace.family(), trace.version()) == null) {
            throw new IllegalArgumentException("got model " + trace.family() + " version " + trace.version()
                    + ", expected a published version");
        }
    }

    private static String insertTrace(Statements c, NewTrace t, Instant now) throws SQLException {
        String id = Sql.newId();
        PreparedStatement ps = Sql.bind(c.prepare(INSERT_TRACE), id, t.unitId(), t.family(),
                t.version(), Sql.millis(now), t.samples(), t.windowStart(), t.windowEnd(), t.payload());
        ps.executeUpdate();
        return id;
    }

    private static void insertKey(Statements c, String unitId, IdempotencyKey key, String traceId, String jobId,
                                  Instant now) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(INSERT_IDEMPOTENCY_KEY),
                unitId, key.key(), traceId, jobId, Sql.millis(now), key.fingerprint());
        ps.executeUpdate();
    }

    private static TraceRow traceRow(ResultSet rs) throws SQLException {
        return new TraceRow(rs.getString("id"), rs.getString("unit_id"), rs.getString("family"),
                rs.getInt("version"), Sql.instant(rs, "received_at"), rs.getInt("samples"),
                rs.getDouble("window_start"), rs.getDouble("window_end"), rs.getBytes("payload"));
    }
}
