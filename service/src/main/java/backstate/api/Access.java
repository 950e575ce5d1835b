package backstate.api;

/**
 * Who may call a route. Enforced in one place before any handler runs (see the security model in
 * README.md): admin keys may call everything; gateway keys are scoped to a unit-ID pattern.
 */
public enum Access {
    /** No key needed: the start page, liveness, readiness, metrics and the API document. */
    PUBLIC,
    /** Any valid key (admin, gateway, reader or pipeline): model catalogue reads. */
    ANY_KEY,
    /** Admin keys only: publishing and retiring models, key management, cancelling regression runs. */
    ADMIN,
    /** Admin, or a gateway key whose unit pattern matches the path's {unitId}: trace posts. */
    GATEWAY_FOR_UNIT,
    /**
     * Admin, reader, or a gateway key scoped to the job's unit: job state and cancel. Not pipeline
     * keys: the job routes include cancelling a unit's estimate job.
     */
    JOB_OF_UNIT,
    /** Admin, reader or pipeline keys: estimates, fleet views, regression reads, planning. */
    READER,
    /** Admin or pipeline keys: starting a regression run (what a CI pipeline gates a release on). */
    PIPELINE
}
