package backstate.store;

import backstate.estimation.SampleQuantiles;
import backstate.jobs.NewEstimate;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;

/**
 * The fleet views' named statements: the derived rows written with each estimate (tables of
 * V2__fleet_views.sql, rebuilt by V7__recording_time.sql), the summary of a model version's
 * recording window, the unit list and a unit's trend of one state, all by recording time.
 *
 * <p>Percentiles are computed here in Java over one column read through a covering index
 * (χ²/dof from estimates_by_model_recorded, RMS from estimate_channels' key), so the scan is
 * bounded by the window and costs 8 bytes per value; SQLite has no percentile aggregate, and
 * its ORDER BY … OFFSET route sorts in a temporary B-tree, which FleetQueryBench measures as
 * slower (see docs/fleet-and-planning.md). A summary over all time (no window, no received
 * range) is read from the running totals instead ({@link SqlFleetTotals}), with the same answers.
 */
final class SqlFleet implements FleetStore {

    /** The bounds bound when a side of a range is open: no stored time reaches them. */
    private static final double OPEN_START_SECONDS = -Double.MAX_VALUE;
    private static final double OPEN_END_SECONDS = Double.MAX_VALUE;
    private static final long OPEN_START = Long.MIN_VALUE;
    private static final long OPEN_END = Long.MAX_VALUE;
    /** Quantiles reported by a summary: the median and the 95th percentile. */
    static final double MEDIAN = 0.5;
    static final double P95 = 0.95;
    /** First capacity of a column read; it doubles as needed. */
    private static final int FIRST_CAPACITY = 1024;

    // Written with every estimate, in the completing job's transaction, from the estimate's typed
    // figures (NewEstimate): the JSON document is never read back here. A name repeated in one
    // document keeps its first row, as the V2/V7 backfills did.
    private static final String RECORD_STATE = "INSERT INTO estimate_states"
            + " (estimate_id, state, value, standard_error, lower, upper) VALUES (?, ?, ?, ?, ?, ?)"
            + " ON CONFLICT DO NOTHING";
    private static final String RECORD_CHANNEL = "INSERT INTO estimate_channels"
            + " (family, version, channel, window_start, estimate_id, received_at, rms)"
            + " VALUES (?, ?, ?, ?, ?, (SELECT received_at FROM estimates WHERE id = ?), ?) ON CONFLICT DO NOTHING";
    private static final String LATEST_COLUMNS = "unit_id, family, version, estimate_id, window_start, window_end,"
            + " received_at, created_at, chi2_per_dof, flags";
    // A unit's newest estimate is its newest recording (then newest written, then id): a late
    // upload of an older recording, or a retried job, must not replace it. The update applies
    // only when the incoming (window_start, created_at, id) is greater. Same syntax on PostgreSQL.
    private static final String RECORD_UNIT_LATEST = "INSERT INTO unit_latest (" + LATEST_COLUMNS + ")"
            + " SELECT unit_id, family, version, id, window_start, window_end, received_at, created_at, chi2_per_dof,"
            + " flags FROM estimates WHERE id = ?"
            + " ON CONFLICT (family, unit_id) DO UPDATE SET version = excluded.version,"
            + " estimate_id = excluded.estimate_id, window_start = excluded.window_start,"
            + " window_end = excluded.window_end, received_at = excluded.received_at, created_at = excluded.created_at,"
            + " chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags"
            + " WHERE (excluded.window_start, excluded.created_at, excluded.estimate_id)"
            + " > (unit_latest.window_start, unit_latest.created_at, unit_latest.estimate_id)";
    private static final String RECORD_UNIT_VERSION_LATEST = "INSERT INTO unit_version_latest (" + LATEST_COLUMNS + ")"
            + " SELECT unit_id, family, version, id, window_start, window_end, received_at, created_at, chi2_per_dof,"
            + " flags FROM estimates WHERE id = ?"
            + " ON CONFLICT (family, version, unit_id) DO UPDATE SET"
            + " estimate_id = excluded.estimate_id, window_start = excluded.window_start,"
            + " window_end = excluded.window_end, received_at = excluded.received_at, created_at = excluded.created_at,"
            + " chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags"
            + " WHERE (excluded.window_start, excluded.created_at, excluded.estimate_id)"
            + " > (unit_version_latest.window_start, unit_version_latest.created_at, unit_version_latest.estimate_id)";

