package backstate.api;

import backstate.estimation.InitialStateEstimator;
import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import backstate.store.EstimateRow;
import backstate.store.EstimateStore;
import backstate.store.FleetStore;
import backstate.store.FleetSummary;
import backstate.store.FleetSummaryQuery;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.TimeFilter;
import backstate.store.UnitFilter;
import backstate.store.UnitPage;
import backstate.store.UnitSort;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.time.Clock;
import java.time.Duration;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.time.temporal.ChronoUnit;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Fleet views for dashboards: a family's summary per model version, its units by a diagnostic, a
 * unit's trend; by recording time (the traces' windows), with received-time filters beside.
 */
final class FleetRoutes {
    static final int DEFAULT_UNITS_PAGE = 50;
    static final int MAX_UNITS_PAGE = 500;
    static final int DEFAULT_TREND_POINTS = 100;
    static final int MAX_TREND_POINTS = 1000;
    /** Unit IDs listed per flag and stale units listed in a summary (the counts are complete). */
    static final int SUMMARY_LIST_LIMIT = 50;
    static final Duration DEFAULT_STALE_AFTER = Duration.ofHours(24);
    /** Ten years: longer is a typo, not a dashboard setting. */
    static final Duration MAX_STALE_AFTER = Duration.ofDays(3650);
    /** Cursors this service hands out are well under this length. */
    static final int MAX_CURSOR_LENGTH = 512;
    /** Worst fit first: what a dashboard looks at first. */
    static final String DEFAULT_SORT = "-chiSquarePerDof";
    /** The sort parameter's words; a leading '-' reverses the order. */
    static final Map<String, UnitSort> SORTS = sorts();

    private final FleetStore fleet;
    private final EstimateStore estimates;
    private final ModelCatalogue models;
    private final ObjectMapper mapper;
    private final Clock clock;
    /**
     * Parsed model documents by family and version. A version's document never changes once
     * published (the schema refuses the update), so every replica reads the same from it; parsing
     * it on each summary took about a sixth of the summary's CPU under the mixed load.
     */
    private final Map<String, ModelDocument> documents = new ConcurrentHashMap<>();

    FleetRoutes(FleetStore fleet, EstimateStore estimates, ModelCatalogue models, ObjectMapper mapper, Clock clock) {
        this.fleet = fleet;
        this.estimates = estimates;
        this.models = models;
        this.mapper = mapper;
        this.clock = clock;
    }

    void summary(Context ctx) throws JsonProcessingException {
        String family = family(ctx);
        List<ModelVersionRow> versions = versions(ctx, family);
        TimeFilter times = Params.timeFilter(ctx);
        Duration staleAfter = staleAfter(ctx);
        Integer version = Params.optionalInt(ctx, "version");
        Instant now = clock.instant().truncatedTo(ChronoUnit.MILLIS); // the store's time resolution
        Map<Integer, List<String>> channels = new LinkedHashMap<>();
        for (ModelVersionRow v : versions) {
            channels.put(v.version(), names(document(v).outputs()));
        }
        FleetSummary s = fleet.fleetSummary(new FleetSummaryQuery(family, channels, times, version,
                now.minus(staleAfter), SUMMARY_LIST_LIMIT));
        List<FleetViews.Version> views = s.versions().stream().map(a -> FleetViews.Version.of(a,
                status(versions, a.version()), channels.get(a.version()))).toList();
        ctx.json(new FleetViews.Summary(family, text(times.recordedFromOrNull()), text(times.recordedToOrNull()),
                text(times.receivedFromOrNull()), text(times.receivedToOrNull()), now.toString(), staleAfter.toString(),
                views, FleetViews.Stale.of(s.stale(), now.minus(staleAfter))));
    }

    void units(Context ctx) {
        String family = family(ctx);
        versions(ctx, family);
        Integer version = Params.optionalInt(ctx, "version");
        UnitSort sort = sort(ctx);
        String cursor = ctx.queryParam("cursor");
        if (cursor != null && (cursor.isEmpty() || cursor.length() > MAX_CURSOR_LENGTH)) {
            throw ApiProblem.invalid("cursor", "not a cursor from this API");
        }
        int limit = Params.intOrDefault(ctx, "limit", DEFAULT_UNITS_PAGE, MAX_UNITS_PAGE);
        UnitPage page = fleet.fleetUnits(new UnitFilter(family, version, flag(ctx)), sort, cursor, limit);
        ctx.json(new Views.Page<>(page.items().stream().map(FleetViews.Unit::of).toList(), page.nextCursorOrNull()));
    }

