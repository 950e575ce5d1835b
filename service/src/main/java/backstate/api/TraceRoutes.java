package backstate.api;

import backstate.estimation.InitialStateEstimator;
import backstate.estimation.StateSpaceModel;
import backstate.estimation.Trace;
import backstate.formats.CheckedModel;
import backstate.formats.DocumentSolver;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.jobs.StoredTraceSolver;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.NewTrace;
import backstate.store.Submission;
import backstate.store.TraceIntakeStore;
import backstate.store.TraceRef;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.time.Clock;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Future;

/** Trace ingest: store the trace and queue its solve in one transaction, answer 202 with the job. */
final class TraceRoutes {
    /** Longest Idempotency-Key accepted. */
    static final int MAX_IDEMPOTENCY_KEY = 128;
    /** Marks an answer that replays an earlier post with the same Idempotency-Key; backstate's own header. */
    static final String REPLAYED_HEADER = "Backstate-Replayed";

    private final TraceIntakeStore traces;
    private final ModelCatalogue models;
    private final StoredTraceSolver stored;
    private final TraceReader reader;
    private final TraceCodec codec;
    private final Clock clock;
    private final long maxBodyBytes;
    private final int maxQueued;
    private final Runnable wakeWorkers;

    TraceRoutes(TraceIntakeStore traces, ModelCatalogue models, StoredTraceSolver stored, ObjectMapper mapper,
                Clock clock, Limits limits, long maxBodyBytes, int maxQueued, Runnable wakeWorkers) {
        this.traces = traces;
        this.models = models;
        this.stored = stored;
        this.reader = new TraceReader(limits);
        this.codec = new TraceCodec(mapper);
        this.clock = clock;
        this.maxBodyBytes = maxBodyBytes;
        this.maxQueued = maxQueued;
        this.wakeWorkers = wakeWorkers;
    }

    void submit(Context ctx) throws Exception {
        String unitId = Params.identifier(ctx, "unitId");
        String key = idempotencyKey(ctx);
        ModelVersionRow version = activeVersion(ctx);
        CheckedModel model = stored.model(version);
        TraceFingerprint fingerprint = key == null ? null : TraceFingerprint.start(ctx, unitId, version);
        ParsedTrace parsed = parse(ctx, model.document(), fingerprint);
        StateSpaceModel engineModel = model.engine();
        InitialStateEstimator.validate(engineModel, parsed.trace(),
                parsed.options().toEstimationOptions(engineModel.states(), false));
        Trace t = parsed.trace();
        NewTrace trace = new NewTrace(unitId, version.family(), version.version(), t.samples(), t.time(0),
                t.time(t.samples() - 1), codec.encode(parsed));
        Instant receivedAt = clock.instant();
        // A long trace starts solving now, overlapping its durable write below.
        Future<DocumentSolver.Outcome> solvedAhead = stored.solveAhead(model, parsed);
        Submission submission;
        try {
            submission = traces.submitTrace(trace, key == null ? null : fingerprint.withKey(key), maxQueued, receivedAt);
        } catch (Exception | Error e) {
            cancel(solvedAhead);
            throw e;
        }
        if (submission.replayed()) {
            cancel(solvedAhead);
            ctx.header(REPLAYED_HEADER, "true");
        } else {
            // Committed: its job may take the parse (and solve) in hand instead of reading the row back.
            stored.keepFresh(new StoredTraceSolver.Loaded(new TraceRef(submission.traceId(), unitId, version.family(),
                    version.version(), receivedAt.truncatedTo(ChronoUnit.MILLIS)), model, parsed, solvedAhead));
        }
        wakeWorkers.run();
        ctx.status(202).header("Location", "/v1/jobs/" + submission.jobId())
                .json(new Views.Accepted(submission.jobId(), submission.traceId(), unitId, "queued",
                        Map.of("job", "/v1/jobs/" + submission.jobId(),
                                "latestEstimate", "/v1/units/" + unitId + "/estimates/latest")));
    }

    private static void cancel(Future<?> solvedAheadOrNull) {
        if (solvedAheadOrNull != null) {
            solvedAheadOrNull.cancel(true);
        }
    }

    private ModelVersionRow activeVersion(Context ctx) {
        String family = Params.identifier("model", Params.requiredQuery(ctx, "model"));
        int number = Params.positiveInt("version", Params.requiredQuery(ctx, "version"));
        ModelVersionRow version = models.findVersion(family, number)
                .orElseThrow(() -> ApiProblem.unprocessable("version", "model version " + family + "/" + number + " does not exist"));
        if (!"active".equals(version.status())) {
            throw ApiProblem.conflict("model version " + family + "/" + number + " is retired and takes no new traces");
        }
        return version;
    }

    /** Reads the body as its media type says, into the fingerprint too when the post has an Idempotency-Key. */
    private ParsedTrace parse(Context ctx, ModelDocument model, TraceFingerprint fingerprintOrNull) throws Exception {
        try (InputStream raw = BodyLimit.open(ctx, maxBodyBytes)) {
            InputStream body = fingerprintOrNull == null ? raw : fingerprintOrNull.reading(raw);
            ParsedTrace parsed = read(ctx, body, model);
            if (fingerprintOrNull != null) {
                fingerprintOrNull.finish(body);
            }
            return parsed;
        }
    }

    private ParsedTrace read(Context ctx, InputStream body, ModelDocument model) throws Exception {
        String type = ctx.contentType() == null ? "" : ctx.contentType().toLowerCase(Locale.ROOT);
        if (type.startsWith("application/json")) {
            if (hasQueryOptions(ctx)) {
                throw ApiProblem.invalid("formulation", "with a JSON body, put options in its \"options\" object, not the query");
            }
            return reader.readJson(body, model);
        }
        if (type.startsWith("text/csv")) {
            return reader.readCsv(body, model, queryOptions(ctx), ctx.queryParam("referenceTime"));
        }
        throw ApiProblem.unsupportedMediaType(type.isEmpty() ? "no Content-Type" : type, "application/json or text/csv");
    }

    private static boolean hasQueryOptions(Context ctx) {
        return ctx.queryParam("formulation") != null || ctx.queryParam("estimateOffsets") != null
                || ctx.queryParam("referenceTime") != null;
    }

    /** The CSV options of the query; its referenceTime (seconds or RFC 3339) is read with the trace's clock. */
    private static TraceOptions queryOptions(Context ctx) {
        return new TraceOptions(ctx.queryParam("formulation"), Params.optionalBoolean(ctx, "estimateOffsets"), null, null);
    }

    private static String idempotencyKey(Context ctx) {
        String key = ctx.header("Idempotency-Key");
        if (key == null) {
            return null;
        }
        if (key.isEmpty() || key.length() > MAX_IDEMPOTENCY_KEY || !key.chars().allMatch(c -> c > 32 && c < 127)) {
            throw ApiProblem.invalid("Idempotency-Key", "expected 1-" + MAX_IDEMPOTENCY_KEY + " visible ASCII characters");
        }
        return key;
    }
}
