package backstate.regression;

import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobHandler;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.solving.StoredTraceSolver;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.RegressionStore;
import backstate.store.TraceRef;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.time.Clock;
import java.util.List;

/**
 * Runs a 'regression' job: re-solves each selected trace under the baseline and the candidate
 * version, reporting progress (traces done / total) as it goes, and returns the comparison as the
 * job's result. Between traces it polls for a cancel request; on one it finishes the job as
 * cancelled with the partial result, so the runner's later attempt to complete it finds the job
 * no longer running and drops its outcome. Registered for the kind 'regression' in
 * {@link backstate.jobs.HandlersByKind} by App.
 */
public final class RegressionJobHandler implements JobHandler {
    /**
     * Progress is written at most this many times per run (each write is a committed, fsynced
     * transaction on the one write connection that trace ingest also needs), and always at the end.
     */
    static final int PROGRESS_WRITES = 200;

    private final RegressionStore regressions;
    private final ModelCatalogue models;
    private final JobQueue queue;
    private final ObjectMapper mapper;
    private final StoredTraceSolver stored;
    private final Limits limits;
    private final Clock clock;

    public RegressionJobHandler(RegressionStore regressions, ModelCatalogue models, JobQueue queue,
                                StoredTraceSolver stored, ObjectMapper mapper, Limits limits, Clock clock) {
        this.regressions = regressions;
        this.models = models;
        this.queue = queue;
        this.stored = stored;
        this.mapper = mapper;
        this.limits = limits;
        this.clock = clock;
    }

    @Override
    public JobOutcome handle(ClaimedJob job) throws Exception {
        if (!"regression".equals(job.kind())) {
            return new JobOutcome.Failed("no handler for job kind " + job.kind());
        }
        RegressionParams params = mapper.readValue(job.paramsJson(), RegressionParams.class);
        ModelVersionRow baselineRow = version(params.family(), params.baseline());
        ModelVersionRow candidateRow = version(params.family(), params.candidate());
        ModelDocument baseline = stored.model(baselineRow).document();
        ModelDocument candidate = stored.model(candidateRow).document();
        List<String> traceIds = params.traceIds();
        int total = traceIds.size();
        RegressionReport report = new RegressionReport(params.family(), info(baselineRow, baseline),
                info(candidateRow, candidate), params.tolerances(), total);
        VersionPair versions = new VersionPair(baseline, candidate, limits);
        int step = Math.max(1, (total + PROGRESS_WRITES - 1) / PROGRESS_WRITES);
        if (!queue.reportProgress(job.id(), job.attempt(), 0, total)) {
            return new JobOutcome.Failed("job " + job.id() + " was no longer running at attempt " + job.attempt());
        }
        for (int done = 0; done < total; done++) {
            if (regressions.regressionCancelRequested(job.id())) {
                return cancel(job, report, done, total);
            }
            String traceId = traceIds.get(done);
            StoredTraceSolver.Loaded loaded = stored.load(traceId);
            TraceRef trace = loaded.ref();
            versions.compare(report, trace.unitId(), trace.id(), trace.receivedAt().toString(), trace.version(),
                    loaded.model().document(), loaded.parsed());
            int finished = done + 1;
            if ((finished % step == 0 || finished == total)
                    && !queue.reportProgress(job.id(), job.attempt(), finished, total)) {
                return new JobOutcome.Failed("job " + job.id() + " was no longer running at attempt " + job.attempt());
            }
        }
        return new JobOutcome.Succeeded(null, mapper.writeValueAsString(report.build(true)));
    }

    private JobOutcome cancel(ClaimedJob job, RegressionReport report, int done, int total) throws Exception {
        String partial = mapper.writeValueAsString(report.build(false));
        regressions.cancelRegressionIfRunning(job.id(), job.attempt(), partial, clock.instant());
        // The job is cancelled (or was taken from this attempt): the runner will find it no longer
        // running and drop this outcome.
        return new JobOutcome.Failed("cancelled on request after " + done + " of " + total + " traces");
    }

    private ModelVersionRow version(String family, int version) {
        return models.findVersion(family, version).orElseThrow(() ->
                new IllegalStateException("model version " + family + "/" + version + " is gone"));
    }

    private static RegressionResult.VersionInfo info(ModelVersionRow row, ModelDocument doc) {
        return new RegressionResult.VersionInfo(row.version(), row.status(),
                doc.states().stream().map(q -> q.name()).toList(), doc.outputs().stream().map(q -> q.name()).toList());
    }
}
