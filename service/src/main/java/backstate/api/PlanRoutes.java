package backstate.api;

import backstate.estimation.SamplingPlanner;
import backstate.estimation.StateSpaceModel;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import backstate.store.ModelVersionRow;
import backstate.store.ModelCatalogue;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.util.List;

/** Observability planning: predicted standard errors of x0 for a sampling plan, before any data exist. */
final class PlanRoutes {
    /** A plan body is a few names and numbers; 64 KiB is generous. */
    static final long MAX_PLAN_BODY_BYTES = 64 * 1024;

    private final ModelCatalogue store;
    private final ObjectMapper mapper;
    private final Limits limits;

    PlanRoutes(ModelCatalogue store, ObjectMapper mapper, Limits limits) {
        this.store = store;
        this.mapper = mapper;
        this.limits = limits;
    }

    void plan(Context ctx) throws Exception {
        String family = Params.identifier(ctx, "family");
        int version = Params.pathVersion(ctx);
        ModelVersionRow row = store.findVersion(family, version)
                .orElseThrow(() -> ApiProblem.notFound("model version " + family + "/" + version));
        ModelDocument document = StoredJson.read(mapper, row.documentJson(), ModelDocument.class,
                "model version " + family + "/" + version);
        StateSpaceModel model = document.toModel(limits);
        SamplingPlanner.Plan plan = read(ctx).toPlan(document, model);
        List<SamplingPlanner.SubsetPlan> result = SamplingPlanner.plan(model, plan);
        ctx.json(PlanViews.of(family, version, names(document.states()), names(document.outputs()), plan, result));
    }

    private PlanRequest read(Context ctx) throws Exception {
        ModelRoutes.requireJson(ctx);
        try (InputStream body = BodyLimit.open(ctx, MAX_PLAN_BODY_BYTES)) {
            PlanRequest request = mapper.readerFor(PlanRequest.class)
                    .with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES).readValue(body);
            if (request == null) {
                throw ApiProblem.invalid("body", "got nothing, expected a JSON object");
            }
            return request;
        }
    }

    private static List<String> names(List<Quantity> quantities) {
        return quantities.stream().map(Quantity::name).toList();
    }
}
