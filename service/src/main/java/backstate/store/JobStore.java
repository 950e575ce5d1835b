package backstate.store;

import java.time.Instant;
import java.util.Optional;

/**
 * Jobs as the API sees them: read one, cancel one that no worker has claimed yet. The workers'
 * side of the same jobs is {@link backstate.jobs.JobQueue}. Failures as described on {@link
 * ModelCatalogue}.
 */
public interface JobStore {

    Optional<JobRow> findJob(String id);

    /** Cancels a job that no worker has claimed yet; false if it is not queued. */
    boolean cancelIfQueued(String jobId, Instant now);
}
