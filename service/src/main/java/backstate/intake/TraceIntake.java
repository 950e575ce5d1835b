package backstate.intake;

import backstate.estimation.EstimationOptions;
import backstate.estimation.InitialStateEstimator;
import backstate.estimation.ModelException;
import backstate.estimation.StateSpaceModel;
import backstate.formats.CheckedModel;
import backstate.formats.CheckedModels;
import backstate.formats.FieldValues;
import backstate.formats.InputException;
import backstate.formats.MediaType;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedColumns;
import backstate.formats.RecordingTime;
import backstate.formats.TraceCodec;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.formats.TraceWarning;
import backstate.store.ModelVersionRow;
import backstate.store.NewTrace;
import backstate.store.QueueFullException;
import backstate.store.ModelCatalogue;
import backstate.store.Submission;
import backstate.store.TraceIntakeStore;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.time.Clock;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;

/**
 * Trace ingest, the one path from a posted body to a stored trace with its queued estimate job:
 * the model version (it must exist and be active), its checked model, the parse by media type,
 * the checks the solver would make, the stored encoding, and the write, which stores the trace and
 * queues its job in one transaction (or replays the first post with the same Idempotency-Key).
 * Knows nothing of HTTP: the edge hands it a {@link TracePost} and answers with its {@link Receipt}.
 */
public final class TraceIntake {
    /**
     * The solver's option fields; a JSON body writes them inside its "options" object, so a refusal
     * of one names it there ("options.prior.covariance"), a CSV post's query as it is.
     */
    private static final Set<String> OPTION_FIELDS = Set.of("formulation", "estimateOffsets", "referenceTime", "prior");
    private final TraceIntakeStore traces;
    private final ModelCatalogue catalogue;
    private final CheckedModels models;
    private final TraceReader reader;
    private final TraceCodec codec;
    private final Clock clock;
    private final int maxQueued;
    private final Runnable wakeWorkers;

    /**
     * @param maxQueued   a post is refused (queue full) while this many jobs wait
     * @param wakeWorkers called after every write, so an idle worker pool claims at once
     */
    public TraceIntake(TraceIntakeStore traces, ModelCatalogue catalogue, CheckedModels models, Limits limits,
                       ObjectMapper mapper, Clock clock, int maxQueued, Runnable wakeWorkers) {
        this.traces = traces;
        this.catalogue = catalogue;
        this.models = models;
        this.reader = new TraceReader(limits);
        this.codec = new TraceCodec(mapper);
        this.clock = clock;
        this.maxQueued = maxQueued;
        this.wakeWorkers = wakeWorkers;
    }

    /**
     * Stores the trace and queues its estimate job; returns what was created, or what the first
     * post with the same Idempotency-Key created (marked replayed), with warnings about the trace.
     *
     * @throws TraceRefused    for a missing or retired version, or a body type it does not read
     * @throws InputException  for a body or option that does not read (naming the field)
     * @throws QueueFullException when {@code maxQueued} jobs wait
     */
    public Receipt submit(TracePost post) throws IOException, QueueFullException {
        ModelVersionRow version = publishedVersion(post.family(), post.version());
        CheckedModel model = models.of(version.family(), version.version(), version.documentJson());
        TraceFingerprint fingerprint = post.idempotencyKeyOrNull() == null ? null : TraceFingerprint.start(post, version);
        if (!"active".equals(version.status())) {
            return retriedOnRetired(post, version, model, fingerprint);
        }
        Checked checked = checkedAndEncoded(post, version, model, fingerprint);
        Submission submission = traces.submitTrace(checked.trace(),
                fingerprint == null ? null : fingerprint.withKey(post.idempotencyKeyOrNull()), maxQueued, clock.instant());
        wakeWorkers.run();
        return new Receipt(submission, checked.warnings());
    }

    /** A trace ready to store, and what its sender should check about it. */
    private record Checked(NewTrace trace, List<TraceWarning> warnings) {
    }

    /**
     * The body parsed into columns, checked as the solver will check it, and encoded for storage
     * from the columns, with its warnings; only the encoded payload outlives this call, so the
     * columns are garbage before the write begins.
     */
    private Checked checkedAndEncoded(TracePost post, ModelVersionRow version, CheckedModel model,
                                      TraceFingerprint fingerprintOrNull) throws IOException {
        ParsedColumns parsed = parse(post, model.document(), fingerprintOrNull);
        StateSpaceModel engine = model.engine();
        double[] times = parsed.timesView();
        String optionsAt = isJson(post) ? "options." : "";
        EstimationOptions options;
        try {
            options = parsed.options().toEstimationOptions(engine.states(), false);
            InitialStateEstimator.validate(engine, times, parsed.outputCount(), parsed.inputCount(), parsed::noiseSigma,
                    options);
        } catch (ModelException e) {
            ModelException worded = e.withTimeWords(RecordingTime::words);
            String first = e.field().split("[.\\[]", 2)[0];
            if (first.equals("noiseSigma")) {
                throw worded.renamed("noiseSigma." + model.document().outputs().get(channelOf(e.field())).name());
            }
            throw OPTION_FIELDS.contains(first) ? worded.renamed(optionsAt + e.field()) : worded;
        }
        requireSomeValue(parsed, isJson(post));
        List<TraceWarning> warnings = new ArrayList<>(TraceWarning.ofWindow(times[0], times[times.length - 1],
                parsed.timesAsNumbers(), clock.instant()));
        warnings.addAll(TraceWarning.ofOutputs(model.document(), parsed, options.formulation(), isJson(post))); // before the encoding takes the columns
        return new Checked(new NewTrace(post.unitId(), version.family(), version.version(), times.length, times[0],
                times[times.length - 1], codec.encode(parsed)), warnings);
    }

