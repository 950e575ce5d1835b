package backstate.store;

import java.time.Instant;
import java.util.List;

/**
 * One estimate of one state in a unit's history: the estimate, its standard error and its 95 %
 * interval as the estimate document gave them (null where the document had no finite number),
 * with its recording window (epoch seconds), when it was received and written, and the estimate's flags.
 */
public record StatePoint(String estimateId, Instant createdAt, Instant receivedAt, int version, double windowStart,
                         double windowEnd, List<String> flags, Double value, Double standardError, Double lower,
                         Double upper) {
}
