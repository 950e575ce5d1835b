package backstate.jobs;

import backstate.formats.DocumentSolver;
import backstate.formats.Limits;
import backstate.formats.CheckedModel;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.store.ModelVersionRow;
import backstate.store.Store;
import backstate.store.TraceRef;
import backstate.store.TraceRow;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Solves a stored trace under the model version it was posted for. Estimate jobs take this path,
 * and so does an estimate's series, which is not stored but rebuilt from the same stored inputs:
 * the solve is deterministic, so the rebuilt series is the one the job saw.
 */
public final class StoredTraceSolver {
    /** Model versions whose parsed documents are kept. */
    static final int MAX_CACHED_MODELS = 1024;

    private final Store store;
    private final ObjectMapper mapper;
    private final TraceCodec codec;
    private final Limits limits;
    private final Map<String, CheckedModel> models = new ConcurrentHashMap<>();
    private final FreshTraces fresh = new FreshTraces(System::nanoTime);

    public StoredTraceSolver(Store store, ObjectMapper mapper, Limits limits) {
        this.store = store;
        this.mapper = mapper;
        this.codec = new TraceCodec(mapper);
        this.limits = limits;
    }

    /** A stored trace, decoded, with the checked model of its version. */
    public record Loaded(TraceRef ref, CheckedModel model, ParsedTrace parsed) {
        public double windowStart() {
            return parsed.trace().time(0);
        }

        public double windowEnd() {
            return parsed.trace().time(parsed.trace().samples() - 1);
        }
    }

    /** Reads and decodes a trace; a missing trace or version is a broken database, not bad input. */
    public Loaded load(String traceId) {
        TraceRow row = store.findTrace(traceId)
                .orElseThrow(() -> new IllegalStateException("trace " + traceId + " is missing"));
        ModelVersionRow version = store.findVersion(row.family(), row.version()).orElseThrow(() ->
                new IllegalStateException("model version " + row.family() + "/" + row.version() + " is missing"));
        TraceRef ref = new TraceRef(row.id(), row.unitId(), row.family(), row.version(), row.receivedAt());
        return new Loaded(ref, model(version), codec.decode(row.payload()));
    }

    /**
     * Hands a trace whose post has just committed to the job that will solve it ({@link FreshTraces});
     * call only after the commit, with exactly what was stored (the codec is exact).
     */
    public void keepFresh(Loaded stored) {
        fresh.offer(stored);
    }

    /** For the trace's estimate job: the trace its post kept in memory, else the stored row. */
    public Loaded loadForJob(String traceId) {
        return fresh.take(traceId).orElseGet(() -> load(traceId));
    }

    /**
     * A version's model, parsed and checked once: versions are immutable, so the result is cached
     * (dropped whole past {@link #MAX_CACHED_MODELS}, which no real fleet nears).
     */
    public CheckedModel model(ModelVersionRow row) {
        String key = row.family() + "/" + row.version();
        CheckedModel cached = models.get(key);
        if (cached != null) {
            return cached;
        }
        if (models.size() >= MAX_CACHED_MODELS) {
            models.clear();
        }
        CheckedModel parsed = parse(row);
        models.put(key, parsed);
        return parsed;
    }

    /** Solves a loaded trace; {@code keepSeries} also returns the fitted and residual series. */
    public DocumentSolver.Outcome solve(Loaded loaded, boolean keepSeries) {
        return DocumentSolver.solve(loaded.model(), loaded.parsed(), keepSeries);
    }

    private CheckedModel parse(ModelVersionRow row) {
        try {
            return CheckedModel.of(mapper.readValue(row.documentJson(), ModelDocument.class), limits);
        } catch (JsonProcessingException e) {
            throw new IllegalStateException("stored model " + row.family() + "/" + row.version() + " is not readable", e);
        }
    }
}
