package backstate.store;

import java.time.Instant;

/**
 * One estimate of one state in a unit's history: the estimate, its standard error and its 95 %
 * interval as the estimate document gave them (null where the document had no finite number),
 * with its recording window (epoch seconds) and when it was received and written.
 */
public record StatePoint(String estimateId, Instant createdAt, Instant receivedAt, int version, double windowStart,
                         double windowEnd, Double value, Double standardError, Double lower, Double upper) {
}
