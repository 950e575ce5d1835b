package backstate.jobs;

import backstate.estimation.Estimate;
import backstate.estimation.ModelException;
import backstate.formats.DocumentSolver;
import backstate.formats.InputException;
import backstate.formats.EstimateDocument;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.SeriesCodec;
import backstate.formats.TraceCodec;
import backstate.store.ModelVersionRow;
import backstate.store.NewEstimate;
import backstate.store.Store;
import backstate.store.TraceRow;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;

/** Runs an 'estimate' job: loads the stored trace and its model version, solves, and returns the estimate row. */
public final class EstimateJobHandler implements JobHandler {
    private final Store store;
    private final ObjectMapper mapper;
    private final TraceCodec codec;
    private final Limits limits;
    private final Timer solveTimer;

    public EstimateJobHandler(Store store, ObjectMapper mapper, Limits limits, MeterRegistry registry) {
        this.store = store;
        this.mapper = mapper;
        this.codec = new TraceCodec(mapper);
        this.limits = limits;
        this.solveTimer = Timer.builder("backstate.solve.duration").description("time to solve one trace").register(registry);
    }

    @Override
    public JobOutcome handle(ClaimedJob job) throws Exception {
        if (!"estimate".equals(job.kind())) {
            return new JobOutcome.Failed("no handler for job kind " + job.kind());
        }
        TraceRow trace = store.findTrace(job.traceId())
                .orElseThrow(() -> new IllegalStateException("job " + job.id() + " names missing trace " + job.traceId()));
        ModelVersionRow version = store.findVersion(trace.family(), trace.version()).orElseThrow();
        ModelDocument model = mapper.readValue(version.documentJson(), ModelDocument.class);
        ParsedTrace parsed = codec.decode(trace.payload());
        DocumentSolver.Outcome outcome;
        try {
            outcome = solveTimer.recordCallable(() -> DocumentSolver.solve(model, parsed, true, limits));
        } catch (ModelException | InputException e) {
            // Deterministic: the same trace fails the same way on every attempt, so do not retry.
            return new JobOutcome.Failed("the trace does not fit its model version: " + e.getMessage());
        }
        if (outcome instanceof DocumentSolver.Outcome.NotObservable u) {
            return new JobOutcome.Failed(u.message());
        }
        DocumentSolver.Outcome.Solved solved = (DocumentSolver.Outcome.Solved) outcome;
        return new JobOutcome.Succeeded(toRow(trace, solved), null);
    }

    private NewEstimate toRow(TraceRow trace, DocumentSolver.Outcome.Solved solved) throws Exception {
        Estimate e = solved.estimate();
        Double chi2PerDof = e.degreesOfFreedom() > 0 ? EstimateDocument.num(e.chiSquare() / e.degreesOfFreedom()) : null;
        return new NewEstimate(trace.id(), trace.unitId(), trace.family(), trace.version(), trace.windowStart(),
                trace.windowEnd(), chi2PerDof, EstimateDocument.flagNames(e), mapper.writeValueAsString(solved.document()),
                e.series() == null ? null : SeriesCodec.encode(e.series()));
    }
}
