package backstate.regression;

import java.util.List;

/**
 * A chunk job's result (jobs.result_json): every trace it compared, in its run's order, with both
 * fits in full, so the run rebuilds from its chunks the report it would have made itself.
 * Numbers that are not finite are written as the strings "NaN", "Infinity" and "-Infinity".
 */
record ChunkResult(String chunkOf, int index, List<TraceComparison> traces) {

    ChunkResult {
        traces = List.copyOf(traces);
    }

    /** True when it holds exactly these traces, in this order. */
    boolean covers(List<String> traceIds) {
        return traces.stream().map(TraceComparison::traceId).toList().equals(traceIds);
    }
}
