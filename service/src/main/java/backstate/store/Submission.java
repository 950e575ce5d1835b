package backstate.store;

/** The trace and job a submission created; {@code replayed} when an idempotency key matched. */
public record Submission(String traceId, String jobId, boolean replayed) {
}
