package backstate.store;

import java.util.List;

/**
 * Fleet views for dashboards, read from tables derived from each estimate as it is written.
 * Failures as described on {@link ModelCatalogue}.
 */
public interface FleetStore {

    /**
     * Per model version: units, traces and estimates in the recording window (and received range), the distribution of χ²/dof
     * and of each channel's residual RMS, and the units per flag; plus the stale units. Read in
     * one snapshot, so the figures agree with each other.
     */
    FleetSummary fleetSummary(FleetSummaryQuery query);

    /**
     * One page of a family's units with their newest estimate, in the given order. The cursor is
     * the keyset of the last row returned in that order.
     *
     * @throws InvalidCursorException if the cursor did not come from this method with the same order
     */
    UnitPage fleetUnits(UnitFilter filter, UnitSort sort, String cursorOrNull, int limit);

    /**
     * The unit's {@code limit} estimates of one state of a family (of one version, if given) with the
     * newest recordings in the time filter, newest recording first.
     */
    List<StatePoint> stateTrend(String unitId, String state, String family, Integer versionOrNull, TimeFilter times,
                                int limit);
}
