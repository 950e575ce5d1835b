package backstate.formats;

import java.util.Locale;

/**
 * Matches a Content-Type header against one media type exactly (RFC 9110 §8.3.1): type and
 * subtype compared without regard to case, parameters such as {@code charset} allowed after a
 * {@code ;}, and nothing else, so {@code text/csvfoo} is not {@code text/csv}.
 */
public final class MediaType {
    private MediaType() {
    }

    /** Whether the header (null when absent) names {@code type}, parameters aside. */
    public static boolean is(String headerOrNull, String type) {
        if (headerOrNull == null) {
            return false;
        }
        int semicolon = headerOrNull.indexOf(';');
        String essence = semicolon < 0 ? headerOrNull : headerOrNull.substring(0, semicolon);
        return essence.strip().toLowerCase(Locale.ROOT).equals(type);
    }
}
