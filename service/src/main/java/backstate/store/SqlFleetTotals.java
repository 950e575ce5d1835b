package backstate.store;

import backstate.estimation.SampleQuantiles;
import backstate.jobs.NewEstimate;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * The running totals behind the all-time fleet summary (tables of V12__fleet_aggregates.sql on
 * SQLite, V2__fleet_aggregates.sql on PostgreSQL): written with each estimate, read in
 * O(units + occupied value bins) whatever the history's length, with answers identical to a
 * pass over the rows.
 *
 * <p>Counts are per unit, so units are the rows and estimates their sum. A distribution's
 * quantiles come from its value bins: the counts locate the order statistics' bin, and the
 * statistics themselves are read through the column's index from that bin's smallest value,
 * then interpolated exactly as {@link SampleQuantiles} does over the sorted column.
 */
final class SqlFleetTotals {

    /**
     * A value's bin, 256 to each factor e (0.39 % wide), non-decreasing in the value; the same text
     * as the migrations' back-fill, so every bin of a database comes from the engine's own ln.
     */
    static String binOf(String column) {
        return "CASE WHEN " + column + " <= 0 THEN -1000000 WHEN " + column + " > 1e300 THEN 1000000"
                + " ELSE CAST(floor(256 * ln(" + column + ")) AS BIGINT) END";
    }

    /**
     * Counts one value of {@code column}, read from {@code source} ("table WHERE …"), in its bin of
     * {@code table} keyed by {@code key} and the bin, keeping the bin's smallest value.
     */
    private static String addToBin(String table, String key, String column, String source) {
        return "INSERT INTO " + table + " (" + key + ", bin, estimates, low_value)"
                + " SELECT " + key + ", " + binOf(column) + ", 1, " + column + " FROM " + source
                + " AND " + column + " IS NOT NULL"
                + " ON CONFLICT (" + key + ", bin) DO UPDATE SET estimates = " + table + ".estimates + 1,"
                + " low_value = CASE WHEN excluded.low_value < " + table + ".low_value"
                + " THEN excluded.low_value ELSE " + table + ".low_value END";
    }

    // Each counter is bumped by an upsert: the conflicting row's lock orders concurrent writers on
    // PostgreSQL, so no increment is lost; the same syntax on both engines.
    private static final String ADD_UNIT_ESTIMATE = "INSERT INTO fleet_unit_estimates (family, version, unit_id, estimates)"
            + " SELECT family, version, unit_id, 1 FROM estimates WHERE id = ?"
            + " ON CONFLICT (family, version, unit_id) DO UPDATE SET estimates = fleet_unit_estimates.estimates + 1";
    private static final String ADD_UNIT_FLAG = "INSERT INTO fleet_unit_flags (family, version, flag, unit_id, estimates)"
            + " VALUES (?, ?, ?, ?, 1)"
            + " ON CONFLICT (family, version, flag, unit_id) DO UPDATE SET estimates = fleet_unit_flags.estimates + 1";
    private static final String ADD_CHI2_BIN = addToBin("fleet_chi2_bins", "family, version", "chi2_per_dof",
            "estimates WHERE id = ?");
    // The channel row just stored, looked up by its key (estimate_channels has no index on
    // estimate_id alone, and a scan per estimate would grow with the history).
    private static final String ADD_RMS_BIN = addToBin("fleet_rms_bins", "family, version, channel", "rms",
            "estimate_channels WHERE family = ? AND version = ? AND channel = ? AND window_start = ? AND estimate_id = ?");

    private static final String MODEL = " WHERE family = ? AND version = ?";
    private static final String COUNT_UNITS_AND_ESTIMATES = "SELECT count(*), coalesce(sum(estimates), 0)"
            + " FROM fleet_unit_estimates" + MODEL;
    private static final String COUNT_TRACES = "SELECT coalesce(sum(traces), 0) FROM fleet_unit_traces" + MODEL;
    private static final String COUNT_FLAGS = "SELECT flag, sum(estimates), count(*) FROM fleet_unit_flags" + MODEL
            + " GROUP BY flag ORDER BY flag";
    private static final String LIST_FLAG_UNITS = "SELECT unit_id FROM fleet_unit_flags" + MODEL
            + " AND flag = ? ORDER BY unit_id LIMIT ?";
    private static final String LIST_CHI2_BINS = "SELECT estimates, low_value FROM fleet_chi2_bins" + MODEL
            + " ORDER BY bin";
    private static final String LIST_RMS_BINS = "SELECT estimates, low_value FROM fleet_rms_bins" + MODEL
            + " AND channel = ? ORDER BY bin";
    // Two order statistics from a bin's smallest value on: x(r) and x(r+1), through the column's index.
    private static final String READ_CHI2_FROM = "SELECT chi2_per_dof FROM estimates" + MODEL
            + " AND chi2_per_dof >= ? ORDER BY chi2_per_dof LIMIT 2 OFFSET ?";
    private static final String READ_RMS_FROM = "SELECT rms FROM estimate_channels" + MODEL
            + " AND channel = ? AND rms >= ? ORDER BY rms LIMIT 2 OFFSET ?";

    private SqlFleetTotals() {
    }

