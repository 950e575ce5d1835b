package backstate.api;

import backstate.formats.FieldValues;
import backstate.text.Counted;
import io.javalin.http.Context;
import io.javalin.http.Handler;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;

/**
 * Refuses a query string the API would otherwise read in a way the client did not mean: a
 * parameter given more than once ({@code ?version=1&version=2}: no parameter of the API takes a
 * list, so a second value is ambiguous, refused as a JSON key written twice is), and a broken
 * percent escape ({@code ?limit=2%}), which the server's decoding drops with its parameter.
 */
final class QueryStrings {
    /** Values quoted back in the refusal; the rest are counted only. */
    private static final int SHOWN = 3;

    private QueryStrings() {
    }

    static Handler checked(Handler handler) {
        return ctx -> {
            requireWellEscaped(ctx.queryString());
            requireSingle(ctx);
            handler.handle(ctx);
        };
    }

    /** RFC 3986 2.1: a '%' begins an escape of exactly two hex digits. */
    static void requireWellEscaped(String query) {
        if (query == null) {
            return;
        }
        for (int i = query.indexOf('%'); i >= 0; i = query.indexOf('%', i + 1)) {
            if (i + 2 >= query.length() || Character.digit(query.charAt(i + 1), 16) < 0
                    || Character.digit(query.charAt(i + 2), 16) < 0) {
                int end = query.indexOf('&', i);
                int start = query.lastIndexOf('&', i) + 1;
                throw ApiProblem.invalid("query", "got " + FieldValues.quoted(query.substring(start, end < 0 ? query.length() : end))
                        + ", expected '%' followed by two hex digits (RFC 3986 percent-encoding)");
            }
        }
    }

    private static void requireSingle(Context ctx) {
        for (Map.Entry<String, List<String>> parameter : ctx.queryParamMap().entrySet()) {
            List<String> values = parameter.getValue();
            if (values.size() > 1) {
                String shown = values.stream().limit(SHOWN).map(FieldValues::quoted).collect(Collectors.joining(", "));
                throw ApiProblem.invalid(parameter.getKey(), "got " + Counted.of(values.size(), "value") + " (" + shown
                        + (values.size() > SHOWN ? ", …" : "") + "), expected one");
            }
        }
    }
}
