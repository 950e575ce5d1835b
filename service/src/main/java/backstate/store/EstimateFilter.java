package backstate.store;

import java.time.Instant;

/**
 * Narrows a unit's estimate history; every null field matches everything. The time range is
 * half-open: {@code from <= createdAt < to}. A flag matches estimates carrying exactly that flag.
 */
public record EstimateFilter(String familyOrNull, Integer versionOrNull, Instant fromOrNull, Instant toOrNull,
                             String flagOrNull) {

    /** Matches every estimate. */
    public static final EstimateFilter NONE = new EstimateFilter(null, null, null, null, null);

    public EstimateFilter {
        if (fromOrNull != null && toOrNull != null && fromOrNull.isAfter(toOrNull)) {
            throw new IllegalArgumentException("got from " + fromOrNull + " after to " + toOrNull
                    + ", expected from <= to");
        }
        if (flagOrNull != null) {
            Expect.flag(flagOrNull);
        }
    }
}
