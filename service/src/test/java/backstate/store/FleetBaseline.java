package backstate.store;

/**
 * For benchmarks: the fleet summary as the service computed it before the running totals, a pass
 * over the rows of the window (all time included), the baseline FleetQueryBench prints beside
 * the totals.
 */
public final class FleetBaseline {
    private FleetBaseline() {
    }

    /** The summary from the rows; {@code store} is a SQLite or PostgreSQL store of this build. */
    public static FleetSummary fromRows(Database store, FleetSummaryQuery query) {
        return ((SqlFleet) store.fleet()).fleetSummaryFromRows(query);
    }
}
