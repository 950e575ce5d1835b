package backstate.regression;

import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.store.RegressionRow;
import backstate.store.RegressionStore;
import java.time.Clock;
import java.time.Instant;
import java.util.Set;

/**
 * Works one chunk job: compares its slice of a run's traces and returns them, fits in full, as
 * its result ({@link ChunkResult}). It writes its progress when it starts (the sign to its run
 * that it has a solving slot) and then at least every {@link Chunking#progressEvery()}; between
 * traces it polls its run's cancel request, and it stops, finishing its job as cancelled, once
 * the run was cancelled or has ended. A chunk taken back by its run finds its job no longer
 * running at its next progress write and stops.
 */
final class ChunkWorker {
    private static final Set<String> RUN_LIVE = Set.of("queued", "running");

    private final RegressionStore regressions;
    private final JobQueue queue;
    private final Clock clock;
    private final RunTools tools;

    ChunkWorker(RunTools tools) {
        this.tools = tools;
        this.regressions = tools.regressions();
        this.queue = tools.queue();
        this.clock = tools.clock();
    }

    JobOutcome work(ClaimedJob job, ChunkParams chunk) throws Exception {
        int total = chunk.traceIds().size();
        if (runEnded(chunk.chunkOf())) {
            return stop(job, chunk, 0);
        }
        ComparedVersions pair = tools.versions().load(chunk.family(), chunk.baseline(), chunk.candidate());
        RegressionReport report = pair.report(chunk.tolerances(), total);
        if (!queue.reportProgress(job.id(), job.attempt(), 0, total)) {
            return RegressionJobHandler.lost(job);
        }
        Instant[] lastWrite = {clock.instant()};
        ComparedVersions.Halt halt = pair.walk(chunk.traceIds(), report, done -> {
            if (done > 0 && done < total && !clock.instant().isBefore(lastWrite[0].plus(tools.chunking().progressEvery()))) {
                if (!queue.reportProgress(job.id(), job.attempt(), done, total)) {
                    return ComparedVersions.Halt.LOST;
                }
                lastWrite[0] = clock.instant();
                return runEnded(chunk.chunkOf()) ? ComparedVersions.Halt.CANCELLED : null;
            }
            return done < total && regressions.regressionCancelRequested(chunk.chunkOf())
                    ? ComparedVersions.Halt.CANCELLED : null;
        });
        if (halt == ComparedVersions.Halt.LOST) {
            return RegressionJobHandler.lost(job);
        }
        if (halt == ComparedVersions.Halt.CANCELLED) {
            return stop(job, chunk, report.tracesDone());
        }
        ChunkResult result = new ChunkResult(chunk.chunkOf(), chunk.index(), report.comparisons());
        return new JobOutcome.Succeeded(null, tools.mapper().writeValueAsString(result));
    }

    /** A cancel was requested for the run, or it is no longer queued or running: nobody will read this chunk. */
    private boolean runEnded(String runId) {
        RegressionRow run = regressions.findRegression(runId).orElse(null);
        return run == null || run.cancelRequestedAtOrNull() != null || !RUN_LIVE.contains(run.state());
    }

    private JobOutcome stop(ClaimedJob job, ChunkParams chunk, int done) {
        regressions.cancelRegressionIfRunning(job.id(), job.attempt(), null, clock.instant());
        // The chunk is cancelled (or was taken from this attempt): the runner drops this outcome.
        return new JobOutcome.Failed("stopped after " + done + " of " + chunk.traceIds().size()
                + " traces: run " + chunk.chunkOf() + " was cancelled or has ended");
    }
}
