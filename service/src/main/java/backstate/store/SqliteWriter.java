package backstate.store;

import java.sql.Connection;
import java.sql.SQLException;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.List;
import java.util.Queue;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.locks.Condition;
import java.util.concurrent.locks.ReentrantLock;
import java.util.function.BooleanSupplier;

/**
 * The one write connection, owned by one thread ({@code backstate-writer}) with its prepared
 * statements ({@link Statements}); callers hand it work and wait for the outcome.
 *
 * <p>Group commit as in Gray and Reuter, <i>Transaction Processing: Concepts and Techniques</i>
 * (1993), §9.4 (cited from memory): the log force is the cost of a commit, so the writes that
 * arrive while one commit is under way share the next. The thread takes everything waiting (at
 * most {@link #MAX_BATCH}), runs it in one {@code BEGIN IMMEDIATE … COMMIT}, each request's work
 * inside its own {@code SAVEPOINT}, and answers the callers only after {@code COMMIT} returned.
 *
 * <ul>
 *   <li>Durability: with {@code synchronous=FULL} the COMMIT fsyncs the WAL, and no caller learns
 *       of success before that, so an acknowledged write survives power loss.</li>
 *   <li>Isolation between callers: work that throws is rolled back to its savepoint and its
 *       caller gets its own exception; the rest of the batch goes on. The outcome is the same as
 *       running the batch's work one transaction at a time, in batch order, minus the failed
 *       ones.</li>
 *   <li>If {@code BEGIN} or {@code COMMIT} fails, or SQLite ends the transaction by itself (it
 *       may after {@code SQLITE_FULL}, {@code SQLITE_IOERR}, {@code SQLITE_BUSY} or
 *       {@code SQLITE_NOMEM}; https://sqlite.org/lang_transaction.html), the whole batch is
 *       rolled back and every caller gets that failure (work that had failed on its own keeps
 *       its own exception); no caller has been told anything else.</li>
 *   <li>Priority: two lanes, each first in, first out. The job queue's consumers
 *       ({@link #writeForWorker}) go ahead of clients in every batch, so a burst of posts cannot
 *       starve the workers that drain the queue.</li>
 *   <li>Shutdown: {@link #close} refuses new work, lets the thread drain everything already
 *       handed over, then closes the statements and the connection.</li>
 * </ul>
 *
 * <p>Every batch is timed in {@link SqliteMeters}: each request's wait for it, its statements, its
 * COMMIT and its size, so /metrics shows which of them a slow write spent its time in.
 *
 * <p>Callers wait without being interruptible: once handed over, work is done, and its caller
 * hears how it went (an interrupt is kept for the caller to see afterwards).
 */
final class SqliteWriter implements AutoCloseable {

    /**
     * More than the 32 clients plus workers of the load target, so under that load every waiting
     * write joins the next batch; bounded so that a flood cannot make one transaction, and the
     * wait of its first caller, grow without limit.
     */
    static final int MAX_BATCH = 64;

    private final Connection connection;
    private final Statements statements;
    private final SqliteMeters meters;
    private final Thread thread;
    private final ReentrantLock lock = new ReentrantLock();
    private final Condition arrived = lock.newCondition();
    private final Queue<Request<?>> workers = new ArrayDeque<>();
    private final Queue<Request<?>> clients = new ArrayDeque<>();
    private boolean closed;

    SqliteWriter(Connection connection) {
        this(connection, SqliteMeters.unpublished());
    }

    SqliteWriter(Connection connection, SqliteMeters meters) {
        this.connection = connection;
        this.statements = new Statements(connection);
        this.meters = meters;
        this.thread = new Thread(this::commitUntilClosed, "backstate-writer");
        thread.setDaemon(true);
        thread.start();
    }

    /** Runs work in a write transaction, committed before this returns, or throws its failure. */
    <T> T write(SqlWork<T> work) {
        return submit(clients, work).outcome();
    }

    /** As {@link #write}, ahead of every client write waiting for the same batch. */
    <T> T writeForWorker(SqlWork<T> work) {
        return submit(workers, work).outcome();
    }

    /** How many writes are waiting for a batch (not counting those being committed); for tests. */
    int waiting() {
        lock.lock();
        try {
            return workers.size() + clients.size();
        } finally {
            lock.unlock();
        }
    }

    /** Refuses new work, waits until the writes already handed over are done, then closes the connection. */
    @Override
    public void close() {
        lock.lock();
        try {
            closed = true;
            arrived.signalAll();
        } finally {
            lock.unlock();
        }
        if (Thread.currentThread() == thread) {
            return; // closed from inside a write: the thread ends after this batch
        }
        awaitUninterruptibly(() -> !thread.isAlive(), thread::join);
    }

    /** A blocking wait that an interrupt may cut short. */
    @FunctionalInterface
    private interface Wait {
        void await() throws InterruptedException;
    }

    /** Waits until {@code done}, through interrupts, which are kept for the caller to see afterwards. */
    private static void awaitUninterruptibly(BooleanSupplier done, Wait wait) {
        boolean interrupted = false;
        while (!done.getAsBoolean()) {
            try {
                wait.await();
            } catch (InterruptedException e) {
                interrupted = true;
            }
        }
        if (interrupted) {
            Thread.currentThread().interrupt();
        }
    }

