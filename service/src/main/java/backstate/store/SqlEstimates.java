package backstate.store;

import backstate.jobs.NewEstimate;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Optional;

/**
 * Estimates: written with their job's completion, read newest recording first per unit (window
 * start, then time written, then id; see V7__recording_time.sql).
 */
final class SqlEstimates implements EstimateStore {

    private static final String ESTIMATE_COLUMNS = "id, job_id, trace_id, unit_id, family, version, created_at,"
            + " received_at, window_start, window_end, chi2_per_dof, flags, summary_json";

    // received_at is the trace's, copied so that history and the fleet views filter by it from
    // their indexes; a trace that is not there leaves it NULL, which NOT NULL refuses.
    private static final String INSERT_ESTIMATE = "INSERT INTO estimates (" + ESTIMATE_COLUMNS + ")"
            + " VALUES (?, ?, ?, ?, ?, ?, ?, (SELECT received_at FROM traces WHERE id = ?), ?, ?, ?, ?, ?)";
    private static final String FIND_ESTIMATE = "SELECT " + ESTIMATE_COLUMNS + " FROM estimates WHERE id = ?";
    private static final String FIND_ESTIMATE_FOR_JOB =
            "SELECT " + ESTIMATE_COLUMNS + " FROM estimates WHERE job_id = ?";
    private static final String NEWEST_RECORDING_FIRST = " ORDER BY window_start DESC, created_at DESC, id DESC";
    private static final String FIND_LATEST_ESTIMATE = "SELECT " + ESTIMATE_COLUMNS
            + " FROM estimates WHERE unit_id = ?" + NEWEST_RECORDING_FIRST + " LIMIT 1";
    // One statement for every combination of filters: each "CAST(? AS TEXT) IS NULL OR ..." pair
    // is bound twice with the same value (the cast because PostgreSQL cannot infer a type for a
    // bare "? IS NULL"). instr is SQLite's; the PostgreSQL schema defines it over strpos. The
    // keyset condition uses row values, which both support.
    private static final String LIST_ESTIMATE_HISTORY = "SELECT " + ESTIMATE_COLUMNS + " FROM estimates"
            + " WHERE unit_id = ?"
            + " AND (CAST(? AS TEXT) IS NULL OR family = ?)"
            + " AND (CAST(? AS TEXT) IS NULL OR version = ?)"
            + TimeConditions.RECORDED_AND_RECEIVED
            + " AND (CAST(? AS TEXT) IS NULL OR instr(',' || flags || ',', ',' || ? || ',') > 0)"
            + " AND (CAST(? AS TEXT) IS NULL OR (window_start, created_at, id) < (?, ?, ?))"
            + NEWEST_RECORDING_FIRST + " LIMIT ?";

    private final Connections db;

    SqlEstimates(Connections db) {
        this.db = db;
    }

    @Override
    public Optional<EstimateRow> findEstimate(String id) {
        return findOne(FIND_ESTIMATE, id);
    }

    @Override
    public Optional<EstimateRow> findEstimateForJob(String jobId) {
        return findOne(FIND_ESTIMATE_FOR_JOB, jobId);
    }

    @Override
    public Optional<EstimateRow> latestEstimate(String unitId) {
        return findOne(FIND_LATEST_ESTIMATE, unitId);
    }

    @Override
    public EstimatePage estimateHistory(String unitId, EstimateFilter filter, String cursorOrNull, int limit) {
        Expect.notBlank("unitId", unitId);
        Expect.notNull("filter", filter);
        Expect.atLeast("limit", limit, 1);
        RecordingCursor after = cursorOrNull == null ? null : RecordingCursor.decode(cursorOrNull);
        // One row more than asked tells whether another page follows.
        List<EstimateRow> rows = db.read(c -> listHistory(c, unitId, filter, after, limit + 1));
        if (rows.size() <= limit) {
            return new EstimatePage(rows, null);
        }
        List<EstimateRow> page = rows.subList(0, limit);
        EstimateRow last = page.get(limit - 1);
        return new EstimatePage(page, new RecordingCursor(last.windowStart(), Sql.millis(last.createdAt()), last.id()).encode());
    }

    private Optional<EstimateRow> findOne(String sql, String key) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(sql), key);
            return Optional.ofNullable(Sql.firstOrNull(ps, SqlEstimates::estimateRow));
        });
    }

    /** Writes the estimate and returns its ID; the fleet rows follow in the same transaction. */
    static String insertEstimate(Statements c, String jobId, NewEstimate e, Instant now) throws SQLException {
        String id = Sql.newId();
        PreparedStatement ps = Sql.bind(c.prepare(INSERT_ESTIMATE), id, jobId,
                e.traceId(), e.unitId(), e.family(), e.version(), Sql.millis(now), e.traceId(), e.windowStart(),
                e.windowEnd(), e.chi2PerDof(), Sql.joinFlags(e.flags()), e.summaryJson());
        ps.executeUpdate();
        return id;
    }

    private static List<EstimateRow> listHistory(Statements c, String unitId, EstimateFilter f,
                                                 RecordingCursor after, int rows) throws SQLException {
        Double afterStart = after == null ? null : after.windowStart();
        Long afterMillis = after == null ? null : after.createdAtMillis();
        String afterId = after == null ? null : after.id();
        List<Object> values = new ArrayList<>(List.of(unitId));
        Collections.addAll(values, f.familyOrNull(), f.familyOrNull(), f.versionOrNull(), f.versionOrNull());
        TimeConditions.bind(values, f.times());
        Collections.addAll(values, f.flagOrNull(), f.flagOrNull(), afterStart, afterStart, afterMillis, afterId, rows);
        PreparedStatement ps = Sql.bind(c.prepare(LIST_ESTIMATE_HISTORY), values.toArray());
        return Sql.list(ps, SqlEstimates::estimateRow);
    }

    private static EstimateRow estimateRow(ResultSet rs) throws SQLException {
        return new EstimateRow(rs.getString("id"), rs.getString("job_id"), rs.getString("trace_id"),
                rs.getString("unit_id"), rs.getString("family"), rs.getInt("version"), Sql.instant(rs, "created_at"),
                Sql.instant(rs, "received_at"), rs.getDouble("window_start"), rs.getDouble("window_end"), Sql.doubleOrNull(rs, "chi2_per_dof"),
                Sql.splitFlags(rs.getString("flags")), rs.getString("summary_json"));
    }
}
