package backstate.jobs;


/** What a handler made of a job. */
public sealed interface JobOutcome {

    /** The job is done; its estimate and result, if any, are written with its completion. */
    record Succeeded(NewEstimate estimateOrNull, String resultJsonOrNull) implements JobOutcome {
    }

    /**
     * The job cannot succeed (bad input, no convergence): failed for good, without retry.
     *
     * @param error              one line saying why, appended to the job's errors
     * @param detailsJsonOrNull  the failure as structured fields ({@code FailureDetails} as JSON), if it has any
     */
    record Failed(String error, String detailsJsonOrNull) implements JobOutcome {
        public Failed {
            if (error == null) {
                throw new IllegalArgumentException("got null error, expected a message");
            }
        }

        public Failed(String error) {
            this(error, null);
        }
    }
}