    /** One caller's work, and where its outcome waits until its batch has committed. */
    private static final class Request<T> {
        final SqlWork<T> work;
        /** When the caller handed the work over (System.nanoTime), for the wait it spent queued. */
        final long handedOverNanos = System.nanoTime();
        private final CountDownLatch answered = new CountDownLatch(1);
        private T result;
        private Throwable failure;

        Request(SqlWork<T> work) {
            this.work = work;
        }

        /** Runs the work on the writer thread, keeping its result or its failure. */
        void run(Statements s) throws SQLException {
            result = work.run(s);
        }

        boolean failed() {
            return failure != null;
        }

        void fail(Throwable t) {
            failure = t instanceof SQLException e ? SqliteErrors.translate(e) : t;
        }

        /** Fails the request with its batch, unless its own work failed first. */
        void failWithBatch(Throwable batchFailure) {
            if (failure == null) {
                fail(batchFailure);
            }
            answered.countDown();
        }

        void answer() {
            answered.countDown();
        }

        /** Waits, through interrupts (kept for the caller), for the answer; returns or throws it. */
        T outcome() {
            awaitUninterruptibly(() -> answered.getCount() == 0, answered::await);
            if (failure instanceof RuntimeException e) {
                throw e;
            }
            if (failure != null) {
                throw (Error) failure;
            }
            return result;
        }
    }

    private <T> Request<T> submit(Queue<Request<?>> lane, SqlWork<T> work) {
        if (Thread.currentThread() == thread) {
            throw new IllegalStateException("got a write inside a write, expected one transaction at a time");
        }
        Request<T> r = new Request<>(work);
        lock.lock();
        try {
            if (closed) {
                throw new IllegalStateException("got a call on a closed store, expected an open one");
            }
            lane.add(r);
            arrived.signal();
        } finally {
            lock.unlock();
        }
        return r;
    }

    private void commitUntilClosed() {
        try {
            for (List<Request<?>> batch = nextBatch(); !batch.isEmpty(); batch = nextBatch()) {
                try {
                    commit(batch);
                } catch (RuntimeException | Error e) {
                    batch.forEach(r -> r.failWithBatch(e)); // a bug here must not leave callers waiting
                }
            }
        } finally {
            statements.close();
            try {
                connection.close();
            } catch (SQLException ignored) {
                // Closing is best effort: every batch is already committed or rolled back.
            }
        }
    }

    /** Waits for work; then workers' writes first, then clients', up to the bound. Empty once closed and drained. */
    private List<Request<?>> nextBatch() {
        lock.lock();
        try {
            while (workers.isEmpty() && clients.isEmpty() && !closed) {
                arrived.awaitUninterruptibly();
            }
            List<Request<?>> batch = new ArrayList<>();
            for (Queue<Request<?>> lane : List.of(workers, clients)) {
                while (batch.size() < MAX_BATCH && !lane.isEmpty()) {
                    batch.add(lane.remove());
                }
            }
            return batch;
        } finally {
            lock.unlock();
        }
    }

    private void commit(List<Request<?>> batch) {
        long begin = System.nanoTime();
        batch.forEach(r -> meters.waited(begin - r.handedOverNanos));
        try {
            // BEGIN IMMEDIATE is SQLite's; PostgreSQL's plain BEGIN plus row locks does the same job.
            statements.run("BEGIN IMMEDIATE");
            try {
                for (Request<?> r : batch) {
                    runInSavepoint(r);
                }
                long worked = System.nanoTime();
                statements.run("COMMIT");
                meters.batch(batch.size(), worked - begin, System.nanoTime() - worked);
            } catch (SQLException | RuntimeException | Error e) {
                statements.close(); // sqlite-jdbc finalizes a statement that failed (SQLITE_FULL, IOERR): compile afresh
                rollbackAfter(e);
                throw e;
            }
        } catch (SQLException e) {
            batch.forEach(r -> r.failWithBatch(e));
            return;
        }
        batch.forEach(Request::answer);
    }

    /**
     * Runs one request's work between SAVEPOINT and RELEASE, recording its result or failure.
     * Throws only when the transaction itself is lost, and then the whole batch fails.
     */
    private void runInSavepoint(Request<?> r) throws SQLException {
        statements.run("SAVEPOINT request");
        try {
            r.run(statements);
            statements.run("RELEASE request");
        } catch (SQLException | RuntimeException | Error e) {
            r.fail(e);
            statements.close(); // SQLite may have left a statement mid-step
            rollBackRequest(e);
        }
    }

    private void rollBackRequest(Throwable failure) throws SQLException {
        try {
            statements.execute("ROLLBACK TO request");
            statements.execute("RELEASE request");
        } catch (SQLException lost) {
            // SQLite has rolled the whole transaction back by itself, savepoint and all, so the
            // batch's earlier work is gone too: fail the batch with the cause, if it was SQL.
            if (failure instanceof SQLException cause) {
                cause.addSuppressed(lost);
                throw cause;
            }
            throw lost;
        }
    }

    private void rollbackAfter(Throwable failure) {
        try {
            statements.execute("ROLLBACK");
        } catch (SQLException rollbackFailure) {
            // After SQLite rolled back by itself, ROLLBACK reports that no transaction is
            // active: keep it, but as a footnote.
            failure.addSuppressed(rollbackFailure);
        }
    }
}
