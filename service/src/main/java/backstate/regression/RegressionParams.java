package backstate.regression;

import java.util.List;

/**
 * A regression job's parameters (jobs.params_json): the request as accepted, with tolerances
 * resolved, and the IDs of the traces it selected when it was created, in run order (by unit,
 * then received time). Fixing the IDs at creation makes a run's input independent of traces
 * that arrive while it waits in the queue.
 */
public record RegressionParams(String family, int baseline, int candidate, Selection traces, Tolerances tolerances,
                               List<String> traceIds) {

    public RegressionParams {
        traceIds = List.copyOf(traceIds);
    }
}
