package backstate.regression;

import backstate.formats.FieldValues;
import backstate.formats.InputException;
import backstate.formats.ModelDocument;
import backstate.formats.Quantity;
import backstate.store.ModelVersionRow;
import backstate.store.ModelCatalogue;
import backstate.store.RegressionStore;
import backstate.store.TimeFilter;
import backstate.store.TraceRef;
import backstate.store.TraceSelection;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;

/**
 * Checks a request for a new regression run against the stored catalogue and selects its traces:
 * the family and both versions must exist and describe the same outputs, the selection must match
 * 1 to {@link #MAX_TRACES} stored traces, and the versions those traces were posted for must hold
 * the columns both compared versions read. Bad values are {@link InputException}s (400), values
 * that do not fit what is stored {@link RegressionRefused} (422); each names its field.
 */
public final class RegressionRequests {
    /**
     * Most traces one run may select: their IDs travel in the job's parameters (~40 bytes each,
     * 4 MB at the limit). A pair of solves of a 361-sample demo trace takes about 3 ms, so a run
     * at the limit takes about 5 minutes of one solving slot, shared out in chunks over every
     * replica's idle slots (see Chunking), far inside the worker pool's one-hour stuck-job limit;
     * traces of 10⁵ samples and more take proportionally longer, and a run past that limit would
     * be rescued and restarted (its finished chunks are kept).
     */
    public static final int MAX_TRACES = 100_000;
    /** Units a refusal names before "and N more". */
    static final int UNITS_NAMED = 10;
    /** Times are stored as epoch milliseconds: a bound outside that range cannot be compared. */
    static final Instant EARLIEST = Instant.ofEpochMilli(Long.MIN_VALUE);
    static final Instant LATEST = Instant.ofEpochMilli(Long.MAX_VALUE);

    private final ModelCatalogue models;
    private final RegressionStore regressions;
    private final ObjectMapper mapper;

    public RegressionRequests(ModelCatalogue models, RegressionStore regressions, ObjectMapper mapper) {
        this.models = models;
        this.regressions = regressions;
        this.mapper = mapper;
    }

    /** The run's parameters: the request checked, its tolerances resolved, its selection normalized, its traces chosen. */
    public RegressionParams check(RegressionRequest request) throws JsonProcessingException {
        String family = FieldValues.identifier("family", request.family());
        int baseline = versionNumber("baseline", request.baseline());
        int candidate = versionNumber("candidate", request.candidate());
        if (baseline == candidate) {
            throw new InputException("candidate", "got " + candidate + ", the same as baseline; expected another version");
        }
        Tolerances tolerances = Tolerances.resolve(request.tolerances());
        Selection selection = normalized(request.traces() == null ? Selection.ALL : request.traces());
        if (models.findFamily(family).isEmpty()) {
            throw new RegressionRefused("family", "model family " + family + " does not exist");
        }
        ModelDocument baselineModel = document(existing("baseline", family, baseline));
        ModelDocument candidateModel = document(existing("candidate", family, candidate));
        requireSameOutputs(baselineModel, baseline, candidateModel, candidate);
        List<TraceRef> traces = select(family, selection);
        requireStoredColumns(family, traces, baselineModel, candidateModel);
        return new RegressionParams(family, baseline, candidate, selection, tolerances,
                traces.stream().map(TraceRef::id).toList());
    }

    private static int versionNumber(String field, Integer version) {
        if (version == null || version < 1) {
            throw new InputException(field, "got " + version + ", expected a version number >= 1");
        }
        return version;
    }

    /** Unit IDs checked and de-duplicated, times checked and written in one RFC 3339 form. */
    private static Selection normalized(Selection s) {
        List<String> units = null;
        if (s.units() != null) {
            if (s.units().isEmpty() || s.units().size() > MAX_TRACES) {
                throw new InputException("traces.units", "got " + s.units().size() + " unit IDs, expected 1-"
                        + MAX_TRACES + " (leave the list out to select every unit)");
            }
            Set<String> unique = new LinkedHashSet<>();
            for (int i = 0; i < s.units().size(); i++) {
                unique.add(FieldValues.identifier("traces.units[" + i + "]", s.units().get(i)));
            }
            units = List.copyOf(unique);
        }
        if (s.latestPerUnit() != null && s.latestPerUnit() < 1) {
            throw new InputException("traces.latestPerUnit", "got " + s.latestPerUnit() + ", expected a whole number >= 1");
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
            throw new InputException(field, "got " + to + ", expected a time after " + fromName + " " + from);
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
            throw new InputException(field, "got " + FieldValues.quoted(text)
                    + ", expected an RFC 3339 UTC time such as 2026-12-01T00:00:00Z");
        }
        if (t.isBefore(EARLIEST) || t.isAfter(LATEST)) {
            throw new InputException(field, "got " + text + ", expected a time between " + EARLIEST + " and " + LATEST);
        }
        return t;
    }

