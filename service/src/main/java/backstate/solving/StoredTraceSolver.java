package backstate.solving;

import backstate.formats.CheckedModel;
import backstate.formats.CheckedModels;
import backstate.formats.DocumentSolver;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceCodec;
import backstate.store.ModelVersionRow;
import backstate.store.ModelCatalogue;
import backstate.store.TraceIntakeStore;
import backstate.store.TraceRef;
import backstate.store.TraceRow;
import com.fasterxml.jackson.databind.ObjectMapper;

/**
 * Solves a stored trace under the model version it was posted for. Estimate jobs take this path,
 * and so does an estimate's series, which is not stored but rebuilt from the same stored inputs:
 * the solve is deterministic, so the rebuilt series is the one the job saw.
 */
public final class StoredTraceSolver {
    private final TraceIntakeStore traces;
    private final ModelCatalogue catalogue;
    private final CheckedModels models;
    private final TraceCodec codec;

    public StoredTraceSolver(TraceIntakeStore traces, ModelCatalogue catalogue, CheckedModels models, ObjectMapper mapper) {
        this.traces = traces;
        this.catalogue = catalogue;
        this.models = models;
        this.codec = new TraceCodec(mapper);
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

    /**
     * Reads and decodes a trace; a missing trace or version is a broken database, not bad input,
     * and a payload that does not decode is {@link CorruptTraceException}.
     */
    public Loaded load(String traceId) {
        TraceRow row = traces.findTrace(traceId)
                .orElseThrow(() -> new IllegalStateException("trace " + traceId + " is missing"));
        ModelVersionRow version = catalogue.findVersion(row.family(), row.version()).orElseThrow(() ->
                new IllegalStateException("model version " + row.family() + "/" + row.version() + " is missing"));
        TraceRef ref = new TraceRef(row.id(), row.unitId(), row.family(), row.version(), row.receivedAt());
        return new Loaded(ref, model(version), decode(row, ref));
    }

    /** The codec checks what it reads and throws on bad bytes; whatever it throws, the bytes are bad. */
    private ParsedTrace decode(TraceRow row, TraceRef ref) {
        try {
            return codec.decode(row.payload());
        } catch (RuntimeException e) {
            throw new CorruptTraceException(ref, row.windowStart(), e);
        }
    }

    /** A version's model, parsed and checked once ({@link CheckedModels}). */
    public CheckedModel model(ModelVersionRow row) {
        return models.of(row.family(), row.version(), row.documentJson());
    }

    /** Solves a loaded trace; {@code keepSeries} also returns the series at every sample. */
    public DocumentSolver.Outcome solve(Loaded loaded, boolean keepSeries) {
        return DocumentSolver.solve(loaded.model(), loaded.parsed(), keepSeries);
    }

    /** Solves a loaded trace keeping a series of at most {@code maxPoints} evenly strided samples. */
    public DocumentSolver.Outcome solveWithSeries(Loaded loaded, int maxPoints) {
        return DocumentSolver.solveWithSeries(loaded.model(), loaded.parsed(), maxPoints);
    }
}
