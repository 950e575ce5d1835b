package backstate.api;

import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import backstate.regression.RegressionParams;
import backstate.regression.Selection;
import backstate.regression.Tolerances;
import backstate.store.JobRow;
import backstate.store.JobStore;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.NewRegression;
import backstate.store.RegressionRow;
import backstate.store.RegressionStore;
import backstate.store.TimeFilter;
import backstate.store.TraceRef;
import backstate.store.TraceSelection;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.time.Clock;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;

/**
 * Model-version regression runs: start one over stored traces (a queued 'regression' job), read
 * its state, progress and result, list runs, and cancel one.
 */
final class RegressionRoutes {
    /**
     * Most traces one run may select: their IDs travel in the job's parameters (~40 bytes each).
     * A pair of solves of a 361-sample demo trace takes about 3 ms, so such a run ends in under a
     * minute, far inside the worker pool's one-hour stuck-job limit; traces of 10⁵ samples and
     * more take proportionally longer, and a run past that limit would be rescued and restarted.
     */
    static final int MAX_TRACES = 10_000;
    static final int DEFAULT_PAGE = 50;
    /** Times are stored as epoch milliseconds: a bound outside that range cannot be compared. */
    static final Instant EARLIEST = Instant.ofEpochMilli(Long.MIN_VALUE);
    static final Instant LATEST = Instant.ofEpochMilli(Long.MAX_VALUE);
    static final int MAX_PAGE = 500;

    private final ModelCatalogue models;
    private final RegressionStore regressions;
    private final JobStore jobs;
    private final ObjectMapper mapper;
    private final Clock clock;
    private final long maxBodyBytes;
    private final int maxQueued;
    private final Runnable wakeWorkers;

    RegressionRoutes(ModelCatalogue models, RegressionStore regressions, JobStore jobs, ObjectMapper mapper, Clock clock,
                     long maxBodyBytes, int maxQueued, Runnable wakeWorkers) {
        this.models = models;
        this.regressions = regressions;
        this.jobs = jobs;
        this.mapper = mapper;
        this.clock = clock;
        this.maxBodyBytes = maxBodyBytes;
        this.maxQueued = maxQueued;
        this.wakeWorkers = wakeWorkers;
    }

    /** The request body of POST /v1/regressions; {@code traces} and {@code tolerances} may be left out. */
    record RegressionRequest(String family, Integer baseline, Integer candidate, Selection traces,
                             Tolerances tolerances) {
    }

    void create(Context ctx) throws Exception {
        RegressionRequest body = read(ctx);
        String family = Params.identifier("family", body.family());
        int baseline = versionNumber("baseline", body.baseline());
        int candidate = versionNumber("candidate", body.candidate());
        if (baseline == candidate) {
            throw ApiProblem.invalid("candidate", "got " + candidate + ", the same as baseline; expected another version");
        }
        Tolerances tolerances = Tolerances.resolve(body.tolerances());
        Selection selection = normalized(body.traces() == null ? Selection.ALL : body.traces());
        if (models.findFamily(family).isEmpty()) {
            throw ApiProblem.unprocessable("family", "model family " + family + " does not exist");
        }
        ModelDocument baselineModel = document(existing("baseline", family, baseline));
        ModelDocument candidateModel = document(existing("candidate", family, candidate));
        requireSameOutputs(baselineModel, baseline, candidateModel, candidate);
        List<TraceRef> traces = select(family, selection);
        requireStoredColumns(family, traces, baselineModel, candidateModel);
        RegressionParams params = new RegressionParams(family, baseline, candidate, selection, tolerances,
                traces.stream().map(TraceRef::id).toList());
        String id = regressions.createRegression(new NewRegression(family, baseline, candidate,
                mapper.writeValueAsString(params)), maxQueued, clock.instant());
        wakeWorkers.run();
        ctx.status(202).header("Location", "/v1/regressions/" + id).json(view(find(id)));
    }

    void get(Context ctx) throws Exception {
        ctx.json(view(find(ctx)));
    }

