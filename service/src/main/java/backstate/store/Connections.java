package backstate.store;

/**
 * How the aggregate classes ({@link SqlModels}, {@link SqlJobs}, ...) reach a database: reads,
 * consistent multi-statement reads, and write transactions, each handed a connection only as its
 * {@link Statements}. {@link SqliteConnections} serialises writes on one writer thread;
 * {@link PostgresConnections} runs each in its own pooled transaction. Both translate
 * {@link java.sql.SQLException}s into {@link StoreUnavailableException} or {@link StoreException}.
 */
interface Connections extends AutoCloseable {

    /** The SQL fragments that differ between the two engines. */
    Dialect dialect();

    /** Runs read-only work outside any explicit transaction. */
    <T> T read(SqlWork<T> work);

    /** Runs read-only work in one snapshot, so figures read by several statements agree. */
    <T> T readInOneSnapshot(SqlWork<T> work);

    /** Runs work in one write transaction; returns once it has committed. */
    <T> T write(SqlWork<T> work);

    /** As {@link #write}, for the job queue's consumers, which must not starve behind client writes. */
    <T> T writeForWorker(SqlWork<T> work);

    @Override
    void close();
}
