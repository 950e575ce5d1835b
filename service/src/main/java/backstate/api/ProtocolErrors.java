package backstate.api;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.util.List;
import org.eclipse.jetty.http.HttpHeader;
import org.eclipse.jetty.http.HttpStatus;
import org.eclipse.jetty.server.Request;
import org.eclipse.jetty.server.Response;
import org.eclipse.jetty.server.handler.ErrorHandler;
import org.eclipse.jetty.util.Callback;

/**
 * Answers what Jetty refuses before any route runs (a malformed or repeated Content-Length,
 * headers over Jetty's size limit, a broken request line, a request arriving while the service
 * stops) with problem+json like every other error, instead of Jetty's HTML page. The detail is
 * Jetty's short reason for a 4xx; a 5xx never shows Jetty's text (it can be an exception's class
 * name) and a 503 carries Retry-After.
 */
final class ProtocolErrors extends ErrorHandler {
    private final ObjectMapper mapper;

    ProtocolErrors(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    @Override
    protected void generateResponse(Request request, Response response, int status, String message, Throwable cause,
                                    Callback callback) throws IOException {
        String detail = detail(status, message);
        if (status == HttpStatus.SERVICE_UNAVAILABLE_503) {
            response.getHeaders().put(HttpHeader.RETRY_AFTER, ApiProblem.RETRY_AFTER_SECONDS);
        }
        byte[] body = mapper.writeValueAsBytes(new Problem(ProblemTypes.uri(slug(status)), title(status), status, detail,
                fields(status, detail)));
        response.getHeaders().put(HttpHeader.CONTENT_TYPE, Problem.MEDIA_TYPE);
        response.getHeaders().put(HttpHeader.CONTENT_LENGTH, body.length);
        response.write(true, ByteBuffer.wrap(body), callback);
    }

    static String detail(int status, String message) {
        if (status == HttpStatus.SERVICE_UNAVAILABLE_503) {
            return "the service is stopping or cannot take this request now; retry shortly";
        }
        if (status >= 500) {
            return "the request could not be completed (the connection or its body was cut off)";
        }
        return message == null || message.isBlank() ? HttpStatus.getMessage(status) : message;
    }

    /** The same titles ApiProblem and ProblemMapper give these statuses. */
    private static String title(int status) {
        return switch (status) {
            case 400 -> "Invalid input";
            case 413 -> "Payload too large";
            case 503 -> "Service busy, retry later";
            default -> "HTTP " + status;
        };
    }

    private static String slug(int status) {
        return switch (status) {
            case 400 -> "invalid-input";
            case 413 -> "payload-too-large";
            case 503 -> "service-busy";
            default -> "http-" + status;
        };
    }

    /** Names the offending part where Jetty's reason makes it plain. */
    private static List<Problem.FieldError> fields(int status, String detail) {
        if (status == HttpStatus.REQUEST_HEADER_FIELDS_TOO_LARGE_431) {
            return List.of(new Problem.FieldError("headers", detail));
        }
        if (detail.contains("Content-Length")) {
            return List.of(new Problem.FieldError("Content-Length", detail));
        }
        return null;
    }
}