    // A version's recording window [from, to) and received range [from, to). Every bound is
    // always bound (open sides as the extreme values) so the planner sees one index range on the
    // recording window; "? IS NULL OR" would hide it. The received range is checked from the same
    // covering index or key.
    private static final String WINDOW = " WHERE family = ? AND version = ? AND window_start >= ? AND window_start < ?"
            + " AND received_at >= ? AND received_at < ?";
    private static final String COUNT_ESTIMATES = "SELECT count(*), count(DISTINCT unit_id) FROM estimates" + WINDOW;
    private static final String LIST_CHI2 = "SELECT chi2_per_dof FROM estimates" + WINDOW
            + " AND chi2_per_dof IS NOT NULL";
    private static final String LIST_FLAGGED = "SELECT unit_id, flags FROM estimates" + WINDOW + " AND flags <> ''";
    private static final String LIST_CHANNEL_RMS = "SELECT rms FROM estimate_channels"
            + " WHERE family = ? AND version = ? AND channel = ? AND window_start >= ? AND window_start < ?"
            + " AND received_at >= ? AND received_at < ? AND rms IS NOT NULL";
    private static final String COUNT_TRACES = "SELECT count(*) FROM traces" + WINDOW;

    // Stale: the newest recording started before the cutoff.
    private static final String COUNT_STALE = "SELECT count(*) FROM unit_latest WHERE family = ? AND window_start < ?";
    private static final String LIST_STALE = "SELECT " + LATEST_COLUMNS + " FROM unit_latest"
            + " WHERE family = ? AND window_start < ? ORDER BY window_start, unit_id LIMIT ?";
    private static final String COUNT_STALE_OF_VERSION = "SELECT count(*) FROM unit_version_latest"
            + " WHERE family = ? AND version = ? AND window_start < ?";
    private static final String LIST_STALE_OF_VERSION = "SELECT " + LATEST_COLUMNS + " FROM unit_version_latest"
            + " WHERE family = ? AND version = ? AND window_start < ? ORDER BY window_start, unit_id LIMIT ?";

    // The unit list: one statement per order and table. The sort tuple has no index (it holds
    // expressions), so each page sorts the family's rows: one per unit, not per estimate.
    private static final Map<UnitSort, String> LIST_UNITS = unitListStatements("unit_latest", "");
    private static final Map<UnitSort, String> LIST_UNITS_OF_VERSION =
            unitListStatements("unit_version_latest", " AND version = ?");

    // A unit's trend walks estimates_by_unit_recorded and looks each estimate's state up by key.
    private static final String LIST_STATE_TREND = "SELECT e.id, e.created_at, e.received_at, e.version,"
            + " e.window_start, e.window_end, e.flags, s.value, s.standard_error, s.lower, s.upper"
            + " FROM estimates e JOIN estimate_states s ON s.estimate_id = e.id AND s.state = ?"
            + " WHERE e.unit_id = ? AND e.family = ? AND (CAST(? AS TEXT) IS NULL OR e.version = ?)"
            + TimeConditions.RECORDED_AND_RECEIVED
            + " ORDER BY e.window_start DESC, e.created_at DESC, e.id DESC LIMIT ?";

    private final Connections db;

    SqlFleet(Connections db) {
        this.db = db;
    }

    private static Map<UnitSort, String> unitListStatements(String table, String versionCondition) {
        Map<UnitSort, String> statements = new EnumMap<>(UnitSort.class);
        for (UnitSort sort : UnitSort.values()) {
            statements.put(sort, "SELECT " + LATEST_COLUMNS + " FROM " + table
                    + " WHERE family = ?" + versionCondition
                    + " AND (CAST(? AS TEXT) IS NULL OR instr(',' || flags || ',', ',' || ? || ',') > 0)"
                    + " AND (CAST(? AS TEXT) IS NULL OR " + sort.after() + ")"
                    + " ORDER BY " + sort.orderBy() + " LIMIT ?");
        }
        return statements;
    }

    /** Writes the derived rows of the estimate just written as {@code estimateId}; call in the same transaction. */
    static void recordEstimate(Statements c, String estimateId, NewEstimate e) throws SQLException {
        for (NewEstimate.StateFigure s : e.states()) {
            PreparedStatement ps = Sql.bind(c.prepare(RECORD_STATE), estimateId, s.state(), s.value(),
                    s.standardError(), s.lower(), s.upper());
            ps.executeUpdate();
        }
        for (NewEstimate.ChannelFigure ch : e.channels()) {
            PreparedStatement ps = Sql.bind(c.prepare(RECORD_CHANNEL), e.family(), e.version(),
                    ch.channel(), e.windowStart(), estimateId, estimateId, ch.rms());
            if (ps.executeUpdate() == 1) { // a channel named twice keeps its first row, in the totals too
                SqlFleetTotals.recordChannel(c, estimateId, e, ch.channel());
            }
        }
        for (String sql : List.of(RECORD_UNIT_LATEST, RECORD_UNIT_VERSION_LATEST)) {
            PreparedStatement ps = Sql.bind(c.prepare(sql), estimateId);
            ps.executeUpdate();
        }
        SqlFleetTotals.recordEstimate(c, estimateId, e);
    }

