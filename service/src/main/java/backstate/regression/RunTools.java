package backstate.regression;

import backstate.jobs.JobQueue;
import backstate.store.JobStore;
import backstate.store.RegressionStore;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.time.Clock;

/**
 * What a regression job's handler works with, shared by a run in one piece, a run split into
 * chunks ({@link ChunkedRun}) and a chunk ({@link ChunkWorker}).
 *
 * @param jobsOrNull the jobs' read side, through which a run follows its chunks; null never splits a run
 */
record RunTools(RegressionStore regressions, JobStore jobsOrNull, JobQueue queue, ObjectMapper mapper, Clock clock,
                Chunking chunking, ComparedVersions.Loader versions) {

    /** True when a run of this many traces is split into chunks. */
    boolean splits(int traces) {
        return jobsOrNull != null && traces > chunking.tracesPerChunk();
    }
}
