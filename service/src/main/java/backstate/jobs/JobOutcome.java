package backstate.jobs;

import backstate.store.NewEstimate;

/** What a handler made of a job. */
public sealed interface JobOutcome {

    /** The job is done; its estimate and result, if any, are written with its completion. */
    record Succeeded(NewEstimate estimateOrNull, String resultJsonOrNull) implements JobOutcome {
    }

    /** The job cannot succeed (bad input, no convergence): failed for good, without retry. */
    record Failed(String error) implements JobOutcome {
        public Failed {
            if (error == null) {
                throw new IllegalArgumentException("got null error, expected a message");
            }
        }
    }
}