    /** j of the engine's field "noiseSigma[j]". */
    private static int channelOf(String field) {
        return Integer.parseInt(field.substring(field.indexOf('[') + 1, field.indexOf(']')));
    }

    /** A trace whose outputs are all missing cannot be solved: refused now rather than taken and failed later. */
    private static void requireSomeValue(ParsedColumns parsed, boolean json) {
        for (int j = 0; j < parsed.outputCount(); j++) {
            if (parsed.hasValues(j)) {
                return;
            }
        }
        throw new ModelException(json ? "outputs" : "body", "got no value in any output (every sample of every output"
                + " is missing), expected at least one value to estimate from");
    }

    private static boolean isJson(TracePost post) {
        return post.contentTypeOrNull() != null && MediaType.is(post.contentTypeOrNull(), "application/json");
    }

    /** The version named; a refusal names the family when there is none of that name, else the version. */
    private ModelVersionRow publishedVersion(String family, int number) {
        return catalogue.findVersion(family, number).orElseThrow(() -> catalogue.findFamily(family).isPresent()
                ? TraceRefused.unknownVersion(family, number) : TraceRefused.unknownFamily(family));
    }

    /**
     * A retired version takes no new trace, but a retry of a post it took while active (same unit,
     * Idempotency-Key and request) answers that post again, so a gateway that lost the 202 is not
     * told its stored trace was refused. A body that does not read was never taken: refused as retired.
     */
    private Receipt retriedOnRetired(TracePost post, ModelVersionRow version, CheckedModel model,
                                     TraceFingerprint fingerprintOrNull) throws IOException {
        TraceRefused retired = TraceRefused.retiredVersion(version.family(), version.version());
        if (fingerprintOrNull == null) {
            throw retired;
        }
        Checked checked;
        try {
            checked = checkedAndEncoded(post, version, model, fingerprintOrNull);
        } catch (InputException | ModelException e) {
            throw retired;
        }
        return traces.findSubmission(post.unitId(), fingerprintOrNull.withKey(post.idempotencyKeyOrNull()))
                .map(earlier -> new Receipt(earlier, checked.warnings()))
                .orElseThrow(() -> retired);
    }

    /** Reads the body as its media type says, into the fingerprint too when the post has an Idempotency-Key. */
    private ParsedColumns parse(TracePost post, ModelDocument model, TraceFingerprint fingerprintOrNull) throws IOException {
        try (InputStream raw = post.body().open()) {
            InputStream body = fingerprintOrNull == null ? raw : fingerprintOrNull.reading(raw);
            ParsedColumns parsed = read(post, body, model);
            if (fingerprintOrNull != null) {
                fingerprintOrNull.finish(body);
            }
            return parsed;
        }
    }

    private ParsedColumns read(TracePost post, InputStream body, ModelDocument model) throws IOException {
        if (isJson(post)) {
            if (post.query().any()) {
                throw new InputException("formulation", "with a JSON body, put options in its \"options\" object, not the query");
            }
            return reader.readJsonColumns(body, model);
        }
        String type = post.contentTypeOrNull();
        if (type != null && MediaType.is(type, "text/csv")) {
            return reader.readCsvColumns(body, model, csvOptions(post.query()), post.query().referenceTime());
        }
        throw TraceRefused.unsupportedMediaType(type == null || type.isEmpty() ? "no Content-Type" : type);
    }

    /** The CSV options of the query; its referenceTime (seconds or RFC 3339) is read with the trace's clock. */
    private static TraceOptions csvOptions(TracePost.CsvQuery query) {
        TraceOptions.formulation("formulation", query.formulation());
        return new TraceOptions(query.formulation(), bool("estimateOffsets", query.estimateOffsets()), null, null);
    }

    private static Boolean bool(String field, String textOrNull) {
        if (textOrNull == null || textOrNull.equals("true") || textOrNull.equals("false")) {
            return textOrNull == null ? null : Boolean.valueOf(textOrNull);
        }
        throw new InputException(field, "got " + FieldValues.quoted(textOrNull) + ", expected true or false");
    }
}
