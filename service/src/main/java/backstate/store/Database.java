package backstate.store;

import backstate.jobs.JobQueue;

/**
 * One open database and its stores, one per aggregate; App hands each to the code that needs it.
 * A second backend (PostgreSQL) implements this and the aggregate interfaces, and nothing else
 * changes: no SQL or JDBC type appears in them.
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

    /** True when a trivial query succeeds; never throws. */
    boolean isReachable();

    /** Finishes the writes already handed over, then closes every connection. */
    @Override
    void close();
}
