package backstate.intake;

/**
 * A trace post refused for what it asks of the service rather than for its bytes: a model version
 * that does not exist or is retired, or a body in a media type the intake does not read. The
 * HTTP edge's one error mapper turns the reason into its status.
 */
public final class TraceRefused extends RuntimeException {
    /** Media types a trace body may have. */
    public static final String ACCEPTED_TYPES = "application/json or text/csv";

    /** Why the post was refused. */
    public enum Reason {
        /** The named model family, or its version, does not exist (the query's "model" or "version" field). */
        UNKNOWN_VERSION,
        /** The named model version is retired and takes no new traces. */
        RETIRED_VERSION,
        /** The body's media type is not one of {@link #ACCEPTED_TYPES}; the message is the type got. */
        UNSUPPORTED_MEDIA_TYPE
    }

    private final Reason reason;
    private final String field;

    private TraceRefused(Reason reason, String field, String detail) {
        super(detail);
        this.reason = reason;
        this.field = field;
    }

    static TraceRefused unknownVersion(String family, int version) {
        return new TraceRefused(Reason.UNKNOWN_VERSION, "version",
                "model version " + family + "/" + version + " does not exist");
    }

    static TraceRefused unknownFamily(String family) {
        return new TraceRefused(Reason.UNKNOWN_VERSION, "model", "model family " + family + " does not exist");
    }

    static TraceRefused retiredVersion(String family, int version) {
        return new TraceRefused(Reason.RETIRED_VERSION, "version",
                "model version " + family + "/" + version + " is retired and takes no new traces");
    }

    static TraceRefused unsupportedMediaType(String got) {
        return new TraceRefused(Reason.UNSUPPORTED_MEDIA_TYPE, "Content-Type", got);
    }

    public Reason reason() {
        return reason;
    }

    /** The request field the refusal is about. */
    public String field() {
        return field;
    }
}
