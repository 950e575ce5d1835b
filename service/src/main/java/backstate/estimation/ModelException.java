package backstate.estimation;

/** Rejects a malformed model or trace before any work starts, naming the offending field. */
public final class ModelException extends IllegalArgumentException {
    private final String field;
    private final String problem;

    public ModelException(String field, String problem) {
        super(field + ": " + problem);
        this.field = field;
        this.problem = problem;
    }

    /** The offending field as a path, e.g. {@code a[2][1]} or {@code outputs[17][0]}. */
    public String field() {
        return field;
    }

    /** What is wrong with the field, without its name. */
    public String problem() {
        return problem;
    }
}
