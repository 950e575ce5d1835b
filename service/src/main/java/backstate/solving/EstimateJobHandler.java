package backstate.solving;

import backstate.estimation.Estimate;
import backstate.estimation.ModelException;
import backstate.formats.DocumentSolver;
import backstate.formats.EstimateDocument;
import backstate.formats.FailureDetails;
import backstate.formats.InputException;
import backstate.formats.RecordingTime;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobHandler;
import backstate.jobs.JobOutcome;
import backstate.jobs.NewEstimate;
import backstate.store.CorruptDataException;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs an 'estimate' job: loads the stored trace and its model version, solves, and returns the
 * estimate row. The fitted and residual series are not kept: the series route rebuilds them from
 * the same stored trace ({@link StoredTraceSolver}), which keeps ~16 bytes per sample and output
 * out of every job's write. Registered for the kind 'estimate' in
 * {@link backstate.jobs.HandlersByKind} by App.
 */
public final class EstimateJobHandler implements JobHandler {
    private static final Logger LOG = LoggerFactory.getLogger(EstimateJobHandler.class);
    private final StoredTraceSolver solver;
    private final ObjectMapper mapper;
    private final Timer solveTimer;

    public EstimateJobHandler(StoredTraceSolver solver, ObjectMapper mapper, MeterRegistry registry) {
        this.solver = solver;
        this.mapper = mapper;
        this.solveTimer = Timer.builder("backstate.solve.duration").description("time to solve one trace").register(registry);
    }

    @Override
    public JobOutcome handle(ClaimedJob job) throws Exception {
        if (!"estimate".equals(job.kind())) {
            return new JobOutcome.Failed("no handler for job kind " + job.kind());
        }
        StoredTraceSolver.Loaded loaded;
        try {
            loaded = solver.load(job.traceId());
        } catch (CorruptDataException e) {
            // Reading again reads the same damaged bytes: fail now, saying what is damaged.
            LOG.error("job {}: {}", job.id(), e.getMessage());
            return new JobOutcome.Failed(e.item() + " is damaged in storage and cannot be solved");
        }
        DocumentSolver.Outcome outcome;
        try {
            outcome = solveTimer.recordCallable(() -> solver.solve(loaded, false));
        } catch (ModelException e) {
            // Deterministic: the same trace fails the same way on every attempt, so do not retry.
            return doesNotFit(e.withTimeWords(RecordingTime::words).getMessage());
        } catch (InputException e) {
            return doesNotFit(e.getMessage());
        }
        if (outcome instanceof DocumentSolver.Outcome.NotObservable u) {
            return new JobOutcome.Failed(u.message(), mapper.writeValueAsString(new FailureDetails(u.directions())));
        }
        DocumentSolver.Outcome.Solved solved = (DocumentSolver.Outcome.Solved) outcome;
        return new JobOutcome.Succeeded(toRow(loaded, solved), null);
    }

    private NewEstimate toRow(StoredTraceSolver.Loaded trace, DocumentSolver.Outcome.Solved solved) throws Exception {
        Estimate e = solved.estimate();
        Double chi2PerDof = e.degreesOfFreedom() > 0 ? EstimateDocument.num(e.chiSquare() / e.degreesOfFreedom()) : null;
        var ref = trace.ref();
        return NewEstimate.of(ref.id(), ref.unitId(), ref.family(), ref.version(), trace.windowStart(),
                trace.windowEnd(), chi2PerDof, EstimateDocument.flagNames(e), solved.document(),
                mapper.writeValueAsString(solved.document()));
    }

    private static JobOutcome doesNotFit(String reason) {
        return new JobOutcome.Failed("the trace does not fit its model version: " + reason);
    }
}
