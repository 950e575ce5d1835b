package backstate.formats;

/** Rejects a malformed request body or file, naming the offending field (a JSON-pointer-like path or CSV cell). */
public final class InputException extends RuntimeException {
    private final String field;

    public InputException(String field, String problem) {
        super(field + ": " + problem);
        this.field = field;
    }

    public String field() {
        return field;
    }
}
