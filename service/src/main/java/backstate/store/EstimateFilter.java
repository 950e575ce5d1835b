package backstate.store;

/**
 * Narrows a unit's estimate history; every null field matches everything. The times are the
 * estimate's recording window start and its trace's received time ({@link TimeFilter}). A flag
 * matches estimates carrying exactly that flag.
 */
public record EstimateFilter(String familyOrNull, Integer versionOrNull, TimeFilter times, String flagOrNull) {

    /** Matches every estimate. */
    public static final EstimateFilter NONE = new EstimateFilter(null, null, TimeFilter.NONE, null);

    public EstimateFilter {
        Expect.notNull("times", times);
        if (flagOrNull != null) {
            Expect.flag(flagOrNull);
        }
    }
}
