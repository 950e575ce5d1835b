package backstate.api;

import backstate.estimation.Estimate;
import backstate.formats.DocumentSolver;
import backstate.solving.StoredTraceSolver;
import backstate.store.EstimateFilter;
import backstate.store.EstimatePage;
import backstate.store.EstimateRow;
import backstate.store.EstimateStore;
import backstate.store.TimeFilter;
import io.javalin.http.Context;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;

/**
 * Estimates by unit (latest, history: newest recording first) and by ID, with the fitted and
 * residual series for plots.
 */
final class EstimateRoutes {
    static final int DEFAULT_PAGE = 50;
    static final int MAX_PAGE = 500;
    static final int DEFAULT_POINTS = 1000;
    static final Set<String> FLAGS = Set.copyOf(FleetViews.FLAGS);

    /** Most points one series answer carries: plots want a few thousand at most. */
    static final int MAX_POINTS = 20_000;
    /** Fewest: the window's first and last sample. */
    static final int MIN_POINTS = 2;

    private final EstimateStore store;
    private final StoredTraceSolver solver;
    private final SeriesSolves solves;

    EstimateRoutes(EstimateStore store, StoredTraceSolver solver, SeriesSolves solves) {
        this.store = store;
        this.solver = solver;
        this.solves = solves;
    }

    /**
     * The newest estimate; with {@code model} and/or {@code version}, the newest made with them: the
     * first of the history under that filter, in the history's order.
     */
    void latest(Context ctx) {
        String unitId = Params.identifier(ctx, "unitId");
        String family = family(ctx);
        Integer version = Params.optionalInt(ctx, "version");
        Optional<EstimateRow> latest = family == null && version == null ? store.latestEstimate(unitId)
                : store.estimateHistory(unitId, new EstimateFilter(family, version, TimeFilter.NONE, null), null, 1)
                        .items().stream().findFirst();
        String under = (family == null ? "" : " of model " + family) + (version == null ? "" : " version " + version);
        answer(ctx, latest.orElseThrow(() -> ApiProblem.notFound("an estimate for unit " + unitId + under)));
    }

    void history(Context ctx) {
        String unitId = Params.identifier(ctx, "unitId");
        String family = family(ctx);
        String flag = ctx.queryParam("flag");
        if (flag != null && !FLAGS.contains(flag)) {
            throw ApiProblem.invalid("flag", "got " + Params.quoted(flag) + ", expected one of " + FleetViews.FLAGS);
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
        answer(ctx, find(ctx));
    }

    /** The estimate in full, or 304 when the caller already holds it (see {@link EntityTags}). */
    private static void answer(Context ctx, EstimateRow row) {
        String tag = EntityTags.of("estimate", row.id());
        if (!EntityTags.answeredUnchanged(ctx, tag)) {
            Views.Estimate body = Views.Estimate.of(row);
            EntityTags.tag(ctx, tag);
            ctx.json(body);
        }
    }

    /**
     * Rebuilt from the stored trace by solving it again ({@link StoredTraceSolver}); the series is
     * not stored. The engine keeps samples 0, s, 2s, … and the last, s = ⌈(N − 1) / (maxPoints − 1)⌉
     * ({@link backstate.estimation.KeptSamples}), so a series has at least two points. The load and solve run
     * on the bounded {@link SeriesSolves} pool, not on the request thread. A caller that already
     * holds this series (If-None-Match) gets 304 without a solve.
     */
    void series(Context ctx) throws Exception {
        EstimateRow row = find(ctx);
        int maxPoints = Params.intInRange(ctx, "maxPoints", DEFAULT_POINTS, MIN_POINTS, MAX_POINTS,
                ": a series holds the window's first and last sample");
        String tag = EntityTags.of("series", row.id(), Integer.toString(maxPoints));
        if (!EntityTags.answeredUnchanged(ctx, tag)) {
            Views.Series body = solves.run(() -> rebuild(row.traceId(), maxPoints));
            EntityTags.tag(ctx, tag);
            ctx.json(body);
        }
    }

    private Views.Series rebuild(String traceId, int maxPoints) {
        StoredTraceSolver.Loaded loaded = solver.load(traceId);
        if (!(solver.solveWithSeries(loaded, maxPoints) instanceof DocumentSolver.Outcome.Solved solved)) {
            throw new IllegalStateException("trace " + traceId + " solved once but not again");
        }
        List<String> outputs = loaded.model().document().outputs().stream().map(q -> q.name()).toList();
        List<String> states = loaded.model().document().states().stream().map(q -> q.name()).toList();
        return view(solved.estimate().series(), outputs, states);
    }

    /** The engine's kept series by output and state name; non-finite values (missing samples) as null. */
    static Views.Series view(Estimate.Series s, List<String> outputs, List<String> states) {
        int points = s.times().length;
        List<Double> time = new ArrayList<>(points);
        for (double t : s.times()) {
            time.add(t);
        }
        Map<String, Views.StateBand> bands = new LinkedHashMap<>();
        for (int i = 0; i < states.size(); i++) {
            bands.put(states.get(i), new Views.StateBand(column(s.states(), i, s.stateCount()),
                    column(s.stateStandardErrors(), i, s.stateCount()), column(s.stateLower(), i, s.stateCount()),
                    column(s.stateUpper(), i, s.stateCount())));
        }
        return new Views.Series(outputs, states, points, s.stride(), time,
                byName(s.measured(), outputs, s.outputCount()), byName(s.fitted(), outputs, s.outputCount()),
                byName(s.residuals(), outputs, s.outputCount()), bands, Views.CAUTION);
    }

    private static Map<String, List<Double>> byName(double[] rowMajor, List<String> names, int width) {
        Map<String, List<Double>> out = new LinkedHashMap<>();
        for (int j = 0; j < names.size(); j++) {
            out.put(names.get(j), column(rowMajor, j, width));
        }
        return out;
    }

    private static List<Double> column(double[] rowMajor, int j, int width) {
        int rows = rowMajor.length / width;
        List<Double> out = new ArrayList<>(rows);
        for (int k = 0; k < rows; k++) {
            out.add(finite(rowMajor[k * width + j]));
        }
        return out;
    }

    private static Double finite(double v) {
        return Double.isFinite(v) ? v : null;
    }

    /** The {@code model} query parameter: a family name, or null when not given. */
    private static String family(Context ctx) {
        return ctx.queryParam("model") == null ? null : Params.identifier("model", ctx.queryParam("model"));
    }

    private EstimateRow find(Context ctx) {
        String id = Params.identifier(ctx, "estimateId");
        return store.findEstimate(id).orElseThrow(() -> ApiProblem.notFound("estimate " + id));
    }
}
