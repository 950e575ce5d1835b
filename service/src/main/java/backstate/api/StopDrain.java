package backstate.api;

import org.eclipse.jetty.http.HttpHeader;
import org.eclipse.jetty.server.Request;
import org.eclipse.jetty.server.Response;
import org.eclipse.jetty.server.Server;
import org.eclipse.jetty.server.handler.GracefulHandler;
import org.eclipse.jetty.util.Callback;

/**
 * Graceful HTTP stop: once a stop begins the listener takes no new connections, requests already
 * being read or handled run to their end (up to {@link #DRAIN_MILLIS}), and a request that arrives
 * afterwards on a kept-alive connection gets 503 problem+json with Retry-After and
 * {@code Connection: close}, so a gateway retries it elsewhere or after the restart. Jetty's own
 * stop would close connections under requests whose bodies are still arriving.
 */
final class StopDrain extends GracefulHandler {
    /** How long a stop waits for in-flight requests; WorkerPool's grace for jobs comes after it. */
    static final long DRAIN_MILLIS = 10_000;

    /** Puts the drain at the top of the server's handlers (Javalin attaches its own below it). */
    static void install(Server server) {
        server.setHandler(new StopDrain());
        server.setStopTimeout(DRAIN_MILLIS);
    }

    /** Once stopping, every answer closes its connection; GracefulHandler refuses new requests with 503. */
    @Override
    public boolean handle(Request request, Response response, Callback callback) throws Exception {
        if (isShutdown()) {
            response.getHeaders().put(HttpHeader.CONNECTION, "close");
        }
        return super.handle(request, response, callback);
    }
}
