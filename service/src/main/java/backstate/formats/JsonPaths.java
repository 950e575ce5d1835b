package backstate.formats;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonStreamContext;
import com.fasterxml.jackson.databind.JsonMappingException;
import java.util.Optional;

/** Turns a Jackson error's location into a field path like {@code .prior.mean[2]}. */
public final class JsonPaths {
    /** How Jackson's strict duplicate detection begins its message (the only mark it leaves). */
    private static final String DUPLICATE = "Duplicate field '";

    private JsonPaths() {
    }

    public static String of(JsonMappingException e) {
        StringBuilder path = new StringBuilder();
        for (JsonMappingException.Reference ref : e.getPath()) {
            if (ref.getFieldName() != null) {
                path.append('.').append(ref.getFieldName());
            } else if (ref.getIndex() >= 0) {
                path.append('[').append(ref.getIndex()).append(']');
            }
        }
        return path.toString();
    }

    /**
     * A key written twice in one object ({@link Json#strictFactory()}) as a refusal naming that key's
     * path after {@code prefix} ("body", or "" for a trace whose fields are named from its root);
     * empty for any other error.
     */
    public static Optional<InputException> duplicateKey(JsonProcessingException e, String prefix) {
        // Data binding wraps the parser's error, with a path of its own, around it as a cause.
        Throwable cause = e;
        while (cause != null && !(cause instanceof JsonProcessingException p && isDuplicate(p))) {
            cause = cause.getCause();
        }
        if (cause == null) {
            return Optional.empty();
        }
        JsonParser parser = (JsonParser) ((JsonProcessingException) cause).getProcessor();
        String path = path(parser.getParsingContext());
        String field = prefix.isEmpty() ? path.substring(1) : prefix + path;
        return Optional.of(new InputException(field, "got the key " + FieldValues.quoted(parser.getParsingContext().getCurrentName())
                + " twice in one object, expected each key once"));
    }

    private static boolean isDuplicate(JsonProcessingException e) {
        String message = e.getOriginalMessage();
        return message != null && message.startsWith(DUPLICATE) && e.getProcessor() instanceof JsonParser;
    }

    private static String path(JsonStreamContext context) {
        StringBuilder path = new StringBuilder();
        for (JsonStreamContext at = context; at != null && !at.inRoot(); at = at.getParent()) {
            if (at.inObject()) {
                path.insert(0, "." + at.getCurrentName());
            } else if (at.inArray()) {
                path.insert(0, "[" + at.getCurrentIndex() + "]");
            }
        }
        return path.toString();
    }
}
