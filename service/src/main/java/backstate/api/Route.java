package backstate.api;

import io.javalin.http.Handler;
import io.javalin.http.HandlerType;
import java.util.List;

/**
 * One endpoint: method, path template (Javalin's {name} syntax, the same as OpenAPI's), who may
 * call it, the handler, and the query parameters it reads (the contract's, in its order; an API
 * route refuses any other, see {@link QueryStrings}).
 */
public record Route(HandlerType method, String path, Access access, Handler handler, List<String> query) {
    public Route {
        query = List.copyOf(query);
    }

    /** A route that reads no query parameter. */
    public Route(HandlerType method, String path, Access access, Handler handler) {
        this(method, path, access, handler, List.of());
    }
}
