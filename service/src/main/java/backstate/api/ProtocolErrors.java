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
    /** The target Jetty substitutes for a request whose path it could not decode. */
    static final String UNDECODABLE_TARGET = "/badMessage";
    static final String UNDECODABLE_PATH = "the path could not be decoded: it holds an encoded NUL (%00) or control"
            + " character, or bad percent-encoding";

    private final ObjectMapper mapper;

    ProtocolErrors(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    @Override
    protected void generateResponse(Request request, Response response, int status, String message, Throwable cause,
                                    Callback callback) throws IOException {
        String target = request == null || request.getHttpURI() == null ? "" : request.getHttpURI().toString();
        String detail = detail(status, message, target);
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
        return detail(status, message, "");
    }

    /**
     * Jetty's reason, or ours where Jetty gives none: a path it cannot decode (an encoded NUL or
     * control character, bad percent-encoding) reaches this handler as {@link #UNDECODABLE_TARGET}
     * with the bare reason "Bad Request".
     */
    static String detail(int status, String message, String target) {
        if (status == HttpStatus.BAD_REQUEST_400 && target.equals(UNDECODABLE_TARGET)
                && (message == null || message.isBlank() || message.equals("Bad Request"))) {
            return UNDECODABLE_PATH;
        }
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
            case 408 -> "Request body too slow";
            case 413 -> "Payload too large";
            case 503 -> "Service busy, retry later";
            default -> "HTTP " + status;
        };
    }

    private static String slug(int status) {
        return switch (status) {
            case 400 -> "invalid-input";
            case 408 -> "request-timeout";
            case 413 -> "payload-too-large";
            case 503 -> "service-busy";
            default -> "http-" + status;
        };
    }

    /**
     * Every 4xx names the offending part, as every other 4xx does: the header, path or body
     * where Jetty's reason makes it plain, else the request as a whole. A 5xx names none.
     */
    static List<Problem.FieldError> fields(int status, String detail) {
        return status >= 500 ? null : List.of(new Problem.FieldError(field(status, detail), detail));
    }

    private static String field(int status, String detail) {
        if (status == HttpStatus.REQUEST_HEADER_FIELDS_TOO_LARGE_431) {
            return "headers";
        }
        if (status == HttpStatus.REQUEST_TIMEOUT_408) {
            return "body";
        }
        for (String header : List.of("Content-Length", "Transfer-Encoding", "Content-Encoding", "Host")) {
            if (detail.contains(header)) {
                return header;
            }
        }
        if (detail.contains("CNTL") || detail.contains("Illegal character") || detail.contains("header")) {
            return "headers";
        }
        if (detail.contains("URI") || detail.contains("Path") || detail.equals(UNDECODABLE_PATH)) {
            return "path";
        }
        return "request";
    }
}
