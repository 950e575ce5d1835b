package backstate.regression;

import backstate.jobs.ClaimedJob;
import backstate.jobs.JobOutcome;
import backstate.store.JobRow;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;

/**
 * A run of more traces than one chunk, as its own job works it. It queues its chunks (each at
 * most once, by derived ID: {@link ChunkPlan}), so idle workers of every replica claim them like
 * any job, and meanwhile does chunks itself: it takes back a chunk still queued (by cancelling
 * it: nobody else can claim it then), one that failed or was cancelled, or one claimed but
 * stalled (a worker waiting for a solving slot this run may hold), so a single replica finishes
 * as fast as the run in one piece and never waits on a chunk that cannot start. Its progress
 * counts the traces of finished chunks and of chunks under way; on a cancel request it stops its
 * chunks, none left queued or running, and keeps the traces done so far. The finished chunks'
 * comparisons, added in run order, give exactly the report of the run in one piece.
 */
final class ChunkedRun {

    /** A chunk as the run follows it. */
    private static final class Tracked {
        final ChunkPlan.Chunk chunk;
        final List<String> traceIds;
        /** Its traces compared (by its job or here), once known. */
        ChunkResult result;
        /** Traces compared here before a cancel stopped the chunk. */
        List<TraceComparison> partial = List.of();
        /** Its job as last read, null once this run took it. */
        JobRow row;
        /** State, attempt and progress last seen, and since when: unchanged for stallAfter is stalled. */
        String shape = "";
        Instant shapeSince;

        Tracked(ChunkPlan.Chunk chunk, List<String> traceIds) {
            this.chunk = chunk;
            this.traceIds = traceIds;
        }
    }

    private final RunTools tools;
    private final ClaimedJob job;
    private final RegressionParams params;
    private final ComparedVersions versions;
    private final ProgressWriter progress;
    private final List<Tracked> chunks = new ArrayList<>();

    ChunkedRun(RunTools tools, ClaimedJob job, RegressionParams params, ComparedVersions versions) {
        this.tools = tools;
        this.job = job;
        this.params = params;
        this.versions = versions;
        this.progress = new ProgressWriter(tools.queue(), job, params.traceIds().size());
        ChunkPlan plan = ChunkPlan.of(job.id(), params.traceIds().size(), tools.chunking().tracesPerChunk());
        for (ChunkPlan.Chunk chunk : plan.chunks()) {
            chunks.add(new Tracked(chunk, params.traceIds().subList(chunk.from(), chunk.to())));
        }
    }

    JobOutcome run() throws Exception {
        if (!progress.report(0)) {
            return RegressionJobHandler.lost(job);
        }
        queueChunks();
        while (true) {
            if (tools.regressions().regressionCancelRequested(job.id())) {
                return cancel();
            }
            List<Tracked> open = refresh();
            if (open.isEmpty()) {
                // The last chunks may finish between two reports: the run's progress ends at its total.
                if (!progress.last(done())) {
                    return RegressionJobHandler.lost(job);
                }
                return new JobOutcome.Succeeded(null, tools.mapper().writeValueAsString(merged().build(true)));
            }
            if (!progress.report(done())) {
                return RegressionJobHandler.lost(job);
            }
            Tracked taken = takeOne(open);
            if (taken == null) {
                Thread.sleep(tools.chunking().poll().toMillis());
                continue;
            }
            ComparedVersions.Halt halt = compareHere(taken);
            if (halt == ComparedVersions.Halt.CANCELLED) {
                return cancel();
            }
            if (halt == ComparedVersions.Halt.LOST) {
                return RegressionJobHandler.lost(job);
            }
        }
    }

    /** A chunk queued by an earlier attempt of this run is left as it is. */
    private void queueChunks() throws Exception {
        for (Tracked t : chunks) {
            String chunkParams = tools.mapper().writeValueAsString(ChunkParams.of(job.id(), params, t.chunk));
            tools.regressions().queueChunkOnce(t.chunk.id(), chunkParams, tools.clock().instant());
        }
    }

    /** Reads every chunk not finished yet, keeping the results of those that have; returns the rest. */
    private List<Tracked> refresh() throws Exception {
        Instant now = tools.clock().instant();
        List<Tracked> open = new ArrayList<>();
        for (Tracked t : chunks) {
            if (t.result == null) {
                read(t, now);
            }
            if (t.result == null) {
                open.add(t);
            }
        }
        return open;
    }

    private void read(Tracked t, Instant now) throws Exception {
        JobRow row = tools.jobsOrNull().findJob(t.chunk.id()).orElse(null);
        t.row = row;
        if (row == null) {
            return;
        }
        if ("succeeded".equals(row.state()) && row.resultJson() != null) {
            ChunkResult result = tools.mapper().readValue(row.resultJson(), ChunkResult.class);
            if (result.covers(t.traceIds)) {
                t.result = result;
                return;
            }
        }
        String shape = row.state() + " " + row.attempt() + " " + row.progressDone() + "/" + row.progressTotal();
        if (!shape.equals(t.shape)) {
            t.shape = shape;
            t.shapeSince = now;
        }
    }

