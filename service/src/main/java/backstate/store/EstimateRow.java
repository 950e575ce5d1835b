package backstate.store;

import java.time.Instant;
import java.util.List;

/** A stored estimate; {@code chi2PerDof} may be null. */
public record EstimateRow(String id, String jobId, String traceId, String unitId, String family, int version,
                          Instant createdAt, double windowStart, double windowEnd, Double chi2PerDof,
                          List<String> flags, String summaryJson) {

    public EstimateRow {
        flags = List.copyOf(flags);
    }
}
