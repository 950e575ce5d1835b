package backstate.formats;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.List;

/**
 * What a failed job records beside its error text, as structured fields (stored in
 * {@code jobs.failure_json} and shown on the job). Today only the unobservable directions of an
 * estimate the data could not determine.
 */
@JsonInclude(JsonInclude.Include.NON_EMPTY)
public record FailureDetails(List<UnobservableDirection> unobservableDirections) {
    public FailureDetails {
        unobservableDirections = unobservableDirections == null ? List.of() : List.copyOf(unobservableDirections);
    }
}
