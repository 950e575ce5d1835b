package backstate.api;

import backstate.estimation.ObservabilityRank;
import backstate.estimation.StateSpaceModel;
import backstate.formats.Limits;
import backstate.formats.MediaType;
import backstate.formats.ModelDocument;
import backstate.store.ModelVersionRow;
import backstate.store.NewModelVersion;
import backstate.store.ModelCatalogue;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.time.Clock;

/** Model families and their immutable, numbered versions. */
final class ModelRoutes {
    /** Longest family description accepted. */
    static final int MAX_DESCRIPTION = 2000;
    /**
     * Largest model body read, whatever the trace limit: the largest model (64 states, 32 outputs,
     * 32 inputs) is under 1 MiB even pretty-printed, and a bigger body could only be arrays that
     * expand into gigabytes of parsed doubles.
     */
    static final long MAX_MODEL_BODY_BYTES = 4L << 20;

    private final ModelCatalogue store;
    private final ObjectMapper mapper;
    private final Clock clock;
    private final Limits limits;
    private final long maxBodyBytes;

    ModelRoutes(ModelCatalogue store, ObjectMapper mapper, Clock clock, Limits limits, long maxBodyBytes) {
        this.store = store;
        this.mapper = mapper;
        this.clock = clock;
        this.limits = limits;
        this.maxBodyBytes = maxBodyBytes;
    }

    record NewFamily(String name, String description) {
    }

    void createFamily(Context ctx) throws Exception {
        NewFamily body = read(ctx, NewFamily.class);
        String name = Params.identifier("name", body.name());
        if (body.description() != null && body.description().length() > MAX_DESCRIPTION) {
            throw ApiProblem.invalid("description", "got " + body.description().length() + " characters, expected at most "
                    + MAX_DESCRIPTION);
        }
        String description = body.description() == null ? "" : body.description();
        if (!store.createFamily(name, description, clock.instant())) {
            throw ApiProblem.conflict("model family " + name + " exists already");
        }
        ctx.status(201).header("Location", "/v1/models/" + name).json(Views.Family.of(store.findFamily(name).orElseThrow()));
    }

    void listFamilies(Context ctx) {
        ctx.json(new Views.Page<>(store.listFamilies().stream().map(Views.Family::of).toList(), null));
    }

    void getFamily(Context ctx) {
        String name = Params.identifier(ctx, "family");
        ctx.json(Views.Family.of(store.findFamily(name).orElseThrow(() -> ApiProblem.notFound("model family " + name))));
    }

    void publishVersion(Context ctx) throws Exception {
        String family = Params.identifier(ctx, "family");
        if (store.findFamily(family).isEmpty()) {
            throw ApiProblem.notFound("model family " + family);
        }
        ModelDocument document = read(ctx, ModelDocument.class);
        StateSpaceModel model = document.toModel(limits);
        document.requirePublishable();
        String observability = mapper.writeValueAsString(Views.Observability.of(ObservabilityRank.of(model)));
        ModelVersionRow row = store.publishVersion(new NewModelVersion(family, document.timeDomain(), model.states(),
                model.outputs(), model.inputs(), mapper.writeValueAsString(document), observability), clock.instant());
        ctx.status(201).header("Location", "/v1/models/" + family + "/versions/" + row.version()).json(Views.Version.of(row));
    }

    void listVersions(Context ctx) {
        String family = Params.identifier(ctx, "family");
        if (store.findFamily(family).isEmpty()) {
            throw ApiProblem.notFound("model family " + family);
        }
        ctx.json(new Views.Page<>(store.listVersions(family).stream().map(Views.Version::of).toList(), null));
    }

    void getVersion(Context ctx) {
        ctx.json(Views.Version.of(findVersion(ctx)));
    }

    void retireVersion(Context ctx) {
        ModelVersionRow row = findVersion(ctx);
        store.retireVersion(row.family(), row.version());
        ctx.json(Views.Version.of(store.findVersion(row.family(), row.version()).orElseThrow()));
    }

    private ModelVersionRow findVersion(Context ctx) {
        String family = Params.identifier(ctx, "family");
        int version = Params.pathVersion(ctx);
        return store.findVersion(family, version)
                .orElseThrow(() -> ApiProblem.notFound("model version " + family + "/" + version));
    }

    private <T> T read(Context ctx, Class<T> type) throws Exception {
        requireJson(ctx);
        try (InputStream body = BodyLimit.open(ctx, Math.min(maxBodyBytes, MAX_MODEL_BODY_BYTES))) {
            T value = mapper.readerFor(type).with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES).readValue(body);
            if (value == null) {
                throw ApiProblem.invalid("body", "got nothing, expected a JSON object");
            }
            return value;
        }
    }

    static void requireJson(Context ctx) {
        String type = ctx.contentType();
        if (!MediaType.is(type, "application/json")) {
            throw ApiProblem.unsupportedMediaType(type == null ? "no Content-Type" : type, "application/json");
        }
    }
}
