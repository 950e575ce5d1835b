package backstate.api;

import backstate.BuildInfo;
import io.javalin.http.Context;
import io.javalin.http.HttpStatus;
import java.util.Collections;

/**
 * Entity tags for answers that never change once written (an estimate; its series, rebuilt the
 * same way from a stored trace and model version), and the If-None-Match check that lets a
 * dashboard polling them skip the body: a match answers 304 with no body (RFC 9110 §8.8.3,
 * §13.1.2, §15.4.5). A tag holds what the answer is of and this build's version, so a build that
 * writes answers differently never matches a tag an older build gave. Tags are weak: the server
 * gzips an answer for a client that accepts it, and the gzipped and plain bytes share one tag
 * (a strong tag would promise the same bytes; §8.8.1); every answer says {@code Vary: Accept-Encoding}
 * ({@link ApiServer}).
 *
 * <p>{@code Cache-Control: private, no-cache}: a browser may keep the answer, must ask again before
 * each use (the newest estimate of a unit changes), and a shared cache keeps nothing.
 */
final class EntityTags {
    static final String CACHE_CONTROL = "private, no-cache";
    private static final String BUILD = opaque(BuildInfo.build());

    private EntityTags() {
    }

    /** The weak tag {@code W/"part;part;…;build"}; characters a tag cannot hold become '_'. */
    static String of(String... parts) {
        StringBuilder out = new StringBuilder("W/\"");
        for (String part : parts) {
            out.append(opaque(part)).append(';');
        }
        return out.append(BUILD).append('"').toString();
    }

    /**
     * True, with status 304, ETag and Cache-Control set and nothing left to write, when the
     * request's If-None-Match names {@code tag}; otherwise false and the answer untouched.
     */
    static boolean answeredUnchanged(Context ctx, String tag) {
        String conditions = String.join(",", Collections.list(ctx.req().getHeaders("If-None-Match")));
        if (conditions.isEmpty() || !matches(conditions, tag)) {
            return false;
        }
        ctx.status(HttpStatus.NOT_MODIFIED);
        tag(ctx, tag);
        return true;
    }

    /** Sets ETag and Cache-Control on a full answer, once its body is made (an error answer carries no tag). */
    static void tag(Context ctx, String tag) {
        ctx.header("ETag", tag);
        ctx.header("Cache-Control", CACHE_CONTROL);
    }

    /**
     * Whether an If-None-Match value names {@code tag} by the weak comparison (RFC 9110 §8.8.3.2:
     * equal opaque tags, either or both marked W/), or is "*". A value that is not a list of
     * entity tags matches nothing, so the full answer is sent.
     */
    static boolean matches(String ifNoneMatch, String tag) {
        String wanted = tag.startsWith("W/") ? tag.substring(2) : tag;
        if (ifNoneMatch.strip().equals("*")) {
            return true;
        }
        int at = 0;
        int end = ifNoneMatch.length();
        boolean found = false;
        while (true) {
            at = skipSeparators(ifNoneMatch, at);
            if (at == end) {
                return found;
            }
            if (ifNoneMatch.startsWith("W/", at)) {
                at += 2;
            }
            if (at == end || ifNoneMatch.charAt(at) != '"') {
                return false;
            }
            int close = ifNoneMatch.indexOf('"', at + 1);
            if (close < 0 || !isOpaque(ifNoneMatch, at + 1, close)) {
                return false;
            }
            found |= ifNoneMatch.regionMatches(at, wanted, 0, wanted.length()) && close + 1 - at == wanted.length();
            at = close + 1;
            if (at < end && !isSeparator(ifNoneMatch.charAt(at))) {
                return false;
            }
        }
    }

    private static int skipSeparators(String s, int at) {
        while (at < s.length() && isSeparator(s.charAt(at))) {
            at++;
        }
        return at;
    }

    private static boolean isSeparator(char c) {
        return c == ',' || c == ' ' || c == '\t';
    }

    /** etagc = %x21 / %x23-7E / obs-text (RFC 9110 §8.8.3). */
    private static boolean isOpaque(String s, int from, int to) {
        for (int i = from; i < to; i++) {
            if (!isEtagChar(s.charAt(i))) {
                return false;
            }
        }
        return true;
    }

    private static boolean isEtagChar(char c) {
        return c == 0x21 || (c >= 0x23 && c <= 0x7E) || (c >= 0x80 && c <= 0xFF);
    }

    /** {@code part} with every character outside %x21 / %x23-7E (etagc but obs-text), and ';' (the separator), as '_'. */
    private static String opaque(String part) {
        StringBuilder out = new StringBuilder(part.length());
        for (int i = 0; i < part.length(); i++) {
            char c = part.charAt(i);
            out.append(c != ';' && c < 0x80 && isEtagChar(c) ? c : '_');
        }
        return out.toString();
    }
}
