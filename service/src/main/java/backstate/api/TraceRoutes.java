package backstate.api;

import backstate.formats.FieldValues;
import backstate.intake.Receipt;
import backstate.intake.TraceIntake;
import backstate.intake.TracePost;
import backstate.store.Submission;
import io.javalin.http.Context;
import java.util.Map;

/** Trace ingest over HTTP: reads the post into a {@link TracePost}, hands it to the intake, answers 202 with the job. */
final class TraceRoutes {
    /** Longest Idempotency-Key accepted. */
    static final int MAX_IDEMPOTENCY_KEY = 128;
    /** Marks an answer that replays an earlier post with the same Idempotency-Key; backstate's own header. */
    static final String REPLAYED_HEADER = "Backstate-Replayed";

    private final TraceIntake intake;
    private final long maxBodyBytes;

    TraceRoutes(TraceIntake intake, long maxBodyBytes) {
        this.intake = intake;
        this.maxBodyBytes = maxBodyBytes;
    }

    void submit(Context ctx) throws Exception {
        String unitId = Params.identifier(ctx, "unitId");
        String key = idempotencyKey(ctx);
        String family = Params.identifier("model", Params.requiredQuery(ctx, "model"));
        int version = Params.positiveInt("version", Params.requiredQuery(ctx, "version"));
        TracePost.CsvQuery query = new TracePost.CsvQuery(ctx.queryParam("formulation"),
                ctx.queryParam("estimateOffsets"), ctx.queryParam("referenceTime"));
        Receipt receipt = intake.submit(new TracePost(unitId, family, version, ctx.contentType(), key, query,
                () -> BodyLimit.open(ctx, maxBodyBytes)));
        Submission submission = receipt.submission();
        if (submission.replayed()) {
            ctx.header(REPLAYED_HEADER, "true");
        }
        ctx.status(202).header("Location", "/v1/jobs/" + submission.jobId())
                .json(new Views.Accepted(submission.jobId(), submission.traceId(), unitId, "queued",
                        Map.of("job", "/v1/jobs/" + submission.jobId(),
                                "latestEstimate", "/v1/units/" + unitId + "/estimates/latest"),
                        receipt.warnings().stream().map(w -> new Problem.FieldError(w.field(), w.detail())).toList()));
    }

    private static String idempotencyKey(Context ctx) {
        String key = ctx.header("Idempotency-Key");
        if (key == null) {
            return null;
        }
        if (key.isEmpty() || key.length() > MAX_IDEMPOTENCY_KEY || !key.chars().allMatch(c -> c > 32 && c < 127)) {
            throw ApiProblem.invalid("Idempotency-Key", "got " + FieldValues.text(key, MAX_IDEMPOTENCY_KEY) + ", expected 1-"
                    + MAX_IDEMPOTENCY_KEY + " visible ASCII characters");
        }
        return key;
    }
}
