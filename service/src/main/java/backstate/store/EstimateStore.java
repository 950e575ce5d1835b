package backstate.store;

import java.util.Optional;

/**
 * Estimates as written by their jobs, read by ID, by job and per unit, newest recording first.
 * Failures as described on {@link ModelCatalogue}.
 */
public interface EstimateStore {

    /** The unit's estimate of its newest recording (then the newest written, then by id). */
    Optional<EstimateRow> latestEstimate(String unitId);

    /**
     * One page of a unit's estimates, newest recording first (window start, then time written,
     * then id). The cursor is that keyset of the last row returned, so pages stay stable while new
     * estimates arrive.
     *
     * @throws InvalidCursorException if the cursor did not come from this method
     */
    EstimatePage estimateHistory(String unitId, EstimateFilter filter, String cursorOrNull, int limit);

    Optional<EstimateRow> findEstimate(String id);

    /** The estimate a succeeded job wrote, if it wrote one (at most one exists per job). */
    Optional<EstimateRow> findEstimateForJob(String jobId);
}
