package backstate.api;

import java.util.Optional;

/**
 * A request refused before its handler ran: 401 when no valid key was presented, 403 when the
 * key's role or unit scope does not cover the request. The answer is the same fixed problem
 * whatever the reason, so it tells a caller nothing about the resource or the key.
 */
final class AccessDenied extends RuntimeException {
    /** RFC 6750 §3: the challenge sent with every 401. */
    static final String CHALLENGE = "Bearer realm=\"backstate\"";
    /** RFC 6750 §3.1: added when a key was presented but is not valid. */
    static final String INVALID_TOKEN = CHALLENGE + ", error=\"invalid_token\"";

    private final int status;
    private final String challenge;

    private AccessDenied(int status, String detail, String challenge) {
        // No stack trace: a refusal is an answer, not a fault, and scanners can make many of them.
        super(detail, null, false, false);
        this.status = status;
        this.challenge = challenge;
    }

    static AccessDenied unauthenticated(boolean keyPresented) {
        return new AccessDenied(401, "a valid API key is required: send Authorization: Bearer <key>",
                keyPresented ? INVALID_TOKEN : CHALLENGE);
    }

    static AccessDenied forbidden() {
        return new AccessDenied(403, "this key's role or unit scope does not allow this request", null);
    }

    /** The WWW-Authenticate header value, for a 401. */
    Optional<String> challenge() {
        return Optional.ofNullable(challenge);
    }

    Problem toProblem() {
        return status == 401
                ? new Problem(ProblemTypes.uri("unauthorized"), "Unauthorized", 401, getMessage(), null)
                : new Problem(ProblemTypes.uri("forbidden"), "Forbidden", 403, getMessage(), null);
    }
}
