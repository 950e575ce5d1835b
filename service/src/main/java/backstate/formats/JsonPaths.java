package backstate.formats;

import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonStreamContext;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.exc.InputCoercionException;
import com.fasterxml.jackson.core.exc.StreamConstraintsException;
import com.fasterxml.jackson.core.exc.StreamReadException;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.exc.InvalidFormatException;
import com.fasterxml.jackson.databind.exc.MismatchedInputException;
import com.fasterxml.jackson.databind.exc.UnrecognizedPropertyException;
import java.math.BigInteger;
import java.util.Collection;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Turns a Jackson error into the API's words: its location into a field path like
 * {@code .prior.mean[2]}, and its kind into a detail that says what was got and what was expected,
 * without the Java types and source placeholders of Jackson's own messages.
 */
public final class JsonPaths {
    /** A body with no JSON value at all, in the words every reader of a JSON body uses. */
    static final String EMPTY_BODY = "an empty body";
    /** How Jackson's strict duplicate detection begins its message (the only mark it leaves). */
    private static final String DUPLICATE = "Duplicate field '";
    /** The detail for a body that goes on after its JSON document. */
    public static final String AFTER_DOCUMENT = "got more JSON after the document, expected nothing after it";
    /** How Jackson begins the message of {@code FAIL_ON_TRAILING_TOKENS}. */
    private static final String TRAILING = "Trailing token";
    /** A location inside a parser's message; the source part is a placeholder, as sources are never shown. */
    private static final Pattern SOURCE_AT = Pattern.compile("\\[Source: [^\\]]*?; line: (\\d+), column: (\\d+)]");
    private static final Pattern SOURCE = Pattern.compile("\\s*\\[Source: [^\\]]*]");
    /** The parser's advice to switch on a leniency ("…: enable `JsonReadFeature.ALLOW_…` to allow"): not the client's to take. */
    private static final Pattern ENABLE_FEATURE = Pattern.compile(": enable `[A-Za-z_.]*` to allow");
    /** How the parser names NaN or an infinity written as a number. */
    private static final Pattern NON_NUMERIC = Pattern.compile("^Non-standard token '([-+A-Za-z]{1,9})'");
    /** How the parser meets a comment, naming the parser feature that would allow it. */
    private static final Pattern COMMENT = Pattern.compile("maybe a \\(non-standard\\) comment\\? \\(not recognized as one since Feature"
            + " '[A-Z_]*' not enabled for parser\\)");
    /** Where a reading limit's message says the limit is set ("(64, from `StreamReadConstraints.getMaxNumberLength()`)"). */
    private static final Pattern LIMIT_SOURCE = Pattern.compile(", from `[A-Za-z.()]*`\\)");
    /** Targets that take only whole numbers (data binding refuses 1.5 for them). */
    private static final Set<Class<?>> WHOLE_NUMBERS = Set.of(int.class, long.class, short.class, byte.class, Integer.class,
            Long.class, Short.class, Byte.class, BigInteger.class);
    /** How data binding begins the message of {@code FAIL_ON_NULL_FOR_PRIMITIVES}. */
    private static final String NULL_FOR_PRIMITIVE = "Cannot map `null` into type";
    /** How data binding begins its message for a document with nothing in it. */
    private static final String NO_CONTENT = "No content to map due to end-of-input";
    /** How the parser quotes a number too large for its target ("Numeric value (99999999999) out of range of int"). */
    private static final Pattern OUT_OF_RANGE = Pattern.compile("^Numeric value \\(([-+0-9.eE]{1,40})\\) out of range");
    /** How data binding names the kind of value it could not bind ("from Array value"). */
    /** Jackson's words for a string refused where a number or boolean goes (its coercion turned off, {@link Json}). */
    private static final Pattern COERCED_TEXT = Pattern.compile("^Cannot coerce String value \\(\"(.*?)\"\\)");
    /** ... and for such a value inside a primitive array, whose target type is then the array. */
    private static final String TO_ELEMENT = " to element of ";
    private static final Pattern GOT_KIND = Pattern.compile("(?:from|Cannot coerce) (Array|Object|String|Number|Integer|Floating-point|Boolean|Null) value");

