package backstate.jobs;

/** A job a worker holds at one attempt; the attempt is its licence to change the job. */
public record ClaimedJob(String id, String kind, String traceId, String paramsJson, int attempt) {
}