    /** Adds the estimate just written to the totals; call in the same transaction. */
    static void recordEstimate(Statements c, String estimateId, NewEstimate e) throws SQLException {
        Sql.bind(c.prepare(ADD_UNIT_ESTIMATE), estimateId).executeUpdate();
        for (String flag : e.flags()) {
            Sql.bind(c.prepare(ADD_UNIT_FLAG), e.family(), e.version(), flag, e.unitId()).executeUpdate();
        }
        Sql.bind(c.prepare(ADD_CHI2_BIN), estimateId).executeUpdate();
    }

    /** Adds a channel row just stored for the estimate (not one its key already held) to the RMS bins. */
    static void recordChannel(Statements c, String estimateId, NewEstimate e, String channel) throws SQLException {
        Sql.bind(c.prepare(ADD_RMS_BIN), e.family(), e.version(), channel, e.windowStart(), estimateId).executeUpdate();
    }

    /** One model version over all time, from the totals. */
    static FleetSummary.VersionActivity allTime(Statements c, String family, int version, List<String> channels,
                                                int listLimit) throws SQLException {
        long[] counts = Sql.firstOrNull(Sql.bind(c.prepare(COUNT_UNITS_AND_ESTIMATES), family, version),
                rs -> new long[] {rs.getLong(1), rs.getLong(2)});
        long traces = Sql.firstOrNull(Sql.bind(c.prepare(COUNT_TRACES), family, version), rs -> rs.getLong(1));
        List<Bin> chi2Bins = Sql.list(Sql.bind(c.prepare(LIST_CHI2_BINS), family, version), SqlFleetTotals::bin);
        FleetSummary.Distribution chi2 = distribution(chi2Bins,
                (low, offset) -> Sql.bind(c.prepare(READ_CHI2_FROM), family, version, low, offset));
        Map<String, FleetSummary.Distribution> rms = new LinkedHashMap<>();
        for (String channel : channels) {
            List<Bin> bins = Sql.list(Sql.bind(c.prepare(LIST_RMS_BINS), family, version, channel), SqlFleetTotals::bin);
            rms.put(channel, distribution(bins,
                    (low, offset) -> Sql.bind(c.prepare(READ_RMS_FROM), family, version, channel, low, offset)));
        }
        return new FleetSummary.VersionActivity(version, counts[0], traces, counts[1], chi2, rms,
                flags(c, family, version, listLimit));
    }

    private static Map<String, FleetSummary.FlaggedUnits> flags(Statements c, String family, int version,
                                                                int listLimit) throws SQLException {
        record FlagCount(String flag, long estimates, long units) {
        }
        List<FlagCount> counts = Sql.list(Sql.bind(c.prepare(COUNT_FLAGS), family, version),
                rs -> new FlagCount(rs.getString(1), rs.getLong(2), rs.getLong(3)));
        Map<String, FleetSummary.FlaggedUnits> out = new LinkedHashMap<>();
        for (FlagCount f : counts) {
            List<String> first = Sql.list(Sql.bind(c.prepare(LIST_FLAG_UNITS), family, version, f.flag(), listLimit),
                    rs -> rs.getString(1));
            out.put(f.flag(), new FleetSummary.FlaggedUnits(f.estimates(), f.units(), first));
        }
        return out;
    }

    private record Bin(long count, double low) {
    }

    private static Bin bin(ResultSet rs) throws SQLException {
        return new Bin(rs.getLong(1), rs.getDouble(2));
    }

    /** Binds the read of the order statistics from a bin's smallest value, skipping {@code offset} of them. */
    @FunctionalInterface
    private interface OrderStatistics {
        PreparedStatement from(double low, long offset) throws SQLException;
    }

    /** Count, median, 95th percentile and maximum, as {@link SampleQuantiles} gives them over the sorted values. */
    private static FleetSummary.Distribution distribution(List<Bin> bins, OrderStatistics read) throws SQLException {
        long total = 0;
        for (Bin b : bins) {
            total += b.count();
        }
        if (total == 0) {
            return new FleetSummary.Distribution(0, null, null, null);
        }
        int n = Math.toIntExact(total);
        double median = quantile(bins, read, n, SqlFleet.MEDIAN);
        double p95 = quantile(bins, read, n, SqlFleet.P95);
        double max = quantile(bins, read, n, 1.0);
        return new FleetSummary.Distribution(n, median, p95, max);
    }

    private static double quantile(List<Bin> bins, OrderStatistics read, int n, double p) throws SQLException {
        int j = SampleQuantiles.lowerRank(n, p);
        long below = 0;
        for (Bin b : bins) {
            if (j < below + b.count()) {
                double[] pair = pairFrom(read.from(b.low(), j - below));
                return SampleQuantiles.interpolate(pair[0], pair[1], n, p);
            }
            below += b.count();
        }
        throw new CorruptDataException("the fleet value bins", "they hold " + below + " values, fewer than rank " + j, null);
    }

    /** x(r) and x(r+1), or x(r) twice when r is the last. */
    private static double[] pairFrom(PreparedStatement ps) throws SQLException {
        List<Double> two = Sql.list(ps, rs -> rs.getDouble(1));
        if (two.isEmpty()) {
            throw new CorruptDataException("the fleet value bins", "a bin's smallest value is missing from its column", null);
        }
        return new double[] {two.get(0), two.get(two.size() - 1)};
    }
}
