package backstate.api;

import backstate.formats.FieldValues;
import backstate.text.Counted;
import io.javalin.http.Context;
import io.javalin.http.Handler;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.regex.Pattern;
import java.util.stream.Collectors;

/**
 * Refuses a query string the API would otherwise read in a way the client did not mean: a
 * parameter given more than once ({@code ?version=1&version=2}: no parameter of the API takes a
 * list, so a second value is ambiguous, refused as a JSON key written twice is), and a broken
 * percent escape ({@code ?limit=2%}), which the server's decoding drops with its parameter; and on
 * an API route a parameter the route does not read.
 */
final class QueryStrings {
    /** Values quoted back in the refusal; the rest are counted only. */
    private static final int SHOWN = 3;
    /** Routes whose query parameters are the contract's alone; the console's page and probes take any. */
    private static final String API_PREFIX = "/v1/";
    /** A parameter name short and plain enough to be the refusal's field. */
    private static final Pattern PLAIN_NAME = Pattern.compile("[A-Za-z0-9_.\\-]{1,64}");

    private QueryStrings() {
    }

    static Handler checked(Route route) {
        boolean api = route.path().startsWith(API_PREFIX);
        return ctx -> {
            requireWellEscaped(ctx.queryString());
            requireSingle(ctx);
            if (api) {
                requireKnown(ctx, route.query());
            }
            route.handler().handle(ctx);
        };
    }

    /**
     * A parameter the route does not read would be ignored, and a misspelt option
     * ({@code estimateoffsets=true}) would quietly give another result than the one asked for.
     */
    private static void requireKnown(Context ctx, List<String> known) {
        for (String name : ctx.queryParamMap().keySet()) {
            if (!known.contains(name)) {
                throw ApiProblem.invalid(PLAIN_NAME.matcher(name).matches() ? name : "query", unknownWords(name, known));
            }
        }
    }

    /** The refusal's words: what was got, what the route reads, and the name it most likely meant. */
    static String unknownWords(String name, List<String> known) {
        String got = "got an unknown query parameter " + FieldValues.quoted(name);
        if (known.isEmpty()) {
            return got + ", expected none: this route reads no query parameter";
        }
        String folded = fold(name);
        String near = known.stream().filter(k -> fold(k).equals(folded)).findFirst()
                .map(k -> " (did you mean " + k + "?)").orElse("");
        return got + ", expected one of " + String.join(", ", known) + near;
    }

    /** Case, '_' and '-' do not tell names apart for the hint: reference_time, referencetime → referenceTime. */
    private static String fold(String name) {
        return name.replace("_", "").replace("-", "").toLowerCase(Locale.ROOT);
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
