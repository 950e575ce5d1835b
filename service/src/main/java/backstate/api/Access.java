package backstate.api;

/**
 * Who may call a route. Enforced in one place before any handler runs; every route's rule is
 * listed in docs/security.md ("Who may call what"), which AccessMatrixTest checks the server against.
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
     * Admin, reader, or a gateway key scoped to the job's unit: reading a job's state. Not
     * pipeline keys: a pipeline follows its run at /v1/regressions/{id}.
     */
    JOB_OF_UNIT,
    /**
     * Admin, or a gateway key scoped to the job's unit: cancelling a job. Not readers (read-only)
     * nor pipelines (they cancel nothing).
     */
    GATEWAY_FOR_JOB,
    /** Admin, reader or pipeline keys: estimates, fleet views, regression reads, planning. */
    READER,
    /** Admin or pipeline keys: starting a regression run (what a CI pipeline gates a release on). */
    PIPELINE
}
