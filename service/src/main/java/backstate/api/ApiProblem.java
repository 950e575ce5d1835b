package backstate.api;

import java.util.List;

/** An answer other than success, thrown by handlers and turned into problem+json in one place. */
public final class ApiProblem extends RuntimeException {
    /** Seconds a client should wait before retrying when the service is busy. */
    public static final int RETRY_AFTER_SECONDS = 5;

    private final int status;
    private final String slug;
    private final String title;
    private final List<Problem.FieldError> errors;

    private ApiProblem(int status, String slug, String title, String detail, List<Problem.FieldError> errors) {
        super(detail);
        this.status = status;
        this.slug = slug;
        this.title = title;
        this.errors = errors;
    }

    public static ApiProblem notFound(String what) {
        return new ApiProblem(404, "not-found", "Not found", what + " does not exist", null);
    }

    public static ApiProblem conflict(String detail) {
        return new ApiProblem(409, "conflict", "Conflict with the current state", detail, null);
    }

    public static ApiProblem invalid(String field, String detail) {
        return new ApiProblem(400, "invalid-input", "Invalid input", field + ": " + detail,
                List.of(new Problem.FieldError(field, detail)));
    }

    public static ApiProblem unprocessable(String field, String detail) {
        return new ApiProblem(422, "inconsistent-input", "Input inconsistent with the model", field + ": " + detail,
                List.of(new Problem.FieldError(field, detail)));
    }

    /**
     * The Idempotency-Key was first used with a different request: 422, as the IETF draft "The
     * Idempotency-Key HTTP Header Field" (draft-ietf-httpapi-idempotency-key-header-07, section
     * 2.7) answers the reuse of a key with another payload.
     */
    public static ApiProblem idempotencyKeyReused(String key) {
        String detail = "this key was first used for a different request (another body, model version, media type"
                + " or options); a retry must repeat the first request exactly, and a new trace needs a new key";
        return new ApiProblem(422, "idempotency-key-reused", "Idempotency-Key is already used",
                "Idempotency-Key " + Params.quoted(key) + ": " + detail, List.of(new Problem.FieldError("Idempotency-Key", detail)));
    }

    public static ApiProblem tooLarge(long limit) {
        return new ApiProblem(413, "payload-too-large", "Payload too large",
                "the body exceeds " + limit + " bytes (after decompression)", null);
    }

    public static ApiProblem unsupportedMediaType(String got, String expected) {
        return unsupported("Content-Type", got, expected);
    }

    /**
     * A content coding the service cannot undo (RFC 9110 §15.5.16: 415, the codings it takes in
     * Accept-Encoding, which the caller sets).
     */
    public static ApiProblem unsupportedContentEncoding(String got, String expected) {
        return unsupported("Content-Encoding", got, expected);
    }

    private static ApiProblem unsupported(String header, String got, String expected) {
        String detail = "got " + got + ", expected " + expected;
        return new ApiProblem(415, "unsupported-media-type", "Unsupported media type", header + ": " + detail,
                List.of(new Problem.FieldError(header, detail)));
    }

    /** The body arrived too slowly or for too long (408); the connection is closed after the answer. */
    public static ApiProblem bodyTooSlow(String detail) {
        return new ApiProblem(408, "request-timeout", "Request body too slow", "body: " + detail,
                List.of(new Problem.FieldError("body", detail)));
    }

    public static ApiProblem busy(String detail) {
        return new ApiProblem(503, "service-busy", "Service busy, retry later", detail, null);
    }

    /**
     * A stored item (or the database file) cannot be read back: 500, the one deliberate 5xx that
     * is not 503, because retrying reads the same damaged bytes and the request was fine. Its own
     * type lets a dashboard show "this item is damaged" and go on with the rest.
     */
    public static ApiProblem storedDataCorrupt(String item) {
        return new ApiProblem(500, "stored-data-corrupt", "Stored data is corrupt",
                item + " is damaged in storage and cannot be shown; the operator has it in the log", null);
    }

    /** The database's start check found damage: not ready (503), until an operator restores the file. */
    public static ApiProblem databaseDamaged(String detail) {
        return new ApiProblem(503, "database-damaged", "The database is damaged", detail, null);
    }

    public int status() {
        return status;
    }

    public Problem toProblem() {
        return new Problem(ProblemTypes.uri(slug), title, status, getMessage(), errors);
    }
}
