package backstate.store;

import com.fasterxml.jackson.core.io.JsonStringEncoder;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Optional;

/**
 * Regression runs: the trace selection they run over, the run row beside its 'regression' job,
 * the cancel request a running job polls, and finishing a running job as cancelled. Stateless:
 * every call names the connections it uses.
 */
final class SqlRegressions implements RegressionStore {

    private static final String KIND_REGRESSION = "regression";

    // ROW_NUMBER ranks each unit's traces newest recording first; both SQLite (3.25+) and
    // PostgreSQL have it. The unit list is bound as one JSON array, opened by the dialect's
    // subquery. Each "CAST(? AS TEXT) IS NULL OR ..." pair is bound twice with the same value.
    private static String selectTraces(Dialect dialect) {
        return "SELECT id, unit_id, family, version, received_at FROM ("
                + " SELECT id, unit_id, family, version, received_at, window_start,"
                + " ROW_NUMBER() OVER (PARTITION BY unit_id"
                + " ORDER BY window_start DESC, received_at DESC, id DESC) AS recency"
                + " FROM traces WHERE family = ?"
                + " AND (CAST(? AS TEXT) IS NULL OR unit_id IN (" + dialect.unitsOfJsonArray() + "))"
                + TimeConditions.RECORDED_AND_RECEIVED
                + ") ranked"
                + " WHERE (CAST(? AS TEXT) IS NULL OR recency <= ?)"
                + " ORDER BY unit_id, window_start, received_at, id LIMIT ?";
    }

    private static final String INSERT_REGRESSION = "INSERT INTO regressions"
            + " (job_id, family, baseline, candidate, created_at) VALUES (?, ?, ?, ?, ?)";
    // ON CONFLICT ... DO NOTHING is the same on both engines (SQLite 3.24+); the queue's triggers
    // see only a row actually inserted.
    private static final String INSERT_CHUNK_ONCE = "INSERT INTO jobs (id, kind, state, trace_id, params_json,"
            + " attempt, created_at, progress_done, progress_total)"
            + " VALUES (?, 'regression', 'queued', NULL, ?, 0, ?, 0, 0) ON CONFLICT (id) DO NOTHING";
    private static final String REGRESSION_COLUMNS = "r.job_id, r.family, r.baseline, r.candidate, r.created_at,"
            + " r.cancel_requested_at, j.state, j.progress_done, j.progress_total, j.finished_at, ";
    private static final String FIND_REGRESSION_WHERE = " FROM regressions r JOIN jobs j ON j.id = r.job_id WHERE r.job_id = ?";
    private static final String LIST_REGRESSIONS_WHERE = " FROM regressions r JOIN jobs j ON j.id = r.job_id"
            + " WHERE (CAST(? AS TEXT) IS NULL OR r.family = ?)"
            + " AND (CAST(? AS TEXT) IS NULL OR (r.created_at, r.job_id) < (?, ?))"
            + " ORDER BY r.created_at DESC, r.job_id DESC LIMIT ?";
    // The first request's time is kept; a request for a finished run changes nothing.
    private static final String REQUEST_CANCEL = "UPDATE regressions"
            + " SET cancel_requested_at = COALESCE(cancel_requested_at, ?)"
            + " WHERE job_id = ? AND EXISTS (SELECT 1 FROM jobs WHERE id = ? AND state IN ('queued', 'running'))";
    private static final String CANCEL_REQUESTED =
            "SELECT cancel_requested_at IS NOT NULL FROM regressions WHERE job_id = ?";
    private static final String CANCEL_IF_RUNNING = "UPDATE jobs SET state = 'cancelled', finished_at = ?,"
            + " result_json = ? WHERE id = ? AND kind = 'regression' AND state = 'running' AND attempt = ?";

    private final Connections db;
    // With the dialect's fragments: the unit list's subquery and the verdict's pass (1, 0 or NULL).
    private final String selectTraces;
    private final String findRegression;
    private final String listRegressions;

    SqlRegressions(Connections db) {
        this.db = db;
        this.selectTraces = selectTraces(db.dialect());
        String columns = REGRESSION_COLUMNS + db.dialect().verdictPass() + " AS pass";
        this.findRegression = "SELECT " + columns + FIND_REGRESSION_WHERE;
        this.listRegressions = "SELECT " + columns + LIST_REGRESSIONS_WHERE;
    }