    /** Traces compared: all of each finished chunk's, and as far as each running chunk has written. */
    private int done() {
        int done = 0;
        for (Tracked t : chunks) {
            if (t.result != null) {
                done += t.chunk.size();
            } else if (t.row != null && "running".equals(t.row.state())) {
                done += Math.min(t.row.progressDone(), t.chunk.size());
            }
        }
        return done;
    }

    /** Traces compared by the other chunks, their rows read again ({@code here}'s is not: it counts nothing in {@link #done}). */
    private int doneElsewhere(Tracked here, Instant now) throws Exception {
        for (Tracked t : chunks) {
            if (t != here && t.result == null) {
                read(t, now);
            }
        }
        return done();
    }

    /** The first open chunk this run may do itself, now taken from the queue; null when every one is under way. */
    private Tracked takeOne(List<Tracked> open) {
        Instant now = tools.clock().instant();
        for (Tracked t : open) {
            if (take(t, now)) {
                t.row = null;
                return t;
            }
        }
        return null;
    }

    private boolean take(Tracked t, Instant now) {
        if (t.row == null) {
            return true;
        }
        return switch (t.row.state()) {
            case "queued" -> tools.jobsOrNull().cancelIfQueued(t.chunk.id(), now);
            case "running" -> !now.isBefore(t.shapeSince.plus(tools.chunking().stallAfter()))
                    && tools.regressions().cancelRegressionIfRunning(t.chunk.id(), t.row.attempt(), null, now);
            default -> true; // failed, cancelled, or a result that is not this chunk's: do it here
        };
    }

    /**
     * Compares a taken chunk's traces here, polling the run's cancel request between traces; the run's
     * progress counts the other chunks too, read again every poll interval, so it rises while they
     * finish elsewhere instead of jumping when this chunk is done.
     */
    private ComparedVersions.Halt compareHere(Tracked t) throws Exception {
        int[] elsewhere = {done()};
        Instant[] read = {tools.clock().instant()};
        int total = t.traceIds.size();
        RegressionReport part = versions.report(params.tolerances(), total);
        ComparedVersions.Halt halt = versions.walk(t.traceIds, part, k -> {
            Instant now = tools.clock().instant();
            if (!now.isBefore(read[0].plus(tools.chunking().poll()))) {
                elsewhere[0] = doneElsewhere(t, now);
                read[0] = now;
            }
            if (!progress.report(elsewhere[0] + k)) {
                return ComparedVersions.Halt.LOST;
            }
            return k < total && tools.regressions().regressionCancelRequested(job.id())
                    ? ComparedVersions.Halt.CANCELLED : null;
        });
        if (halt == null) {
            t.result = new ChunkResult(job.id(), t.chunk.index(), part.comparisons());
        } else {
            t.partial = part.comparisons();
        }
        return halt;
    }

    /**
     * Stops every chunk (queued ones cancelled, running ones finished as cancelled, and each of
     * their workers stops at its next trace), keeps the results of chunks that finished first,
     * and finishes the run as cancelled with the traces done so far.
     */
    private JobOutcome cancel() throws Exception {
        stopChunks();
        RegressionReport partial = merged();
        progress.last(partial.tracesDone()); // as far as the result goes; a lost attempt's refusal changes nothing here
        tools.regressions().cancelRegressionIfRunning(job.id(), job.attempt(),
                tools.mapper().writeValueAsString(partial.build(false)), tools.clock().instant());
        // The run is cancelled (or was taken from this attempt): the runner drops this outcome.
        return new JobOutcome.Failed("cancelled on request after " + partial.tracesDone() + " of "
                + params.traceIds().size() + " traces");
    }

    /** Repeats until no chunk is queued or running: one may be claimed, or finish, between a read and a write. */
    private void stopChunks() throws Exception {
        boolean active = true;
        while (active) {
            active = false;
            Instant now = tools.clock().instant();
            for (Tracked t : chunks) {
                if (t.result == null) {
                    read(t, now);
                }
                if (t.result == null && t.row != null) {
                    active |= !stop(t.row, now);
                }
            }
        }
    }

    private boolean stop(JobRow row, Instant now) {
        return switch (row.state()) {
            case "queued" -> tools.jobsOrNull().cancelIfQueued(row.id(), now);
            case "running" -> tools.regressions().cancelRegressionIfRunning(row.id(), row.attempt(), null, now);
            default -> true;
        };
    }

    /** The run's report from its chunks' comparisons (and any partial chunk's), in run order. */
    private RegressionReport merged() {
        RegressionReport report = versions.report(params.tolerances(), params.traceIds().size());
        for (Tracked t : chunks) {
            (t.result != null ? t.result.traces() : t.partial).forEach(report::add);
        }
        return report;
    }
}