    /** The parser's words turned into the API's, in this order: its advice and settings out, locations plain. */
    private static final List<Map.Entry<Pattern, String>> REWORDINGS = List.of(
            Map.entry(NON_NUMERIC, "unexpected token $1: JSON numbers are finite"),
            Map.entry(ENABLE_FEATURE, ""),
            Map.entry(COMMENT, "JSON has no comments"),
            Map.entry(SOURCE_AT, "line $1, column $2"),
            Map.entry(SOURCE, ""),
            Map.entry(LIMIT_SOURCE, ")"));

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
    private static Optional<InputException> duplicateKey(JsonProcessingException e, String prefix) {
        // Data binding wraps the parser's error, with a path of its own, around it as a cause.
        Throwable cause = e;
        while (cause != null && !(cause instanceof JsonProcessingException p && isDuplicate(p))) {
            cause = cause.getCause();
        }
        if (cause == null) {
            return Optional.empty();
        }
        JsonParser parser = (JsonParser) ((JsonProcessingException) cause).getProcessor();
        String field = field(prefix, path(parser.getParsingContext()));
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

    /**
     * The refusal for any error reading a JSON document, naming the field where it can be told:
     * a key written twice, a field the target does not have, a number out of its field's range, a
     * value of the wrong type, a value past a reading limit (each at its path after {@code prefix}:
     * "body", or "" for a trace whose fields are named from its root), or JSON that does not parse
     * ("body").
     */
    public static InputException refusal(JsonProcessingException e, String prefix) {
        Optional<InputException> duplicate = duplicateKey(e, prefix);
        if (duplicate.isPresent()) {
            return duplicate.get();
        }
        if (e instanceof UnrecognizedPropertyException unknown) {
            return new InputException(field(prefix, of(unknown)), "got an unknown field "
                    + FieldValues.quoted(unknown.getPropertyName()) + ", expected one of " + unknown.getKnownPropertyIds());
        }
        Optional<JsonProcessingException> broken = e instanceof JsonMappingException ? parseError(e) : Optional.of(e);
        if (broken.isEmpty()) {
            return new InputException(field(prefix, of((JsonMappingException) e)), mismatch((JsonMappingException) e));
        }
        if (broken.get() instanceof InputCoercionException range && range.getProcessor() != null) {
            return new InputException(field(prefix, path(range.getProcessor().getParsingContext())), outOfRange(range));
        }
        if (broken.get() instanceof StreamConstraintsException && e instanceof JsonMappingException bound && !of(bound).isEmpty()) {
            return new InputException(field(prefix, of(bound)), malformed(broken.get()));
        }
        return new InputException(prefix.isEmpty() ? "body" : prefix, malformed(broken.get()));
    }

    /** A field's name: the path after the prefix, or from the root without its first dot; the body itself when the path is empty. */
    private static String field(String prefix, String path) {
        if (!prefix.isEmpty()) {
            return prefix + path;
        }
        return path.isEmpty() ? "body" : path.substring(1);
    }

    /** A number too large for the whole-number field it is read into, with that field's range. */
    private static String outOfRange(InputCoercionException e) {
        Class<?> type = e.getTargetType();
        String range = type == int.class || type == Integer.class ? " from " + Integer.MIN_VALUE + " to " + Integer.MAX_VALUE
                : type == long.class || type == Long.class ? " from " + Long.MIN_VALUE + " to " + Long.MAX_VALUE : "";
        Matcher number = OUT_OF_RANGE.matcher(e.getOriginalMessage() == null ? "" : e.getOriginalMessage());
        return "got " + (number.find() ? number.group(1) : "a number out of range") + ", expected a whole number" + range;
    }

    /**
     * The detail for JSON that does not parse: where the parser stopped and what it says there
     * ("got malformed JSON at line 1, column 12: unexpected end-of-input …"), or, for a document past
     * the reading limits, that it is beyond them.
     */
    private static String malformed(JsonProcessingException e) {
        JsonLocation at = e.getLocation();
        String where = at == null || at.getLineNr() < 1 ? "" : " at line " + at.getLineNr() + ", column " + at.getColumnNr();
        String what = e instanceof StreamConstraintsException ? "got JSON beyond the limits" : "got malformed JSON";
        return what + where + ": " + readable(e.getOriginalMessage());
    }

    /** The parse error data binding wrapped (a reader of our own met broken JSON inside a value), if there is one. */
    private static Optional<JsonProcessingException> parseError(Throwable e) {
        for (Throwable cause = e; cause != null; cause = cause.getCause()) {
            if (cause instanceof StreamReadException || cause instanceof StreamConstraintsException) {
                return Optional.of((JsonProcessingException) cause);
            }
        }
        return Optional.empty();
    }

    /**
     * The detail for a value data binding could not take: "got an array, expected a number", or
     * that more JSON follows the document; the path is {@link #of}'s.
     */
    public static String mismatch(JsonMappingException e) {
        String message = e.getOriginalMessage();
        if (message != null && message.startsWith(TRAILING)) {
            return AFTER_DOCUMENT;
        }
        if (!(e instanceof MismatchedInputException m)) {
            return "got a value of the wrong type or shape";
        }
        Class<?> target = m.getTargetType();
        boolean element = target != null && target.isArray() && message != null && message.contains(TO_ELEMENT);
        String expected = expected(element ? target.getComponentType() : target);
        if (expected == null) {
            return "got a value of the wrong type or shape";
        }
        Matcher coerced = message == null ? null : COERCED_TEXT.matcher(message);
        String got = m instanceof InvalidFormatException f ? got(f.getValue())
                : coerced != null && coerced.find() ? got((Object) coerced.group(1)) : got(message);
        return "got " + (got == null ? "a value of another type" : got) + ", expected " + expected;
    }

    /** A JSON token as the API words it: "an object", "a number", "end of input". */
    public static String describe(JsonToken token) {
        if (token == null) {
            return "end of input";
        }
        return switch (token) {
            case START_OBJECT -> "an object";
            case START_ARRAY -> "an array";
            case VALUE_STRING -> "a string";
            case VALUE_NULL -> "null";
            case VALUE_TRUE, VALUE_FALSE -> "a boolean";
            case VALUE_NUMBER_INT, VALUE_NUMBER_FLOAT -> "a number";
            default -> token.toString();
        };
    }

    /** The JSON kind a Java target type is read from; null when there is no target type to go by. */
    private static String expected(Class<?> type) {
        if (type == null) {
            return null;
        }
        if (type == String.class || type == Character.class || type == char.class) {
            return "a string";
        }
        if (type == Boolean.class || type == boolean.class) {
            return "true or false";
        }
        if (WHOLE_NUMBERS.contains(type)) {
            return "a whole number";
        }
        if (Number.class.isAssignableFrom(type) || type.isPrimitive()) {
            return "a number";
        }
        if (type.isArray() || Collection.class.isAssignableFrom(type)) {
            return "an array";
        }
        return "an object";
    }

    /** The kind data binding's message names ("from Array value"), in the API's words; null when it names none. */
    private static String got(String message) {
        if (message == null) {
            return null;
        }
        if (message.startsWith(NULL_FOR_PRIMITIVE)) {
            return describe(JsonToken.VALUE_NULL);
        }
        if (message.startsWith(NO_CONTENT)) {
            return EMPTY_BODY;
        }
        Matcher m = GOT_KIND.matcher(message);
        if (!m.find()) {
            return null;
        }
        return describe(switch (m.group(1)) {
            case "Array" -> JsonToken.START_ARRAY;
            case "Object" -> JsonToken.START_OBJECT;
            case "String" -> JsonToken.VALUE_STRING;
            case "Boolean" -> JsonToken.VALUE_TRUE;
            case "Null" -> JsonToken.VALUE_NULL;
            default -> JsonToken.VALUE_NUMBER_FLOAT;
        });
    }

    /** A scalar data binding could not convert, shown as it came. */
    private static String got(Object value) {
        if (value instanceof String text) {
            return "the text " + FieldValues.quoted(text);
        }
        return value instanceof Number number ? "the number " + number : null;
    }

    /** Jackson's message without its source placeholders, its first word in lower case unless it is an acronym ("JSON"). */
    private static String readable(String message) {
        if (message == null || message.isEmpty()) {
            return "unreadable JSON";
        }
        String text = message;
        for (Map.Entry<Pattern, String> rewording : REWORDINGS) {
            text = rewording.getKey().matcher(text).replaceAll(rewording.getValue());
        }
        boolean word = text.length() > 1 && Character.isLowerCase(text.charAt(1));
        return word ? text.substring(0, 1).toLowerCase(Locale.ROOT) + text.substring(1) : text;
    }
}
