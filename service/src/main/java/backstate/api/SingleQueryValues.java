package backstate.api;

import backstate.formats.FieldValues;
import backstate.text.Counted;
import io.javalin.http.Context;
import io.javalin.http.Handler;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;

/**
 * Refuses a query parameter given more than once ({@code ?version=1&version=2}): no parameter of
 * the API takes a list, so a second value is ambiguous, refused as a JSON key written twice is.
 */
final class SingleQueryValues {
    /** Values quoted back in the refusal; the rest are counted only. */
    private static final int SHOWN = 3;

    private SingleQueryValues() {
    }

    static Handler required(Handler handler) {
        return ctx -> {
            requireSingle(ctx);
            handler.handle(ctx);
        };
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
