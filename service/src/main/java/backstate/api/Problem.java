package backstate.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.List;

/**
 * An RFC 9457 problem document ({@code application/problem+json}).
 *
 * @param type     a URI reference naming the kind of problem, documented in the OpenAPI document
 * @param title    a short summary of that kind
 * @param status   the HTTP status
 * @param detail   what went wrong with this request
 * @param errors   the offending fields, when the request's content is at fault
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Problem(String type, String title, int status, String detail, List<FieldError> errors) {
    public static final String MEDIA_TYPE = "application/problem+json";

    /** One offending field: a path into the body, a query parameter, a header or a CSV cell. */
    public record FieldError(String field, String detail) {
    }
}
