package backstate.formats;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.databind.JsonMappingException;

/**
 * A model matrix with an entry that is not a number ({@code a[1][2]: got null, expected a number}).
 * A {@link JsonMappingException}, so that Jackson passes it on unwrapped from inside a document;
 * its message is ours alone, without the parser's reference chain.
 */
public final class MatrixEntryException extends JsonMappingException {
    private final String field;
    private final String problem;

    MatrixEntryException(JsonParser parser, String field, String problem) {
        super(parser, field + ": " + problem);
        this.field = field;
        this.problem = problem;
    }

    public String field() {
        return field;
    }

    public String problem() {
        return problem;
    }

    @Override
    public String getMessage() {
        return field + ": " + problem;
    }
}
