package backstate.store;

import java.util.List;

/** One page of estimates, newest first; the cursor is null on the last page. */
public record EstimatePage(List<EstimateRow> items, String nextCursorOrNull) {

    public EstimatePage {
        items = List.copyOf(items);
    }
}
