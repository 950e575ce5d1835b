package backstate.formats;

import java.util.regex.Pattern;

/** Checks and quotes single request values (identifiers in paths, queries and bodies) the same way everywhere. */
public final class FieldValues {
    /** Unit IDs and family names: 1–64 of letters, digits, '_', '-', '.', starting with a letter or digit. */
    public static final Pattern IDENTIFIER = Pattern.compile("[A-Za-z0-9][A-Za-z0-9_.\\-]{0,63}");
    /** What an identifier must look like, as a refusal says it. */
    private static final String IDENTIFIER_RULE = "expected 1-64 characters: letters, digits, _ - . (starting with a letter or digit)";
    private static final int IDENTIFIER_LENGTH = 64;
    /** Longest stretch of a client's value quoted back in a message. */
    private static final int QUOTED_LENGTH = 40;

    private FieldValues() {
    }

    public static boolean isIdentifier(String value) {
        return value != null && IDENTIFIER.matcher(value).matches();
    }

    /** The value if it is an identifier; otherwise an {@link InputException} naming the field. */
    public static String identifier(String field, String value) {
        if (!isIdentifier(value)) {
            throw new InputException(field, notIdentifier(value));
        }
        return value;
    }

    /** The refusal of a value that is not an identifier: what it got, then the rule. */
    public static String notIdentifier(String value) {
        return "got " + text(value, IDENTIFIER_LENGTH) + ", " + IDENTIFIER_RULE;
    }

    /** A client's text for a message about its length: "nothing", "5000 characters" past {@code max}, else quoted. */
    public static String text(String value, int max) {
        return value != null && value.length() > max ? value.length() + " characters" : quoted(value);
    }

    /** A client's value for a message: in quotes, cut after 40 characters; "nothing" for null. */
    public static String quoted(String value) {
        if (value == null) {
            return "nothing";
        }
        return "\"" + (value.length() > QUOTED_LENGTH ? value.substring(0, QUOTED_LENGTH) + "…" : value) + "\"";
    }
}
