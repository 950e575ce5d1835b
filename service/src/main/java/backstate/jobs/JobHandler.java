package backstate.jobs;

/**
 * Does the work of one job. Returning {@link JobOutcome.Failed} fails the job for good; throwing
 * an exception records its message and retries the job until its attempts run out, then fails
 * it. Handlers may be called again for a job whose earlier attempt was lost, so they must not
 * depend on running once.
 */
@FunctionalInterface
public interface JobHandler {
    JobOutcome handle(ClaimedJob job) throws Exception;
}
