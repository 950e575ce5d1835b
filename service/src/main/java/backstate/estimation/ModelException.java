package backstate.estimation;

/** Rejects a malformed model or trace before any work starts, naming the offending field. */
public final class ModelException extends IllegalArgumentException {
    private final String field;

    public ModelException(String field, String problem) {
        super(field + ": " + problem);
        this.field = field;
    }

    /** The offending field as a path, e.g. {@code a[2][1]} or {@code outputs[17][0]}. */
    public String field() {
        return field;
    }
}
