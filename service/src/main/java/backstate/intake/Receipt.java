package backstate.intake;

import backstate.formats.TraceWarning;
import backstate.store.Submission;
import java.util.List;

/**
 * What the intake did with a post: the stored trace and its queued job (or the first post's, on a
 * replay), and what about the accepted trace its sender should check, by field. A replay is
 * warned again from the same body (the same warnings, but for a window past the service's clock,
 * which depends on when).
 */
public record Receipt(Submission submission, List<TraceWarning> warnings) {
    public Receipt {
        warnings = List.copyOf(warnings);
    }
}
