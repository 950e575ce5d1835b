package backstate.store;

import java.time.Instant;
import java.util.List;

/**
 * A unit's newest estimate within a scope (a model family, or one version of it): the one of its
 * newest recording. The window is in epoch seconds; chi2PerDof may be null.
 */
public record UnitLatestRow(String unitId, String family, int version, String estimateId, double windowStart,
                            double windowEnd, Instant receivedAt, Instant createdAt, Double chi2PerDof,
                            List<String> flags) {

    public UnitLatestRow {
        flags = List.copyOf(flags);
    }
}
