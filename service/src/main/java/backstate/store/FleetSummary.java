package backstate.store;

import java.util.List;
import java.util.Map;

/** A fleet's activity per model version in a time window, and its stale units; read in one snapshot. */
public record FleetSummary(List<VersionActivity> versions, StaleUnits stale) {

    public FleetSummary {
        versions = List.copyOf(versions);
    }

    /**
     * One model version in the window.
     *
     * @param units           distinct units with an estimate
     * @param traces          traces received
     * @param estimates       estimates written
     * @param chiSquarePerDof distribution over the estimates that have one
     * @param channelRms      distribution of the per-channel residual RMS, by channel
     * @param flags           by flag: the estimates carrying it and their units
     */
    public record VersionActivity(int version, long units, long traces, long estimates, Distribution chiSquarePerDof,
                                  Map<String, Distribution> channelRms, Map<String, FlaggedUnits> flags) {
        public VersionActivity {
            channelRms = ordered(channelRms);
            flags = ordered(flags);
        }
    }

    private static <V> Map<String, V> ordered(Map<String, V> map) {
        return java.util.Collections.unmodifiableMap(new java.util.LinkedHashMap<>(map));
    }

    /** Median, 95th percentile and maximum of count values; the statistics are null when count is 0. */
    public record Distribution(int count, Double median, Double p95, Double max) {
    }

    /** Estimates carrying a flag, the distinct units among them, and the first of those units by ID. */
    public record FlaggedUnits(long estimates, long units, List<String> firstUnitIds) {
        public FlaggedUnits {
            firstUnitIds = List.copyOf(firstUnitIds);
        }
    }

    /** Units whose newest estimate is older than the cutoff: how many, and the oldest of them first. */
    public record StaleUnits(long count, List<UnitLatestRow> oldestFirst) {
        public StaleUnits {
            oldestFirst = List.copyOf(oldestFirst);
        }
    }
}
