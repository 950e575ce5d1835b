package backstate.formats;

/** Rejects a malformed request body or file, naming the offending field (a JSON-pointer-like path or CSV cell). */
public final class InputException extends RuntimeException {
    private final String field;
    private final String problem;

    public InputException(String field, String problem) {
        super(field + ": " + problem);
        this.field = field;
        this.problem = problem;
    }

    public String field() {
        return field;
    }

    /** What is wrong with the field, without its name. */
    public String problem() {
        return problem;
    }
}
