package backstate.store;

import java.time.Instant;

/** A stored trace without its payload: enough to select, order and describe it. */
public record TraceRef(String id, String unitId, String family, int version, Instant receivedAt) {
}
