package backstate.auth;

import java.util.Optional;
import java.util.regex.Pattern;

/**
 * A gateway key's scope: a glob over unit IDs, compiled once to an anchored regular expression.
 * {@code *} stands for any run of unit-ID characters (possibly empty), {@code ?} for exactly one,
 * everything else for itself, case-sensitively: {@code RCX-1*} covers RCX-1 and RCX-10415 but not
 * RCX-2 or XRCX-1. Only unit-ID characters and the two wildcards are accepted, so no regular
 * expression syntax can be smuggled in.
 */
public final class UnitPattern {
    /** 1–64 of the characters unit IDs use (letters, digits, '_', '.', '-') and the wildcards. */
    public static final Pattern GLOB = Pattern.compile("[A-Za-z0-9_.\\-*?]{1,64}");
    private static final String UNIT_CHAR = "[A-Za-z0-9_.\\-]";

    private final String glob;
    private final Pattern regex;

    private UnitPattern(String glob) {
        this.glob = glob;
        this.regex = Pattern.compile(toRegex(glob));
    }

    /** The pattern, or empty when the text is not an accepted glob (see {@link #GLOB}). */
    public static Optional<UnitPattern> parse(String glob) {
        return glob != null && GLOB.matcher(glob).matches() ? Optional.of(new UnitPattern(glob)) : Optional.empty();
    }

    /** For patterns already validated (read back from the database). */
    public static UnitPattern of(String glob) {
        return parse(glob).orElseThrow(() -> new IllegalArgumentException(
                "got unit pattern '" + glob + "', expected " + GLOB.pattern()));
    }

    /** True when the whole unit ID matches; false for null. */
    public boolean matches(String unitId) {
        return unitId != null && regex.matcher(unitId).matches();
    }

    public String glob() {
        return glob;
    }

    /** The anchored regular expression (matches() anchors both ends), for documentation and tests. */
    String regex() {
        return regex.pattern();
    }

    @Override
    public String toString() {
        return glob;
    }

    private static String toRegex(String glob) {
        StringBuilder regex = new StringBuilder(glob.length() * 2);
        StringBuilder literal = new StringBuilder();
        for (char c : glob.toCharArray()) {
            if (c == '*' || c == '?') {
                regex.append(quote(literal)).append(UNIT_CHAR).append(c == '*' ? "*" : "");
                literal.setLength(0);
            } else {
                literal.append(c);
            }
        }
        return regex.append(quote(literal)).toString();
    }

    private static String quote(StringBuilder literal) {
        return literal.length() == 0 ? "" : Pattern.quote(literal.toString());
    }
}