    void trend(Context ctx) throws JsonProcessingException {
        String unitId = Params.identifier(ctx, "unitId");
        String state = Params.requiredQuery(ctx, "state");
        String model = ctx.queryParam("model");
        String family = model == null ? estimates.latestEstimate(unitId).map(EstimateRow::family)
                .orElseThrow(() -> ApiProblem.notFound("an estimate for unit " + unitId)) : Params.identifier("model", model);
        if (model != null && models.findFamily(family).isEmpty()) {
            throw ApiProblem.unprocessable("model", "got " + Params.quoted(model) + ", expected an existing model family");
        }
        List<ModelVersionRow> versions = versions(ctx, family);
        Integer version = Params.optionalInt(ctx, "version");
        String unit = unitOf(state, family, versions);
        int limit = Params.intOrDefault(ctx, "limit", DEFAULT_TREND_POINTS, MAX_TREND_POINTS);
        List<FleetViews.Point> points = FleetViews.chronological(fleet.stateTrend(unitId, state, family, version,
                Params.timeFilter(ctx), limit));
        ctx.json(new FleetViews.Trend(unitId, family, version, state, unit, InitialStateEstimator.CONFIDENCE, points,
                Views.CAUTION));
    }

    private String family(Context ctx) {
        String family = Params.identifier(ctx, "family");
        if (models.findFamily(family).isEmpty()) {
            throw ApiProblem.notFound("model family " + family);
        }
        return family;
    }

    /** The family's versions; narrowed to the one the {@code version} parameter names, which must exist. */
    private List<ModelVersionRow> versions(Context ctx, String family) {
        List<ModelVersionRow> all = models.listVersions(family);
        Integer version = Params.optionalInt(ctx, "version");
        if (version == null) {
            return all;
        }
        List<ModelVersionRow> one = all.stream().filter(v -> v.version() == version).toList();
        if (one.isEmpty()) {
            throw ApiProblem.unprocessable("version", "got " + version + ", expected a version of " + family + ": "
                    + all.stream().map(ModelVersionRow::version).toList());
        }
        return one;
    }

    /** The state's unit from the version(s) in scope; a state none of them has is the client's error. */
    private String unitOf(String state, String family, List<ModelVersionRow> versions) throws JsonProcessingException {
        Set<String> known = new LinkedHashSet<>();
        String unit = null;
        for (ModelVersionRow v : versions) {
            for (Quantity q : document(v).states()) {
                known.add(q.name());
                if (q.name().equals(state)) {
                    unit = q.unit();
                }
            }
        }
        if (!known.contains(state)) {
            throw ApiProblem.invalid("state", "got " + Params.quoted(state) + ", expected a state of " + family + ": " + known);
        }
        return unit;
    }

    private static Duration staleAfter(Context ctx) {
        String text = ctx.queryParam("staleAfter");
        if (text == null) {
            return DEFAULT_STALE_AFTER;
        }
        try {
            Duration d = Duration.parse(text);
            if (!d.isNegative() && !d.isZero() && d.compareTo(MAX_STALE_AFTER) <= 0) {
                return d;
            }
        } catch (DateTimeParseException e) {
            // answered below
        }
        throw ApiProblem.invalid("staleAfter", "got " + Params.quoted(text) + ", expected an ISO 8601 duration"
                + " such as PT24H or P7D, above zero and at most " + MAX_STALE_AFTER.toDays() + " days");
    }

    private static String flag(Context ctx) {
        String flag = ctx.queryParam("flag");
        if (flag != null && !FleetViews.FLAGS.contains(flag)) {
            throw ApiProblem.invalid("flag", "got " + Params.quoted(flag) + ", expected one of " + FleetViews.FLAGS);
        }
        return flag;
    }

    private static UnitSort sort(Context ctx) {
        String word = ctx.queryParam("sort") == null ? DEFAULT_SORT : ctx.queryParam("sort");
        UnitSort sort = SORTS.get(word);
        if (sort == null) {
            throw ApiProblem.invalid("sort", "got " + Params.quoted(word) + ", expected one of " + SORTS.keySet());
        }
        return sort;
    }

    private static Map<String, UnitSort> sorts() {
        Map<String, UnitSort> sorts = new LinkedHashMap<>();
        sorts.put("-chiSquarePerDof", UnitSort.CHI_SQUARE_DESC);
        sorts.put("chiSquarePerDof", UnitSort.CHI_SQUARE);
        sorts.put("unitId", UnitSort.UNIT_ID);
        sorts.put("-unitId", UnitSort.UNIT_ID_DESC);
        sorts.put("latest", UnitSort.LATEST);
        sorts.put("-latest", UnitSort.LATEST_DESC);
        return java.util.Collections.unmodifiableMap(sorts);
    }

    private ModelDocument document(ModelVersionRow v) {
        return documents.computeIfAbsent(v.family() + "/" + v.version(), name -> StoredJson.read(mapper,
                v.documentJson(), ModelDocument.class, "model version " + name));
    }

    private static List<String> names(List<Quantity> quantities) {
        return quantities.stream().map(Quantity::name).toList();
    }

    private static String status(List<ModelVersionRow> versions, int version) {
        return versions.stream().filter(v -> v.version() == version).map(ModelVersionRow::status).findFirst().orElseThrow();
    }

    private static String text(Instant t) {
        return t == null ? null : t.toString();
    }
}
