package backstate.store;

import backstate.jobs.JobQueue;

/**
 * One open database and its stores, one per aggregate; App hands each to the code that needs it.
 * Two backends implement it: {@link SqliteDatabase} (one file, one process) and
 * {@link PostgresDatabase} (one server, any number of replicas). No SQL or JDBC type appears here.
 */
public interface Database extends AutoCloseable {

    ModelCatalogue models();

    TraceIntakeStore traces();

    /** The workers' side of the jobs: claim, complete, fail, retry, rescue. */
    JobQueue queue();

    /** The API's side of the same jobs. */
    JobStore jobs();

    EstimateStore estimates();

    FleetStore fleet();

    ApiKeyStore keys();

    RegressionStore regressions();

    /**
     * True when other processes may work on the same jobs at the same time (replicas): then a
     * process claims only what its solving slots can start, and never rescues another's running
     * jobs but by their lease. False for a store only this process opens.
     */
    boolean sharedByReplicas();

    /**
     * Registers a wake-up run when another process queues a job (this process's own enqueues wake
     * its workers directly). A store only this process opens never calls it.
     */
    default void onJobsQueued(Runnable wakeUp) {
        // Nothing to listen for: every enqueue is this process's own.
    }

    /**
     * What the start's integrity check, or any statement since, found wrong with the database, on
     * one line; null while nothing was. SQLite checks its file at open and remembers a damaged
     * page met later; PostgreSQL checks its own pages as it reads them, so a start there runs
     * nothing beyond the trivial query of {@link #isReachable()}.
     */
    default String damageOrNull() {
        return null;
    }

    /** True when a trivial query succeeds; never throws. */
    boolean isReachable();

    /** Finishes the writes already handed over, then closes every connection. */
    @Override
    void close();
}
