package backstate.regression;

import java.util.List;

/**
 * A chunk job's parameters (jobs.params_json): the run it belongs to, where its traces sit in
 * the run, what the run compares, and the IDs of its traces. A chunk has no row in
 * {@code regressions}: the run's API shows the run's job, never its chunks.
 *
 * @param chunkOf the run's job ID
 * @param from    the index in the run of the chunk's first trace
 */
record ChunkParams(String chunkOf, int index, int from, String family, int baseline, int candidate,
                   Tolerances tolerances, List<String> traceIds) {

    /** The field that tells a chunk's parameters from a run's. */
    static final String MARKER = "chunkOf";

    ChunkParams {
        traceIds = List.copyOf(traceIds);
    }

    static ChunkParams of(String runId, RegressionParams run, ChunkPlan.Chunk chunk) {
        return new ChunkParams(runId, chunk.index(), chunk.from(), run.family(), run.baseline(), run.candidate(),
                run.tolerances(), run.traceIds().subList(chunk.from(), chunk.to()));
    }
}
