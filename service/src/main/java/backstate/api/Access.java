package backstate.api;

/**
 * Who may call a route. Enforced in one place before any handler runs (see the security model in
 * README.md): admin keys may call everything; gateway keys are scoped to a unit-ID pattern.
 */
public enum Access {
    /** No key needed: liveness, readiness, metrics and the API document. */
    PUBLIC,
    /** Any valid key (admin, gateway or reader): model catalogue reads. */
    ANY_KEY,
    /** Admin keys only: publishing and retiring models, key management. */
    ADMIN,
    /** Admin, or a gateway key whose unit pattern matches the path's {unitId}: trace posts. */
    GATEWAY_FOR_UNIT,
    /** Admin, reader, or a gateway key scoped to the job's unit: job state and cancel. */
    JOB_OF_UNIT,
    /** Admin or reader keys: estimates, fleet views, regressions, planning. */
    READER
}
