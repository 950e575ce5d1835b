package backstate.estimation;

/** What a solve returns: an estimate, or the reason there is none (numerical trouble is a value). */
public sealed interface EstimationResult permits Estimate, Unobservable {
}
