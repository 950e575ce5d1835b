package backstate.store;

import java.time.Instant;
import java.util.List;

/** A unit's newest estimate within a scope (a model family, or one version of it); chi2PerDof may be null. */
public record UnitLatestRow(String unitId, String family, int version, String estimateId, Instant createdAt,
                            Double chi2PerDof, List<String> flags) {

    public UnitLatestRow {
        flags = List.copyOf(flags);
    }
}
