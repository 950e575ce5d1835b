package backstate.regression;

import backstate.jobs.ClaimedJob;
import backstate.jobs.JobQueue;

/**
 * A run's progress as its job's holder writes it: about {@link #WRITES} times per run (each write
 * is a committed transaction, on SQLite on the one write connection that trace ingest also
 * needs), never backwards, and always when done reaches the total.
 */
final class ProgressWriter {
    /** Writes per run at most, besides the first (0) and the last (total). */
    static final int WRITES = 200;

    private final JobQueue queue;
    private final ClaimedJob job;
    private final int total;
    private final int step;
    private int written = -1;

    ProgressWriter(JobQueue queue, ClaimedJob job, int total) {
        this.queue = queue;
        this.job = job;
        this.total = total;
        this.step = Math.max(1, (total + WRITES - 1) / WRITES);
    }

    /** Writes {@code done} when it is due; false when the job is no longer running at the attempt held. */
    boolean report(int done) {
        return write(done, written < 0 || done == total ? done > written : done >= written + step);
    }

    /** Writes {@code done} unless it is already written: the run's last word, done or cancelled. */
    boolean last(int done) {
        return write(done, done > written);
    }

    private boolean write(int done, boolean due) {
        if (!due) {
            return true;
        }
        if (!queue.reportProgress(job.id(), job.attempt(), done, total)) {
            return false;
        }
        written = done;
        return true;
    }
}
