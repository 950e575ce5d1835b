package backstate.store;

import java.time.Instant;
import java.util.List;

/**
 * A stored estimate; {@code chi2PerDof} may be null. {@code createdAt} is when it was written,
 * {@code receivedAt} when its trace was received, and the window its trace's first and last
 * sample times (epoch seconds).
 */
public record EstimateRow(String id, String jobId, String traceId, String unitId, String family, int version,
                          Instant createdAt, Instant receivedAt, double windowStart, double windowEnd,
                          Double chi2PerDof, List<String> flags, String summaryJson) {

    public EstimateRow {
        flags = List.copyOf(flags);
    }
}
