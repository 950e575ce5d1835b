package backstate.store;

import java.util.List;

/**
 * Orders of a fleet's unit list. Each is a tuple of sort terms walked ascending or descending
 * as a whole, unit_id last so the order is total; the keyset cursor holds the last row's tuple.
 * Units without a χ²/dof (no residual degrees of freedom) come last in both χ² orders, which
 * is why those orders lead with a null marker (1 for no χ²/dof, else 0) and the worst-first one
 * negates χ² instead of descending (a tuple cannot mix directions in one row-value comparison).
 * The marker is a CASE, not "chi2_per_dof IS NULL": that is an integer on SQLite but a boolean on
 * PostgreSQL, which will not compare it with the cursor's bound 0 or 1.
 */
public enum UnitSort {
    /** By unit ID, A to Z. */
    UNIT_ID(List.of("unit_id"), true),
    /** By unit ID, Z to A. */
    UNIT_ID_DESC(List.of("unit_id"), false),
    /** Oldest newest recording first: stale units on top. */
    LATEST(List.of("window_start", "unit_id"), true),
    /** Newest recording first. */
    LATEST_DESC(List.of("window_start", "unit_id"), false),
    /** Best fit first (smallest χ²/dof). */
    CHI_SQUARE(List.of(Terms.NULL_MARKER, "coalesce(chi2_per_dof, 0.0)", "unit_id"), true),
    /** Worst fit first (largest χ²/dof). */
    CHI_SQUARE_DESC(List.of(Terms.NULL_MARKER, "-coalesce(chi2_per_dof, 0.0)", "unit_id"), true);

    /** Sort terms used by more than one order (an enum constant cannot name a static field of its own type). */
    private static final class Terms {
        static final String NULL_MARKER = "(CASE WHEN chi2_per_dof IS NULL THEN 1 ELSE 0 END)";
    }

    final List<String> terms;
    final boolean ascending;

    UnitSort(List<String> terms, boolean ascending) {
        this.terms = terms;
        this.ascending = ascending;
    }

    /** The row-value form of the terms, e.g. "(window_start, unit_id)". */
    String tuple() {
        return "(" + String.join(", ", terms) + ")";
    }

    String orderBy() {
        String direction = ascending ? " ASC" : " DESC";
        return String.join(direction + ", ", terms) + direction;
    }

    /** The keyset condition "after the cursor's tuple" in this order. */
    String after() {
        return tuple() + (ascending ? " > " : " < ") + "(" + "?, ".repeat(terms.size() - 1) + "?)";
    }

    /** The values of the terms for a row, in term order, as the SQL computes them. */
    List<Object> keyOf(UnitLatestRow row) {
        return switch (this) {
            case UNIT_ID, UNIT_ID_DESC -> List.of(row.unitId());
            case LATEST, LATEST_DESC -> List.of(row.windowStart(), row.unitId());
            case CHI_SQUARE -> List.of(row.chi2PerDof() == null ? 1L : 0L,
                    row.chi2PerDof() == null ? 0.0 : row.chi2PerDof(), row.unitId());
            case CHI_SQUARE_DESC -> List.of(row.chi2PerDof() == null ? 1L : 0L,
                    row.chi2PerDof() == null ? 0.0 : -row.chi2PerDof(), row.unitId());
        };
    }
}
