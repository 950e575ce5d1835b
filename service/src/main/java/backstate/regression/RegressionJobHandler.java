package backstate.regression;

import backstate.formats.Limits;
import backstate.jobs.ClaimedJob;
import backstate.jobs.JobHandler;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.solving.StoredTraceSolver;
import backstate.store.JobStore;
import backstate.store.ModelCatalogue;
import backstate.store.RegressionStore;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.time.Clock;

/**
 * Runs a 'regression' job: re-solves each selected trace under the baseline and the candidate
 * version, reporting progress (traces done / total) as it goes, and returns the comparison as the
 * job's result. Between traces it polls for a cancel request; on one it finishes the job as
 * cancelled with the partial result, so the runner's later attempt to complete it finds the job
 * no longer running and drops its outcome. Registered for the kind 'regression' in
 * {@link backstate.jobs.HandlersByKind} by App.
 *
 * <p>A run of more traces than {@link Chunking#tracesPerChunk()} is split into chunk jobs, also of
 * kind 'regression', that workers of every replica claim ({@link ChunkedRun}); this handler works
 * those chunks too ({@link ChunkWorker}). The result is the same, field for field, as the run's
 * in one piece.
 */
public final class RegressionJobHandler implements JobHandler {
    private final RunTools tools;
    private final ChunkWorker chunks;

    /**
     * A handler that never splits a run (it has no read side of the jobs to follow chunks by),
     * though it works chunk jobs another handler queued.
     */
    public RegressionJobHandler(RegressionStore regressions, ModelCatalogue models, JobQueue queue,
                                StoredTraceSolver stored, ObjectMapper mapper, Limits limits, Clock clock) {
        this(regressions, null, models, queue, stored, mapper, limits, clock, Chunking.NEVER);
    }

    /** A handler that splits runs of more than {@code chunking.tracesPerChunk()} traces. */
    public RegressionJobHandler(RegressionStore regressions, JobStore jobs, ModelCatalogue models, JobQueue queue,
                                StoredTraceSolver stored, ObjectMapper mapper, Limits limits, Clock clock,
                                Chunking chunking) {
        this.tools = new RunTools(regressions, jobs, queue, mapper, clock, chunking,
                (family, baseline, candidate) -> ComparedVersions.load(models, stored, limits, family, baseline,
                        candidate));
        this.chunks = new ChunkWorker(tools);
    }

    @Override
    public JobOutcome handle(ClaimedJob job) throws Exception {
        if (!"regression".equals(job.kind())) {
            return new JobOutcome.Failed("no handler for job kind " + job.kind());
        }
        JsonNode json = tools.mapper().readTree(job.paramsJson());
        if (json.has(ChunkParams.MARKER)) {
            return chunks.work(job, tools.mapper().treeToValue(json, ChunkParams.class));
        }
        RegressionParams params = tools.mapper().treeToValue(json, RegressionParams.class);
        ComparedVersions versions = tools.versions().load(params.family(), params.baseline(), params.candidate());
        if (tools.splits(params.traceIds().size())) {
            return new ChunkedRun(tools, job, params, versions).run();
        }
        return inOnePiece(job, params, versions);
    }

    private JobOutcome inOnePiece(ClaimedJob job, RegressionParams params, ComparedVersions versions)
            throws Exception {
        int total = params.traceIds().size();
        RegressionReport report = versions.report(params.tolerances(), total);
        ProgressWriter progress = new ProgressWriter(tools.queue(), job, total);
        ComparedVersions.Halt halt = versions.walk(params.traceIds(), report, done -> {
            if (!progress.report(done)) {
                return ComparedVersions.Halt.LOST;
            }
            return done < total && tools.regressions().regressionCancelRequested(job.id())
                    ? ComparedVersions.Halt.CANCELLED : null;
        });
        if (halt == ComparedVersions.Halt.LOST) {
            return lost(job);
        }
        if (halt == ComparedVersions.Halt.CANCELLED) {
            return cancel(job, report, total);
        }
        return new JobOutcome.Succeeded(null, tools.mapper().writeValueAsString(report.build(true)));
    }

    private JobOutcome cancel(ClaimedJob job, RegressionReport report, int total) throws Exception {
        String partial = tools.mapper().writeValueAsString(report.build(false));
        tools.regressions().cancelRegressionIfRunning(job.id(), job.attempt(), partial, tools.clock().instant());
        // The job is cancelled (or was taken from this attempt): the runner will find it no longer
        // running and drop this outcome.
        return new JobOutcome.Failed("cancelled on request after " + report.tracesDone() + " of " + total + " traces");
    }

    static JobOutcome lost(ClaimedJob job) {
        return new JobOutcome.Failed("job " + job.id() + " was no longer running at attempt " + job.attempt());
    }
}