    /** All time from the running totals (SqlFleetTotals); a window or range from its rows. */
    @Override
    public FleetSummary fleetSummary(FleetSummaryQuery q) {
        return summary(q, q.times().equals(TimeFilter.NONE));
    }

    /**
     * The summary from a pass over the window's rows, all time included: how it was computed
     * before the running totals. For the tests that check the totals and the benchmark's baseline.
     */
    FleetSummary fleetSummaryFromRows(FleetSummaryQuery q) {
        return summary(q, false);
    }

    private FleetSummary summary(FleetSummaryQuery q, boolean fromTotals) {
        // One snapshot, so counts and distributions agree even while estimates are being written.
        return db.readInOneSnapshot(c -> {
            List<FleetSummary.VersionActivity> versions = new ArrayList<>();
            for (Map.Entry<Integer, List<String>> v : q.channelsByVersion().entrySet()) {
                versions.add(fromTotals
                        ? SqlFleetTotals.allTime(c, q.family(), v.getKey(), v.getValue(), q.listLimit())
                        : versionActivity(c, q, v.getKey(), v.getValue()));
            }
            return new FleetSummary(versions, stale(c, q));
        });
    }

    @Override
    public UnitPage fleetUnits(UnitFilter filter, UnitSort sort, String cursorOrNull, int limit) {
        Expect.notNull("filter", filter);
        Expect.notNull("sort", sort);
        Expect.atLeast("limit", limit, 1);
        UnitCursor after = cursorOrNull == null ? null : UnitCursor.decode(cursorOrNull, sort);
        List<Object> values = new ArrayList<>();
        values.add(filter.family());
        if (filter.versionOrNull() != null) {
            values.add(filter.versionOrNull());
        }
        values.add(filter.flagOrNull());
        values.add(filter.flagOrNull());
        values.add(after == null ? null : 1);
        for (int i = 0; i < sort.terms.size(); i++) {
            values.add(after == null ? null : after.key().get(i));
        }
        values.add(limit + 1); // one row more than asked tells whether another page follows
        String sql = (filter.versionOrNull() == null ? LIST_UNITS : LIST_UNITS_OF_VERSION).get(sort);
        List<UnitLatestRow> rows = db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(sql), values.toArray());
            return Sql.list(ps, SqlFleet::latestRow);
        });
        if (rows.size() <= limit) {
            return new UnitPage(rows, null);
        }
        List<UnitLatestRow> page = rows.subList(0, limit);
        return new UnitPage(page, new UnitCursor(sort, sort.keyOf(page.get(limit - 1))).encode());
    }

    /** The {@code limit} estimates of one state with the newest recordings in the time filter, newest first. */
    @Override
    public List<StatePoint> stateTrend(String unitId, String state, String family,
                                       Integer versionOrNull, TimeFilter times, int limit) {
        Expect.notBlank("unitId", unitId);
        Expect.notBlank("state", state);
        Expect.notBlank("family", family);
        Expect.notNull("times", times);
        Expect.atLeast("limit", limit, 1);
        List<Object> values = new ArrayList<>(List.of(state, unitId, family));
        values.add(versionOrNull);
        values.add(versionOrNull);
        TimeConditions.bind(values, times);
        values.add(limit);
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(LIST_STATE_TREND), values.toArray());
            return Sql.list(ps, SqlFleet::statePoint);
        });
    }

    private static FleetSummary.VersionActivity versionActivity(Statements c, FleetSummaryQuery q, int version,
                                                                List<String> channels) throws SQLException {
        TimeFilter t = q.times();
        double from = t.recordedFromOrNull() == null ? OPEN_START_SECONDS : Sql.recordingSeconds(t.recordedFromOrNull());
        double to = t.recordedToOrNull() == null ? OPEN_END_SECONDS : Sql.recordingSeconds(t.recordedToOrNull());
        long receivedFrom = t.receivedFromOrNull() == null ? OPEN_START : Sql.millisBound(t.receivedFromOrNull());
        long receivedTo = t.receivedToOrNull() == null ? OPEN_END : Sql.millisBound(t.receivedToOrNull());
        Object[] window = {q.family(), version, from, to, receivedFrom, receivedTo};
        long[] counts = Sql.firstOrNull(Sql.bind(c.prepare(COUNT_ESTIMATES), window),
                rs -> new long[] {rs.getLong(1), rs.getLong(2)});
        long traces = Sql.firstOrNull(Sql.bind(c.prepare(COUNT_TRACES), window), rs -> rs.getLong(1));
        FleetSummary.Distribution chi2 = distribution(Sql.bind(c.prepare(LIST_CHI2), window));
        Map<String, FleetSummary.Distribution> rms = new LinkedHashMap<>();
        for (String channel : channels) {
            rms.put(channel, distribution(Sql.bind(c.prepare(LIST_CHANNEL_RMS), q.family(), version, channel,
                    from, to, receivedFrom, receivedTo)));
        }
        Map<String, FleetSummary.FlaggedUnits> flags = flagged(Sql.bind(c.prepare(LIST_FLAGGED), window), q.listLimit());
        return new FleetSummary.VersionActivity(version, counts[1], traces, counts[0], chi2, rms, flags);
    }

    /** Reads one REAL column into a primitive array and summarises it; no boxing per value. */
    private static FleetSummary.Distribution distribution(PreparedStatement ps) throws SQLException {
        double[] values = new double[FIRST_CAPACITY];
        int count = 0;
        try (ResultSet rs = ps.executeQuery()) {
            while (rs.next()) {
                if (count == values.length) {
                    values = Arrays.copyOf(values, 2 * count);
                }
                values[count++] = rs.getDouble(1);
            }
        }
        if (count == 0) {
            return new FleetSummary.Distribution(0, null, null, null);
        }
        double[] q = SampleQuantiles.sortAndCompute(values, count, MEDIAN, P95, 1.0);
        return new FleetSummary.Distribution(count, q[0], q[1], q[2]);
    }

    /** One pass over the window's flagged estimates: per flag, estimates, distinct units and the first units by ID. */
    private static Map<String, FleetSummary.FlaggedUnits> flagged(PreparedStatement ps, int listLimit)
            throws SQLException {
        Map<String, long[]> estimates = new TreeMap<>();
        Map<String, Set<String>> units = new TreeMap<>();
        try (ResultSet rs = ps.executeQuery()) {
            while (rs.next()) {
                String unit = rs.getString(1);
                for (String flag : Sql.splitFlags(rs.getString(2))) {
                    estimates.computeIfAbsent(flag, f -> new long[1])[0]++;
                    units.computeIfAbsent(flag, f -> new HashSet<>()).add(unit);
                }
            }
        }
        Map<String, FleetSummary.FlaggedUnits> out = new LinkedHashMap<>();
        for (Map.Entry<String, long[]> e : estimates.entrySet()) {
            Set<String> all = units.get(e.getKey());
            List<String> first = new TreeSet<>(all).stream().limit(listLimit).toList();
            out.put(e.getKey(), new FleetSummary.FlaggedUnits(e.getValue()[0], all.size(), first));
        }
        return out;
    }

    private static FleetSummary.StaleUnits stale(Statements c, FleetSummaryQuery q) throws SQLException {
        double before = Sql.recordingSeconds(q.staleBefore());
        Integer version = q.staleVersionOrNull();
        Object[] key = version == null ? new Object[] {q.family(), before} : new Object[] {q.family(), version, before};
        long count = Sql.firstOrNull(Sql.bind(c.prepare(version == null ? COUNT_STALE : COUNT_STALE_OF_VERSION), key),
                rs -> rs.getLong(1));
        Object[] listKey = Arrays.copyOf(key, key.length + 1);
        listKey[key.length] = q.listLimit();
        PreparedStatement ps = Sql.bind(c.prepare(version == null ? LIST_STALE : LIST_STALE_OF_VERSION), listKey);
        return new FleetSummary.StaleUnits(count, Sql.list(ps, SqlFleet::latestRow));
    }

    private static UnitLatestRow latestRow(ResultSet rs) throws SQLException {
        return new UnitLatestRow(rs.getString("unit_id"), rs.getString("family"), rs.getInt("version"),
                rs.getString("estimate_id"), rs.getDouble("window_start"), rs.getDouble("window_end"),
                Sql.instant(rs, "received_at"), Sql.instant(rs, "created_at"), Sql.doubleOrNull(rs, "chi2_per_dof"),
                Sql.splitFlags(rs.getString("flags")));
    }

    private static StatePoint statePoint(ResultSet rs) throws SQLException {
        return new StatePoint(rs.getString("id"), Sql.instant(rs, "created_at"), Sql.instant(rs, "received_at"),
                rs.getInt("version"),
                rs.getDouble("window_start"), rs.getDouble("window_end"), Sql.splitFlags(rs.getString("flags")),
                Sql.doubleOrNull(rs, "value"), Sql.doubleOrNull(rs, "standard_error"), Sql.doubleOrNull(rs, "lower"),
                Sql.doubleOrNull(rs, "upper"));
    }
}