    void list(Context ctx) {
        String family = ctx.queryParam("family") == null ? null : Params.identifier("family", ctx.queryParam("family"));
        String cursor = ctx.queryParam("cursor");
        if (cursor != null && (cursor.isEmpty() || cursor.length() > 512)) {
            throw ApiProblem.invalid("cursor", "not a cursor from this API");
        }
        var page = regressions.listRegressions(family, cursor, Params.intOrDefault(ctx, "limit", DEFAULT_PAGE, MAX_PAGE));
        ctx.json(new Views.Page<>(page.items().stream().map(RegressionViews.Summary::of).toList(),
                page.nextCursorOrNull()));
    }

    /** Queued: cancelled at once (200). Running: a cancel request its worker acts on between traces (202). */
    void cancel(Context ctx) throws Exception {
        RegressionRow run = find(ctx);
        if (jobs.cancelIfQueued(run.id(), clock.instant())) {
            ctx.json(view(find(run.id())));
            return;
        }
        if (regressions.requestRegressionCancel(run.id(), clock.instant())) {
            ctx.status(202).json(view(find(run.id())));
            return;
        }
        throw ApiProblem.conflict("regression " + run.id() + " is " + find(run.id()).state()
                + "; only a queued or running run can be cancelled");
    }

    private RegressionViews.Regression view(RegressionRow run) throws Exception {
        JobRow job = jobs.findJob(run.id()).orElseThrow();
        return RegressionViews.Regression.of(run, job, mapper.readValue(job.paramsJson(), RegressionParams.class));
    }

    private static int versionNumber(String field, Integer version) {
        if (version == null || version < 1) {
            throw ApiProblem.invalid(field, "got " + version + ", expected a version number >= 1");
        }
        return version;
    }

    /** Unit IDs checked and de-duplicated, times checked and written in one RFC 3339 form. */
    private static Selection normalized(Selection s) {
        List<String> units = null;
        if (s.units() != null) {
            if (s.units().isEmpty() || s.units().size() > MAX_TRACES) {
                throw ApiProblem.invalid("traces.units", "got " + s.units().size() + " unit IDs, expected 1-"
                        + MAX_TRACES + " (leave the list out to select every unit)");
            }
            Set<String> unique = new LinkedHashSet<>();
            for (int i = 0; i < s.units().size(); i++) {
                unique.add(Params.identifier("traces.units[" + i + "]", s.units().get(i)));
            }
            units = List.copyOf(unique);
        }
        if (s.latestPerUnit() != null && s.latestPerUnit() < 1) {
            throw ApiProblem.invalid("traces.latestPerUnit", "got " + s.latestPerUnit() + ", expected a whole number >= 1");
        }
        Instant from = instant("traces.from", s.from());
        Instant to = instant("traces.to", s.to());
        Instant receivedFrom = instant("traces.receivedFrom", s.receivedFrom());
        Instant receivedTo = instant("traces.receivedTo", s.receivedTo());
        requireAfter("traces.to", to, "from", from);
        requireAfter("traces.receivedTo", receivedTo, "receivedFrom", receivedFrom);
        return new Selection(units, s.latestPerUnit(), text(from), text(to), text(receivedFrom), text(receivedTo));
    }

    private static void requireAfter(String field, Instant to, String fromName, Instant from) {
        if (from != null && to != null && !from.isBefore(to)) {
            throw ApiProblem.invalid(field, "got " + to + ", expected a time after " + fromName + " " + from);
        }
    }

    private static String text(Instant t) {
        return t == null ? null : t.toString();
    }

    private static Instant instant(String field, String text) {
        if (text == null) {
            return null;
        }
        Instant t;
        try {
            t = Instant.parse(text);
        } catch (DateTimeParseException e) {
            throw ApiProblem.invalid(field, "got " + Params.quoted(text)
                    + ", expected an RFC 3339 UTC time such as 2026-12-01T00:00:00Z");
        }
        if (t.isBefore(EARLIEST) || t.isAfter(LATEST)) {
            throw ApiProblem.invalid(field, "got " + text + ", expected a time between " + EARLIEST + " and " + LATEST);
        }
        return t;
    }

    /** A time {@link #normalized} wrote, or null. */
    private static Instant instant(String normalizedOrNull) {
        return normalizedOrNull == null ? null : Instant.parse(normalizedOrNull);
    }

    private ModelVersionRow existing(String field, String family, int version) {
        return models.findVersion(family, version).orElseThrow(() ->
                ApiProblem.unprocessable(field, "model version " + family + "/" + version + " does not exist"));
    }

