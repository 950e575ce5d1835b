package backstate.store;

import java.util.List;

/** One page of regression runs, newest first; the cursor is null on the last page. */
public record RegressionPage(List<RegressionRow> items, String nextCursorOrNull) {

    public RegressionPage {
        items = List.copyOf(items);
    }
}
