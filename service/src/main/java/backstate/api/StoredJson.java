package backstate.api;

import backstate.store.CorruptDataException;
import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;

/**
 * Stored JSON text checked before it is written raw into an answer ({@code @JsonRawValue}): it
 * must be exactly one well-formed JSON value, so a damaged row answers a problem naming the item
 * instead of a 200 whose body is not JSON. The check streams the tokens once and builds no tree.
 */
final class StoredJson {
    private static final JsonFactory FACTORY = new JsonFactory();

    private StoredJson() {
    }

    /** The text itself when it is one JSON value (null stays null); otherwise throws naming {@code item}. */
    static String checked(String text, String item) {
        if (text == null) {
            return null;
        }
        try (JsonParser parser = FACTORY.createParser(text)) {
            if (parser.nextToken() == null) {
                throw corrupt(item, "the stored JSON is empty", null);
            }
            parser.skipChildren();
            JsonToken after = parser.nextToken();
            if (after != null) {
                throw corrupt(item, "the stored JSON has text after its value", null);
            }
            return text;
        } catch (IOException e) {
            throw corrupt(item, "the stored JSON is malformed", e);
        }
    }

    /** Stored JSON read as {@code type}; text that is not one (null stays null) throws naming {@code item}. */
    static <T> T read(ObjectMapper mapper, String text, Class<T> type, String item) {
        if (text == null) {
            return null;
        }
        try {
            return mapper.readValue(text, type);
        } catch (IOException e) {
            throw corrupt(item, "the stored JSON is not a valid " + type.getSimpleName(), e);
        }
    }

    private static CorruptDataException corrupt(String item, String reason, Throwable cause) {
        return new CorruptDataException(item, reason, cause);
    }
}
