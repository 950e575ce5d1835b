package backstate.api;

import backstate.estimation.ModelException;
import backstate.formats.InputException;
import backstate.formats.JsonPaths;
import backstate.formats.MatrixEntryException;
import backstate.intake.TraceRefused;
import backstate.regression.RegressionRefused;
import backstate.store.CorruptDataException;
import backstate.store.IdempotencyKeyReusedException;
import backstate.store.InvalidCursorException;
import backstate.store.QueueFullException;
import backstate.store.StoreUnavailableException;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.config.RoutesConfig;
import io.javalin.http.Context;
import io.javalin.http.HttpResponseException;
import java.util.UUID;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The one place where exceptions become answers: every 4xx/5xx leaves as RFC 9457 problem+json.
 * Messages come from our own exceptions only; SQL text and stack traces never reach a client.
 */
final class ProblemMapper {
    private static final Logger LOG = LoggerFactory.getLogger(ProblemMapper.class);

    private final ObjectMapper mapper;

    ProblemMapper(ObjectMapper mapper) {
        this.mapper = mapper;
    }

    void register(RoutesConfig routes) {
        routes.exception(ApiProblem.class, (e, ctx) -> {
            if (e.status() == 503) {
                ctx.header("Retry-After", Integer.toString(ApiProblem.RETRY_AFTER_SECONDS));
            }
            write(ctx, e.toProblem());
        });
        routes.exception(AccessDenied.class, (e, ctx) -> {
            e.challenge().ifPresent(challenge -> ctx.header("WWW-Authenticate", challenge));
            write(ctx, e.toProblem());
        });
        routes.exception(InputException.class, (e, ctx) -> write(ctx, ApiProblem.invalid(e.field(), e.problem()).toProblem()));
        routes.exception(ModelException.class, (e, ctx) -> write(ctx, ApiProblem.unprocessable(e.field(), e.problem()).toProblem()));
        routes.exception(TraceRefused.class, (e, ctx) -> write(ctx, problem(e).toProblem()));
        routes.exception(RegressionRefused.class, (e, ctx) -> write(ctx, ApiProblem.unprocessable(e.field(), e.detail()).toProblem()));
        routes.exception(InvalidCursorException.class, (e, ctx) -> write(ctx, ApiProblem.invalid("cursor", "not a cursor from this API").toProblem()));
        routes.exception(MatrixEntryException.class, (e, ctx) -> write(ctx, ApiProblem.invalid(e.field(), e.problem()).toProblem()));
        routes.exception(JsonProcessingException.class, (e, ctx) -> {
            InputException refusal = JsonPaths.refusal(e, "body");
            write(ctx, ApiProblem.invalid(refusal.field(), refusal.problem()).toProblem());
        });
        routes.exception(IdempotencyKeyReusedException.class, (e, ctx) -> write(ctx, ApiProblem.idempotencyKeyReused(e.key()).toProblem()));
        routes.exception(QueueFullException.class, (e, ctx) -> busy(ctx, "the job queue is full; retry later"));
        routes.exception(StoreUnavailableException.class, (e, ctx) -> {
            LOG.warn("database unavailable: {}", e.getMessage());
            busy(ctx, "the database is unavailable right now; retry later");
        });
        routes.exception(CorruptDataException.class, (e, ctx) -> {
            LOG.error("stored data corrupt ({} {}): {}", ctx.method(), ctx.path(), e.getMessage(), e);
            write(ctx, ApiProblem.storedDataCorrupt(e.item()).toProblem());
        });
        routes.exception(HttpResponseException.class, (e, ctx) -> {
            if (e.getStatus() == 405 && !e.getDetails().isEmpty()) {
                // RFC 9110 15.5.6: a 405 lists the methods the resource has; the router puts them in the one detail.
                ctx.header("Allow", String.join(", ", e.getDetails().values()));
            }
            write(ctx, e.getStatus() == 404 ? ApiProblem.notFound("route " + ctx.method() + " " + ctx.path()).toProblem()
                    : fromStatus(e.getStatus(), e.getMessage()));
        });
        routes.exception(Exception.class, (e, ctx) -> {
            String reference = UUID.randomUUID().toString();
            LOG.error("unhandled error, reference {}", reference, e);
            write(ctx, new Problem(ProblemTypes.uri("internal-error"), "Internal error", 500,
                    "an internal error occurred (a bug); reference " + reference, null));
        });
        routes.error(404, "*", ctx -> {
            String written = ctx.res().getContentType();
            if (written == null || !written.startsWith(Problem.MEDIA_TYPE)) {
                write(ctx, ApiProblem.notFound("route " + ctx.method() + " " + ctx.path()).toProblem());
            }
        });
        routes.error(405, "*", ctx -> write(ctx, fromStatus(405, "method " + ctx.method() + " is not allowed here")));
    }

    private static ApiProblem problem(TraceRefused e) {
        return switch (e.reason()) {
            case UNKNOWN_VERSION -> ApiProblem.unprocessable(e.field(), e.getMessage());
            case RETIRED_VERSION -> ApiProblem.conflict(e.getMessage());
            case UNSUPPORTED_MEDIA_TYPE -> ApiProblem.unsupportedMediaType(e.getMessage(), TraceRefused.ACCEPTED_TYPES);
        };
    }

    private void busy(Context ctx, String detail) {
        ctx.header("Retry-After", Integer.toString(ApiProblem.RETRY_AFTER_SECONDS));
        write(ctx, ApiProblem.busy(detail).toProblem());
    }

    /**
     * A status with no problem of its own. One title per type, as ApiProblem gives its types: RFC 9457
     * says a type's title should not change from occurrence to occurrence.
     */
    private static Problem fromStatus(int status, String detail) {
        if (status == 405) {
            return new Problem(ProblemTypes.uri("method-not-allowed"), "Method not allowed", status, detail, null);
        }
        return new Problem(ProblemTypes.uri("http-" + status), "HTTP " + status, status, detail, null);
    }

    private void write(Context ctx, Problem problem) {
        try {
            // Bytes, not a String: Jetty would encode a String as ISO-8859-1 for this media type,
            // and JSON is UTF-8, so a detail quoting a client's non-ASCII input must stay UTF-8.
            ctx.status(problem.status()).contentType(Problem.MEDIA_TYPE).result(mapper.writeValueAsBytes(problem));
        } catch (JsonProcessingException e) {
            throw new IllegalStateException("problem document could not be written", e);
        }
    }

}
