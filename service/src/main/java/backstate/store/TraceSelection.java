package backstate.store;

import java.time.Instant;
import java.util.List;

/**
 * Which stored traces of a family to use: optionally only some units, only traces received in
 * [from, to), and only the latest K per unit (by received time, then ID). {@code maxRows} caps the
 * answer; asking for one more than a caller's limit tells it that the selection is too large.
 */
public record TraceSelection(String family, List<String> unitsOrNull, Instant receivedFromOrNull,
                             Instant receivedToOrNull, Integer latestPerUnitOrNull, int maxRows) {

    public TraceSelection {
        Expect.notBlank("family", family);
        unitsOrNull = unitsOrNull == null ? null : List.copyOf(unitsOrNull);
        if (unitsOrNull != null && unitsOrNull.isEmpty()) {
            throw new IllegalArgumentException("got an empty unit list, expected null (all units) or at least one");
        }
        if (latestPerUnitOrNull != null) {
            Expect.atLeast("latestPerUnit", latestPerUnitOrNull, 1);
        }
        Expect.atLeast("maxRows", maxRows, 1);
    }
}
