package backstate.store;

import java.time.Instant;

/** A stored trace. */
public record TraceRow(String id, String unitId, String family, int version, Instant receivedAt, int samples,
                       double windowStart, double windowEnd, byte[] payload) {
}
