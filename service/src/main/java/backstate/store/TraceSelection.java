package backstate.store;

import java.util.List;

/**
 * Which stored traces of a family to use: optionally only some units, only traces in the time
 * filter (recording window start, received time), and only the latest K per unit (by recording
 * time, then received time, then ID). {@code maxRows} caps the answer; asking for one more than a
 * caller's limit tells it that the selection is too large.
 */
public record TraceSelection(String family, List<String> unitsOrNull, TimeFilter times, Integer latestPerUnitOrNull,
                             int maxRows) {

    public TraceSelection {
        Expect.notBlank("family", family);
        Expect.notNull("times", times);
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