    private ModelDocument document(ModelVersionRow row) throws Exception {
        return mapper.readValue(row.documentJson(), ModelDocument.class);
    }

    /** Both versions must describe the same output channels, or their fits measure different things. */
    private static void requireSameOutputs(ModelDocument b, int baseline, ModelDocument c, int candidate) {
        Set<String> bo = names(b.outputs());
        Set<String> co = names(c.outputs());
        if (!bo.equals(co)) {
            throw ApiProblem.unprocessable("candidate", "version " + candidate + " has outputs " + co + ", baseline "
                    + baseline + " has " + bo + " (only in baseline: " + minus(bo, co) + ", only in candidate: "
                    + minus(co, bo) + "); expected the same output channels");
        }
    }

    private List<TraceRef> select(String family, Selection s) {
        TraceSelection selection = new TraceSelection(family, s.units(), new TimeFilter(instant(s.from()),
                instant(s.to()), instant(s.receivedFrom()), instant(s.receivedTo())), s.latestPerUnit(), MAX_TRACES + 1);
        List<TraceRef> traces = regressions.selectTraces(selection);
        if (traces.isEmpty()) {
            throw ApiProblem.unprocessable("traces", "no stored traces of model family " + family + " match the selection");
        }
        if (traces.size() > MAX_TRACES) {
            throw ApiProblem.unprocessable("traces", "the selection matches more than " + MAX_TRACES
                    + " traces; narrow it with units, latestPerUnit, from/to or receivedFrom/receivedTo");
        }
        if (s.units() != null) {
            Set<String> missing = new TreeSet<>(s.units());
            traces.forEach(t -> missing.remove(t.unitId()));
            if (!missing.isEmpty()) {
                throw ApiProblem.unprocessable("traces.units", "no stored traces of model family " + family
                        + " match the selection for units " + missing);
            }
        }
        return traces;
    }

    /**
     * Traces are stored in the columns of the version they were posted for: each such version must
     * have the compared outputs and every input either compared version needs.
     */
    private void requireStoredColumns(String family, List<TraceRef> traces, ModelDocument b, ModelDocument c)
            throws Exception {
        Set<String> outputs = names(b.outputs());
        Set<String> inputs = names(b.inputsOrEmpty());
        inputs.addAll(names(c.inputsOrEmpty()));
        for (int version : new TreeSet<>(traces.stream().map(TraceRef::version).toList())) {
            ModelDocument stored = document(existing("traces", family, version));
            Set<String> storedOutputs = names(stored.outputs());
            Set<String> storedInputs = names(stored.inputsOrEmpty());
            if (!storedOutputs.equals(outputs) || !storedInputs.containsAll(inputs)) {
                throw ApiProblem.unprocessable("traces", "traces stored for version " + version + " have outputs "
                        + storedOutputs + " and inputs " + storedInputs + "; the compared versions need outputs "
                        + outputs + " and inputs " + inputs + " (missing: " + missing(outputs, storedOutputs, inputs,
                        storedInputs) + ")");
            }
        }
    }

    private static Set<String> names(List<Quantity> quantities) {
        Set<String> names = new TreeSet<>();
        quantities.forEach(q -> names.add(q.name()));
        return names;
    }

    private static List<String> missing(Set<String> outputs, Set<String> storedOutputs, Set<String> inputs,
                                        Set<String> storedInputs) {
        List<String> missing = minus(outputs, storedOutputs);
        missing.addAll(minus(inputs, storedInputs));
        return missing;
    }

    private static List<String> minus(Set<String> a, Set<String> b) {
        List<String> out = new ArrayList<>(a);
        out.removeAll(b);
        return out;
    }

    private RegressionRequest read(Context ctx) throws Exception {
        ModelRoutes.requireJson(ctx);
        try (InputStream in = BodyLimit.open(ctx, maxBodyBytes)) {
            RegressionRequest body = mapper.readerFor(RegressionRequest.class)
                    .with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES).readValue(in);
            if (body == null) {
                throw ApiProblem.invalid("body", "got nothing, expected a JSON object");
            }
            return body;
        }
    }

    private RegressionRow find(Context ctx) {
        return find(Params.identifier(ctx, "regressionId"));
    }

    private RegressionRow find(String id) {
        return regressions.findRegression(id).orElseThrow(() -> ApiProblem.notFound("regression " + id));
    }
}
