package backstate.auth;

/**
 * Client-chosen text made safe to put in a log line: every character that could end the line,
 * hide text or reorder what a reader sees (Unicode controls Cc, formats Cf such as the
 * bidirectional overrides U+202A–U+202E and isolates U+2066–U+2069, line and paragraph
 * separators, lone surrogates) is written as {@code \\uXXXX}, and a backslash as {@code \\\\},
 * so the escaped form cannot be mistaken for the raw one. Printable text passes unchanged.
 */
public final class LogText {
    private LogText() {
    }

    public static String escaped(String text) {
        if (text == null) {
            return "null";
        }
        StringBuilder out = new StringBuilder(text.length());
        for (int i = 0; i < text.length(); i++) {
            char c = text.charAt(i);
            if (c == '\\') {
                out.append("\\\\");
            } else if (hidesOrBreaks(text, i)) {
                out.append(String.format("\\u%04x", (int) c));
            } else {
                out.append(c);
            }
        }
        return out.toString();
    }

    /** True when the text holds a character {@link #escaped} would escape (not counting the backslash). */
    public static boolean hasHidingOrBreaking(String text) {
        for (int i = 0; i < text.length(); i++) {
            if (hidesOrBreaks(text, i)) {
                return true;
            }
        }
        return false;
    }

    private static boolean hidesOrBreaks(String text, int i) {
        char c = text.charAt(i);
        if (Character.isHighSurrogate(c)) {
            return i + 1 >= text.length() || !Character.isLowSurrogate(text.charAt(i + 1));
        }
        if (Character.isLowSurrogate(c)) {
            return i == 0 || !Character.isHighSurrogate(text.charAt(i - 1));
        }
        int type = Character.getType(c);
        return type == Character.CONTROL || type == Character.FORMAT || type == Character.LINE_SEPARATOR
                || type == Character.PARAGRAPH_SEPARATOR;
    }
}
