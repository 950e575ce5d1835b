package backstate.api;

import backstate.estimation.Estimate;
import backstate.formats.DocumentSolver;
import backstate.jobs.StoredTraceSolver;
import backstate.store.EstimateFilter;
import backstate.store.EstimatePage;
import backstate.store.EstimateRow;
import backstate.store.Store;
import io.javalin.http.Context;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * Estimates by unit (latest, history: newest recording first) and by ID, with the fitted and
 * residual series for plots.
 */
final class EstimateRoutes {
    static final int DEFAULT_PAGE = 50;
    static final int MAX_PAGE = 500;
    static final int DEFAULT_POINTS = 1000;
    static final Set<String> FLAGS = Set.of("unobservable", "ill_conditioned", "model_mismatch", "few_samples");

    /** Most points one series answer carries: plots want a few thousand at most. */
    static final int MAX_POINTS = 20_000;

    private final Store store;
    private final StoredTraceSolver solver;

    EstimateRoutes(Store store, StoredTraceSolver solver) {
        this.store = store;
        this.solver = solver;
    }

    void latest(Context ctx) {
        String unitId = Params.identifier(ctx, "unitId");
        ctx.json(Views.Estimate.of(store.latestEstimate(unitId)
                .orElseThrow(() -> ApiProblem.notFound("an estimate for unit " + unitId))));
    }

    void history(Context ctx) {
        String unitId = Params.identifier(ctx, "unitId");
        String family = ctx.queryParam("model") == null ? null : Params.identifier("model", ctx.queryParam("model"));
        String flag = ctx.queryParam("flag");
        if (flag != null && !FLAGS.contains(flag)) {
            throw ApiProblem.invalid("flag", "got " + Params.quoted(flag) + ", expected one of " + FLAGS);
        }
        EstimateFilter filter = new EstimateFilter(family, Params.optionalInt(ctx, "version"), Params.timeFilter(ctx), flag);
        String cursor = ctx.queryParam("cursor");
        if (cursor != null && (cursor.isEmpty() || cursor.length() > 512)) {
            throw ApiProblem.invalid("cursor", "not a cursor from this API");
        }
        EstimatePage page = store.estimateHistory(unitId, filter, cursor, Params.intOrDefault(ctx, "limit", DEFAULT_PAGE, MAX_PAGE));
        ctx.json(new Views.Page<>(page.items().stream().map(Views.EstimateSummary::of).toList(), page.nextCursorOrNull()));
    }

    void get(Context ctx) {
        ctx.json(Views.Estimate.of(find(ctx)));
    }

    /** Rebuilt from the stored trace by solving it again ({@link StoredTraceSolver}); the series is not stored. */
    void series(Context ctx) {
        EstimateRow row = find(ctx);
        int maxPoints = Params.intOrDefault(ctx, "maxPoints", DEFAULT_POINTS, MAX_POINTS);
        StoredTraceSolver.Loaded loaded = solver.load(row.traceId());
        if (!(solver.solve(loaded, true) instanceof DocumentSolver.Outcome.Solved solved)) {
            throw new IllegalStateException("trace " + row.traceId() + " solved once but not again");
        }
        List<String> outputs = loaded.model().document().outputs().stream().map(q -> q.name()).toList();
        ctx.json(decimate(solved.estimate().series(), outputs, maxPoints));
    }

    /** Keeps every s-th point, s = ceil(points / maxPoints), so at most maxPoints remain. */
    static Views.Series decimate(Estimate.Series s, List<String> outputs, int maxPoints) {
        int points = s.times().length;
        int stride = Math.max(1, (points + maxPoints - 1) / maxPoints);
        List<Double> time = new ArrayList<>();
        Map<String, List<Double>> fitted = new LinkedHashMap<>();
        Map<String, List<Double>> residual = new LinkedHashMap<>();
        outputs.forEach(o -> {
            fitted.put(o, new ArrayList<>());
            residual.put(o, new ArrayList<>());
        });
        int p = s.outputCount();
        for (int k = 0; k < points; k += stride) {
            time.add(s.times()[k]);
            for (int j = 0; j < p; j++) {
                fitted.get(outputs.get(j)).add(finite(s.fitted()[k * p + j]));
                residual.get(outputs.get(j)).add(finite(s.residuals()[k * p + j]));
            }
        }
        return new Views.Series(outputs, time.size(), time, fitted, residual);
    }

    private static Double finite(double v) {
        return Double.isFinite(v) ? v : null;
    }

    private EstimateRow find(Context ctx) {
        String id = Params.identifier(ctx, "estimateId");
        return store.findEstimate(id).orElseThrow(() -> ApiProblem.notFound("estimate " + id));
    }
}
