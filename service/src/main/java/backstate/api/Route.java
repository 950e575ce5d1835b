package backstate.api;

import io.javalin.http.Handler;
import io.javalin.http.HandlerType;

/** One endpoint: method, path template (Javalin's {name} syntax, the same as OpenAPI's) and handler. */
public record Route(HandlerType method, String path, Handler handler) {
}
