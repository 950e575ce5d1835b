package backstate.jobs;

import backstate.formats.CheckedModel;
import backstate.formats.DocumentSolver;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.TraceIntakeStore;
import backstate.store.TraceRef;
import backstate.store.TraceRow;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Future;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.SynchronousQueue;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;

/**
 * Solves a stored trace under the model version it was posted for. Estimate jobs take this path,
 * and so does an estimate's series, which is not stored but rebuilt from the same stored inputs:
 * the solve is deterministic, so the rebuilt series is the one the job saw.
 */
public final class StoredTraceSolver {
    /** Model versions whose checked models are kept. */
    static final int MAX_CACHED_MODELS = 1024;
    /** Traces this long are solved while their post's write is under way (~0.01 s of solve and up). */
    public static final int SOLVE_AHEAD_SAMPLES = 100_000;

    private final TraceIntakeStore traces;
    private final ModelCatalogue catalogue;
    private final ObjectMapper mapper;
    private final TraceCodec codec;
    private final Limits limits;
    private final Map<String, CheckedModel> models = new ConcurrentHashMap<>();
    private final FreshTraces fresh = new FreshTraces(System::nanoTime);
    /** One thread, no queue: a second long upload while one is solved ahead is solved by its job. */
    private final ExecutorService ahead = new ThreadPoolExecutor(1, 1, 0, TimeUnit.SECONDS, new SynchronousQueue<>(), r -> {
        Thread t = new Thread(r, "backstate-solve-ahead");
        t.setDaemon(true);
        return t;
    });

    public StoredTraceSolver(TraceIntakeStore traces, ModelCatalogue catalogue, ObjectMapper mapper, Limits limits) {
        this.traces = traces;
        this.catalogue = catalogue;
        this.mapper = mapper;
        this.codec = new TraceCodec(mapper);
        this.limits = limits;
    }

    /**
     * A stored trace, decoded, with the checked model of its version; {@code solvedAhead} is the
     * solve its post started while the trace was being written ({@link #solveAhead}), or null.
     */
    public record Loaded(TraceRef ref, CheckedModel model, ParsedTrace parsed, Future<DocumentSolver.Outcome> solvedAhead) {
        public Loaded(TraceRef ref, CheckedModel model, ParsedTrace parsed) {
            this(ref, model, parsed, null);
        }

        public double windowStart() {
            return parsed.trace().time(0);
        }

        public double windowEnd() {
            return parsed.trace().time(parsed.trace().samples() - 1);
        }
    }

    /** Reads and decodes a trace; a missing trace or version is a broken database, not bad input. */
    public Loaded load(String traceId) {
        TraceRow row = traces.findTrace(traceId)
                .orElseThrow(() -> new IllegalStateException("trace " + traceId + " is missing"));
        ModelVersionRow version = catalogue.findVersion(row.family(), row.version()).orElseThrow(() ->
                new IllegalStateException("model version " + row.family() + "/" + row.version() + " is missing"));
        TraceRef ref = new TraceRef(row.id(), row.unitId(), row.family(), row.version(), row.receivedAt());
        return new Loaded(ref, model(version), codec.decode(row.payload()));
    }

    /**
     * Hands a trace whose post has just committed to the job that will solve it ({@link FreshTraces});
     * call only after the commit, with exactly what was stored (the codec is exact).
     */
    public void keepFresh(Loaded stored) {
        if (!fresh.offer(stored) && stored.solvedAhead() != null) {
            stored.solvedAhead().cancel(true); // no room: its job will read the row and solve
        }
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

    /**
     * Starts solving a long trace on the one solve-ahead thread, for its post to hand to the job
     * with the trace once the write has committed: the solve then overlaps the durable write of a
     * large upload instead of following it. Null for a short trace (a flood of small posts must
     * not jump the queue or pass the workers' CPU bound) or while that thread is busy.
     */
    public Future<DocumentSolver.Outcome> solveAhead(CheckedModel model, ParsedTrace parsed) {
        if (parsed.trace().samples() < SOLVE_AHEAD_SAMPLES) {
            return null;
        }
        try {
            return ahead.submit(() -> DocumentSolver.solve(model, parsed, false));
        } catch (RejectedExecutionException busy) {
            return null;
        }
    }

    /** The estimate job's solve, without the series: the one its post started ahead, else a new one. */
    public DocumentSolver.Outcome solveForJob(Loaded loaded) throws Exception {
        if (loaded.solvedAhead() == null) {
            return solve(loaded, false);
        }
        try {
            return loaded.solvedAhead().get();
        } catch (ExecutionException e) {
            throw e.getCause() instanceof Exception cause ? cause : e;
        }
    }

    /** Solves a loaded trace; {@code keepSeries} also returns the series at every sample. */
    public DocumentSolver.Outcome solve(Loaded loaded, boolean keepSeries) {
        return DocumentSolver.solve(loaded.model(), loaded.parsed(), keepSeries);
    }

    /** Solves a loaded trace keeping a series of at most {@code maxPoints} evenly strided samples. */
    public DocumentSolver.Outcome solveWithSeries(Loaded loaded, int maxPoints) {
        return DocumentSolver.solveWithSeries(loaded.model(), loaded.parsed(), maxPoints);
    }

    private CheckedModel parse(ModelVersionRow row) {
        try {
            return CheckedModel.of(mapper.readValue(row.documentJson(), ModelDocument.class), limits);
        } catch (JsonProcessingException e) {
            throw new IllegalStateException("stored model " + row.family() + "/" + row.version() + " is not readable", e);
        }
    }
}
