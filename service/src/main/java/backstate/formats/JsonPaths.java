package backstate.formats;

import com.fasterxml.jackson.databind.JsonMappingException;

/** Turns a Jackson mapping error's reference chain into a field path like {@code .prior.mean[2]}. */
public final class JsonPaths {
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
}
