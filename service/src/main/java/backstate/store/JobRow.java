package backstate.store;

import java.time.Instant;
import java.util.List;

/**
 * A job as stored. {@code errors} holds every error recorded against the job, oldest first,
 * each prefixed with the attempt it belongs to ("attempt 2: ..."); {@code failureJson}, on a
 * failed job only, the failure's structured details (formats.FailureDetails), if it has any.
 */
public record JobRow(String id, String kind, String state, String traceId, String paramsJson, String resultJson,
                     int attempt, Instant createdAt, Instant startedAt, Instant finishedAt, List<String> errors,
                     int progressDone, int progressTotal, String failureJson) {

    public JobRow {
        errors = List.copyOf(errors);
    }
}