    /** A time {@link #normalized} wrote, or null. */
    private static Instant instant(String normalizedOrNull) {
        return normalizedOrNull == null ? null : Instant.parse(normalizedOrNull);
    }

    private ModelVersionRow existing(String field, String family, int version) {
        return models.findVersion(family, version).orElseThrow(() ->
                new RegressionRefused(field, "model version " + family + "/" + version + " does not exist"));
    }

    private ModelDocument document(ModelVersionRow row) throws JsonProcessingException {
        return mapper.readValue(row.documentJson(), ModelDocument.class);
    }

    /** Both versions must describe the same output channels, or their fits measure different things. */
    private static void requireSameOutputs(ModelDocument b, int baseline, ModelDocument c, int candidate) {
        Set<String> bo = names(b.outputs());
        Set<String> co = names(c.outputs());
        if (!bo.equals(co)) {
            throw new RegressionRefused("candidate", "version " + candidate + " has outputs " + co + ", baseline "
                    + baseline + " has " + bo + " (only in baseline: " + minus(bo, co) + ", only in candidate: "
                    + minus(co, bo) + "); expected the same output channels");
        }
    }

    private List<TraceRef> select(String family, Selection s) {
        TraceSelection selection = new TraceSelection(family, s.units(), new TimeFilter(instant(s.from()),
                instant(s.to()), instant(s.receivedFrom()), instant(s.receivedTo())), s.latestPerUnit(), MAX_TRACES + 1);
        List<TraceRef> traces = regressions.selectTraces(selection);
        if (traces.isEmpty()) {
            throw new RegressionRefused("traces", "no stored traces of model family " + family + " match the selection");
        }
        if (traces.size() > MAX_TRACES) {
            throw new RegressionRefused("traces", "the selection matches more than " + MAX_TRACES
                    + " traces; narrow it with units, latestPerUnit, from/to or receivedFrom/receivedTo");
        }
        if (s.units() != null) {
            Set<String> missing = new TreeSet<>(s.units());
            traces.forEach(t -> missing.remove(t.unitId()));
            if (!missing.isEmpty()) {
                throw new RegressionRefused("traces.units", "no stored traces of model family " + family
                        + " match the selection for " + unitsInWords(missing));
            }
        }
        return traces;
    }

    /** Units named in a refusal, most {@value #UNITS_NAMED}: "the unit RCX-1", "the units RCX-1, RCX-2 and 3 more". */
    static String unitsInWords(Set<String> units) {
        List<String> named = units.stream().limit(UNITS_NAMED).toList();
        String more = units.size() > UNITS_NAMED ? " and " + (units.size() - UNITS_NAMED) + " more" : "";
        return (units.size() == 1 ? "the unit " : "the units ") + String.join(", ", named) + more;
    }

    /**
     * Traces are stored in the columns of the version they were posted for: each such version must
     * have the compared outputs and every input either compared version needs.
     */
    private void requireStoredColumns(String family, List<TraceRef> traces, ModelDocument b, ModelDocument c)
            throws JsonProcessingException {
        Set<String> outputs = names(b.outputs());
        Set<String> inputs = names(b.inputsOrEmpty());
        inputs.addAll(names(c.inputsOrEmpty()));
        for (int version : new TreeSet<>(traces.stream().map(TraceRef::version).toList())) {
            ModelDocument stored = document(existing("traces", family, version));
            Set<String> storedOutputs = names(stored.outputs());
            Set<String> storedInputs = names(stored.inputsOrEmpty());
            if (!storedOutputs.equals(outputs) || !storedInputs.containsAll(inputs)) {
                throw new RegressionRefused("traces", "traces stored for version " + version + " have outputs "
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
}
