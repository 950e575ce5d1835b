package backstate.store;

import java.util.List;

/** One page of a fleet's units in the requested order; the cursor is null on the last page. */
public record UnitPage(List<UnitLatestRow> items, String nextCursorOrNull) {

    public UnitPage {
        items = List.copyOf(items);
    }
}
