package backstate.jobs;

/**
 * Does the work of one job. Returning {@link JobOutcome.Failed} fails the job for good; throwing
 * an exception records its message and retries the job until its attempts run out, then fails
 * it. Handlers may be called again for a job whose earlier attempt was lost, so they must not
 * depend on running once. Handlers live with the work they do (solving.EstimateJobHandler,
 * regression.RegressionJobHandler), not in this package, which never reads the store; App
 * registers them by kind in {@link HandlersByKind}.
 */
@FunctionalInterface
public interface JobHandler {
    JobOutcome handle(ClaimedJob job) throws Exception;
}
