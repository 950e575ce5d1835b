package backstate.api;

import backstate.estimation.Flag;
import backstate.formats.EstimateDocument;
import backstate.formats.RecordingTime;
import backstate.store.FleetSummary;
import backstate.store.StatePoint;
import backstate.store.UnitLatestRow;
import com.fasterxml.jackson.annotation.JsonInclude;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/** Response bodies of the fleet views (dashboards), built from store rows. */
final class FleetViews {
    /** Every flag an estimate can carry, in the engine's order; a summary lists each, zeros included. */
    static final List<String> FLAGS = Arrays.stream(Flag.values()).map(EstimateDocument::flagName).toList();

    private FleetViews() {
    }

    /** from/to bound the recording window, receivedFrom/receivedTo the received range, as asked (absent when open). */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Summary(String family, String from, String to, String receivedFrom, String receivedTo, String asOf,
                   String staleAfter, List<Version> versions, Stale stale) {
    }

    record Version(int version, String status, long units, long traces, long estimates, Distribution chiSquarePerDof,
                   Map<String, Distribution> channelRms, Map<String, Flagged> flags) {
        static Version of(FleetSummary.VersionActivity a, String status, List<String> channels) {
            Map<String, Distribution> rms = new LinkedHashMap<>();
            channels.forEach(c -> rms.put(c, Distribution.of(a.channelRms().get(c))));
            Map<String, Flagged> flags = new LinkedHashMap<>();
            FLAGS.forEach(f -> flags.put(f, Flagged.of(a.flags().get(f))));
            return new Version(a.version(), status, a.units(), a.traces(), a.estimates(),
                    Distribution.of(a.chiSquarePerDof()), rms, flags);
        }
    }

    /** Statistics are null when count is 0. */
    record Distribution(int count, Double median, Double p95, Double max) {
        static Distribution of(FleetSummary.Distribution d) {
            return d == null ? new Distribution(0, null, null, null) : new Distribution(d.count(), d.median(), d.p95(), d.max());
        }
    }

    /** unitIds holds the first units by ID, at most the summary's list limit; units counts them all. */
    record Flagged(long estimates, long units, List<String> unitIds) {
        static Flagged of(FleetSummary.FlaggedUnits f) {
            return f == null ? new Flagged(0, 0, List.of()) : new Flagged(f.estimates(), f.units(), f.firstUnitIds());
        }
    }

    /** Units with no recording started since {@code before}: how many, and the oldest of them first. */
    record Stale(String before, long count, List<Unit> oldestFirst) {
        static Stale of(FleetSummary.StaleUnits s, Instant before) {
            return new Stale(before.toString(), s.count(), s.oldestFirst().stream().map(Unit::of).toList());
        }
    }

    /**
     * A unit with its newest estimate (of the family, or of one version when the list is filtered by
     * version): the estimate of its newest recording, with that recording's window.
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Unit(String unitId, int version, String estimateId, String windowStart, String windowEnd, String receivedAt,
                String createdAt, Double chiSquarePerDof, List<String> flags) {
        static Unit of(UnitLatestRow row) {
            return new Unit(row.unitId(), row.version(), row.estimateId(), RecordingTime.format(row.windowStart()),
                    RecordingTime.format(row.windowEnd()), row.receivedAt().toString(), row.createdAt().toString(),
                    row.chi2PerDof(), row.flags());
        }
    }

    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Trend(String unitId, String family, Integer version, String state, String unit, double confidence,
                 List<Point> points, String caution) {
    }

    /**
     * One estimate of the state at its window start; lower and upper bound its 95 % confidence interval;
     * flags are the estimate's (a flagged point is unreliable).
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Point(String estimateId, String windowStart, String windowEnd, String receivedAt, String createdAt,
                 int version, List<String> flags, Double estimate, Double standardError, Double lower, Double upper) {
        static Point of(StatePoint p) {
            return new Point(p.estimateId(), RecordingTime.format(p.windowStart()), RecordingTime.format(p.windowEnd()),
                    p.receivedAt().toString(), p.createdAt().toString(), p.version(), p.flags(), p.value(),
                    p.standardError(), p.lower(), p.upper());
        }
    }

    /** Oldest recording first, for plotting. */
    static List<Point> chronological(List<StatePoint> newestFirst) {
        List<Point> out = new ArrayList<>(newestFirst.size());
        for (int i = newestFirst.size() - 1; i >= 0; i--) {
            out.add(Point.of(newestFirst.get(i)));
        }
        return out;
    }
}
