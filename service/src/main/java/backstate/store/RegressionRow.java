package backstate.store;

import java.time.Instant;

/**
 * A regression run as stored, with its job's state and progress; {@code passOrNull} is the
 * verdict of a finished run's result, null while it runs or when it ended without one.
 */
public record RegressionRow(String id, String family, int baseline, int candidate, Instant createdAt,
                            Instant cancelRequestedAtOrNull, String state, int progressDone, int progressTotal,
                            Instant finishedAtOrNull, Boolean passOrNull) {
}