    @Override
    public List<TraceRef> selectTraces(TraceSelection s) {
        Expect.notNull("selection", s);
        String units = s.unitsOrNull() == null ? null : jsonArray(s.unitsOrNull());
        Integer latest = s.latestPerUnitOrNull();
        List<Object> values = new ArrayList<>(List.of(s.family()));
        Collections.addAll(values, units, units);
        TimeConditions.bind(values, s.times());
        Collections.addAll(values, latest, latest, s.maxRows());
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(selectTraces), values.toArray());
            return Sql.list(ps, rs -> new TraceRef(rs.getString("id"), rs.getString("unit_id"),
                    rs.getString("family"), rs.getInt("version"), Sql.instant(rs, "received_at")));
        });
    }

    @Override
    public String createRegression(NewRegression r, int maxQueued, Instant now)
            throws QueueFullException {
        Expect.notNull("regression", r);
        Expect.atLeast("maxQueued", maxQueued, 0);
        // A refusal leaves the transaction as null, having written nothing (the checked
        // exception cannot cross the lambda).
        Integer[] queuedWhenRefused = new Integer[1];
        String id = db.write(c -> {
            int queued = SqlJobs.countQueued(c);
            if (queued >= maxQueued) {
                queuedWhenRefused[0] = queued;
                return null;
            }
            String jobId = SqlJobs.insertJob(c, KIND_REGRESSION, null, r.paramsJson(), now);
            PreparedStatement ps = Sql.bind(c.prepare(INSERT_REGRESSION), jobId, r.family(),
                    r.baseline(), r.candidate(), Sql.millis(now));
            ps.executeUpdate();
            return jobId;
        });
        if (id == null) {
            throw new QueueFullException(queuedWhenRefused[0], maxQueued);
        }
        return id;
    }

    @Override
    public boolean queueChunkOnce(String chunkId, String paramsJson, Instant now) {
        Expect.notBlank("chunkId", chunkId);
        return db.writeForWorker(c -> updatedOne(c, INSERT_CHUNK_ONCE, chunkId, paramsJson, Sql.millis(now)));
    }

    @Override
    public Optional<RegressionRow> findRegression(String id) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(findRegression), id);
            return Optional.ofNullable(Sql.firstOrNull(ps, SqlRegressions::regressionRow));
        });
    }

    @Override
    public RegressionPage listRegressions(String familyOrNull, String cursorOrNull,
                                          int limit) {
        Expect.atLeast("limit", limit, 1);
        // Same keyset shape as estimate history: (created_at, id) of the last row returned.
        EstimateCursor after = cursorOrNull == null ? null : EstimateCursor.decode(cursorOrNull);
        Long afterMillis = after == null ? null : after.createdAtMillis();
        String afterId = after == null ? null : after.id();
        List<RegressionRow> rows = db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(listRegressions), familyOrNull, familyOrNull,
                    afterMillis, afterMillis, afterId, limit + 1);
            return Sql.list(ps, SqlRegressions::regressionRow);
        });
        if (rows.size() <= limit) {
            return new RegressionPage(rows, null);
        }
        List<RegressionRow> page = rows.subList(0, limit);
        RegressionRow last = page.get(limit - 1);
        return new RegressionPage(page, new EstimateCursor(Sql.millis(last.createdAt()), last.id()).encode());
    }

    @Override
    public boolean requestRegressionCancel(String id, Instant now) {
        return db.write(c -> updatedOne(c, REQUEST_CANCEL, Sql.millis(now), id, id));
    }

    @Override
    public boolean regressionCancelRequested(String id) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(CANCEL_REQUESTED), id);
            Boolean requested = Sql.firstOrNull(ps, rs -> rs.getBoolean(1));
            return Boolean.TRUE.equals(requested);
        });
    }

    @Override
    public boolean cancelRegressionIfRunning(String id, int attempt, String resultJsonOrNull,
                                   Instant now) {
        return db.writeForWorker(
                c -> updatedOne(c, CANCEL_IF_RUNNING, Sql.millis(now), resultJsonOrNull, id, attempt));
    }

    private static boolean updatedOne(Statements c, String sql, Object... values) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(sql), values);
        return ps.executeUpdate() == 1;
    }

    /** A JSON array of strings, for json_each. */
    private static String jsonArray(List<String> values) {
        StringBuilder array = new StringBuilder("[");
        for (String v : values) {
            array.append(array.length() > 1 ? ",\"" : "\"").append(JsonStringEncoder.getInstance().quoteAsString(v)).append('"');
        }
        return array.append(']').toString();
    }

    private static RegressionRow regressionRow(ResultSet rs) throws SQLException {
        int pass = rs.getInt("pass");
        Boolean passOrNull = rs.wasNull() ? null : pass == 1;
        return new RegressionRow(rs.getString("job_id"), rs.getString("family"), rs.getInt("baseline"),
                rs.getInt("candidate"), Sql.instant(rs, "created_at"), Sql.instant(rs, "cancel_requested_at"),
                rs.getString("state"), rs.getInt("progress_done"), rs.getInt("progress_total"),
                Sql.instant(rs, "finished_at"), passOrNull);
    }
}
