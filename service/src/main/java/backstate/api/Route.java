package backstate.api;

import io.javalin.http.Handler;
import io.javalin.http.HandlerType;

/** One endpoint: method, path template (Javalin's {name} syntax, the same as OpenAPI's), who may call it, and the handler. */
public record Route(HandlerType method, String path, Access access, Handler handler) {
}
