package backstate.store;

import java.sql.Connection;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.List;
import java.util.Queue;
import java.util.concurrent.locks.Condition;
import java.util.concurrent.locks.ReentrantLock;

/**
 * The one write connection, and group commit on it: the writes waiting at any moment share one
 * {@code COMMIT} and its fsync.
 *
 * <p>Group commit as in Gray and Reuter, <i>Transaction Processing: Concepts and Techniques</i>
 * (1993), §9.4 (cited from memory): the log force is the cost of a commit, so the commits that
 * arrive while one force is under way wait and share the next. Here every write joins a queue,
 * and one caller at a time leads: it takes everything waiting (at most {@link #MAX_BATCH}), runs
 * it in one {@code BEGIN IMMEDIATE … COMMIT}, each caller's work inside its own
 * {@code SAVEPOINT}, and answers the callers only after {@code COMMIT} returned. A leader whose
 * own write is answered hands the lead to the first caller still waiting, or gives it up when
 * none is; so a lone write runs on its caller's thread at once, with no timer and no hand-off,
 * and under load each caller leads at most about one batch.
 *
 * <ul>
 *   <li>Durability is unchanged: with {@code synchronous=FULL} the COMMIT fsyncs the WAL, and no
 *       caller learns of success before that, so an acknowledged write survives power loss.</li>
 *   <li>Isolation between callers: work that throws is rolled back to its savepoint and its
 *       caller gets its own exception; the rest of the batch goes on. The outcome is the same as
 *       running the batch's work one transaction at a time, in batch order, minus the failed
 *       ones.</li>
 *   <li>If {@code BEGIN} or {@code COMMIT} fails, or SQLite ends the transaction by itself (it
 *       may after {@code SQLITE_FULL}, {@code SQLITE_IOERR}, {@code SQLITE_BUSY} or
 *       {@code SQLITE_NOMEM}; https://sqlite.org/lang_transaction.html), the whole batch is
 *       rolled back and every caller gets that failure, translated as before (work that had
 *       failed on its own keeps its own exception); no caller has been told anything else.</li>
 *   <li>Two lanes: the job queue's consumers ({@link #writeForWorker}) go ahead of clients in
 *       every batch, so a burst of posts cannot starve the workers that drain the queue. Each
 *       lane is first in, first out.</li>
 * </ul>
 *
 * <p>Only the leader touches the connection (sqlite-jdbc connections are not thread-safe), and
 * the lead passes under this class's lock. Callers wait without being interruptible, as they did
 * on the lock this replaced: once queued, work is done, and its caller hears how it went.
 */
final class SqliteWriter implements AutoCloseable {

    /**
     * More than the 32 clients plus workers of the load target, so under that load every waiting
     * write joins the next batch; bounded so that a flood cannot make one transaction, and the
     * wait of its first caller, grow without limit.
     */
    static final int MAX_BATCH = 64;

    private final Connection connection;
    private final ReentrantLock lock = new ReentrantLock();
    private final Condition idle = lock.newCondition();
    private final Queue<Request> workers = new ArrayDeque<>();
    private final Queue<Request> clients = new ArrayDeque<>();
    /** True while some caller leads, or has been asked to; never false while writes wait. */
    private boolean led;
    private boolean closed;
    private volatile Thread leader;

    SqliteWriter(Connection connection) {
        this.connection = connection;
    }

    /** Runs work in a write transaction, committed before this returns, or throws its failure. */
    <T> T write(SqlWork<T> work) {
        return run(clients, work);
    }

    /** As {@link #write}, ahead of every client write waiting for the same batch. */
    <T> T writeForWorker(SqlWork<T> work) {
        return run(workers, work);
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

    /** Refuses new work, waits for the writes already queued, then closes the connection. */
    @Override
    public void close() {
        lock.lock();
        try {
            closed = true;
            while (led) {
                idle.awaitUninterruptibly();
            }
        } finally {
            lock.unlock();
        }
        try {
            connection.close();
        } catch (SQLException ignored) {
            // Closing is best effort: every batch is already committed or rolled back.
        }
    }

    /** One caller's work, and where its outcome waits until its batch has committed. */
    private static final class Request {
        final SqlWork<?> work;
        Object result;
        Throwable failure;
        private boolean answered;
        private boolean askedToLead;

        Request(SqlWork<?> work) {
            this.work = work;
        }

        synchronized void answer() {
            answered = true;
            notifyAll();
        }

        /** Fails the request with its batch, unless its own work failed first or it was answered. */
        synchronized void failIfUnanswered(Throwable batchFailure) {
            if (!answered) {
                failure = failure != null ? failure : batchFailure;
                answer();
            }
        }

        synchronized boolean isAnswered() {
            return answered;
        }

        synchronized void askToLead() {
            askedToLead = true;
            notifyAll();
        }

        /** Waits, through interrupts (kept for the caller), until answered: false; or asked to lead: true. */
        synchronized boolean awaitAnswerOrLead() {
            boolean interrupted = false;
            while (!answered && !askedToLead) {
                try {
                    wait();
                } catch (InterruptedException e) {
                    interrupted = true;
                }
            }
            if (interrupted) {
                Thread.currentThread().interrupt();
            }
            boolean lead = askedToLead;
            askedToLead = false;
            return lead;
        }
    }

    @SuppressWarnings("unchecked")
    private <T> T run(Queue<Request> lane, SqlWork<T> work) {
        if (Thread.currentThread() == leader) {
            throw new IllegalStateException("got a write inside a write, expected one transaction at a time");
        }
        Request mine = new Request(work);
        boolean lead = enqueue(lane, mine);
        while (lead || mine.awaitAnswerOrLead()) {
            lead(mine);
            lead = false;
        }
        if (mine.failure instanceof RuntimeException e) {
            throw e;
        }
        if (mine.failure != null) {
            throw (Error) mine.failure;
        }
        return (T) mine.result;
    }

    /** Queues the request; returns true if nobody leads, so that its caller must. */
    private boolean enqueue(Queue<Request> lane, Request r) {
        lock.lock();
        try {
            if (closed) {
                throw new IllegalStateException("got a call on a closed store, expected an open one");
            }
            lane.add(r);
            boolean lead = !led;
            led = true;
            return lead;
        } finally {
            lock.unlock();
        }
    }

    /** Commits batches until {@code mine} is answered, then passes the lead on. */
    private void lead(Request mine) {
        leader = Thread.currentThread();
        try {
            while (!mine.isAnswered()) {
                List<Request> batch = nextBatch();
                try {
                    commit(batch);
                } catch (RuntimeException | Error e) {
                    batch.forEach(r -> r.failIfUnanswered(e)); // a bug here must not leave callers waiting
                }
            }
        } finally {
            leader = null;
            passLead();
        }
    }

    /** To the first write waiting, in batch order; or, with none waiting, nobody leads. */
    private void passLead() {
        lock.lock();
        try {
            Request next = workers.isEmpty() ? clients.peek() : workers.peek();
            if (next != null) {
                next.askToLead();
            } else {
                led = false;
                idle.signalAll();
            }
        } finally {
            lock.unlock();
        }
    }

    /** Workers' writes first, then clients', up to the bound. */
    private List<Request> nextBatch() {
        lock.lock();
        try {
            List<Request> batch = new ArrayList<>();
            for (Queue<Request> lane : List.of(workers, clients)) {
                while (batch.size() < MAX_BATCH && !lane.isEmpty()) {
                    batch.add(lane.remove());
                }
            }
            return batch;
        } finally {
            lock.unlock();
        }
    }

    private void commit(List<Request> batch) {
        try {
            // BEGIN IMMEDIATE is SQLite's; PostgreSQL's plain BEGIN plus row locks does the same job.
            execute("BEGIN IMMEDIATE");
            try {
                for (Request r : batch) {
                    runInSavepoint(r);
                }
                execute("COMMIT");
            } catch (SQLException | RuntimeException | Error e) {
                rollbackAfter(e);
                throw e;
            }
        } catch (SQLException e) {
            for (Request r : batch) {
                r.failIfUnanswered(SqliteErrors.translate(e));
            }
            return;
        }
        batch.forEach(Request::answer);
    }

    /**
     * Runs one request's work between SAVEPOINT and RELEASE, recording its result or failure.
     * Throws only when the transaction itself is lost, and then the whole batch fails.
     */
    private void runInSavepoint(Request r) throws SQLException {
        execute("SAVEPOINT request");
        try {
            r.result = r.work.run(connection);
            execute("RELEASE request");
        } catch (SQLException | RuntimeException | Error e) {
            r.failure = e instanceof SQLException s ? SqliteErrors.translate(s) : e;
            rollBackRequest(e);
        }
    }

    private void rollBackRequest(Throwable failure) throws SQLException {
        try {
            execute("ROLLBACK TO request");
            execute("RELEASE request");
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
            execute("ROLLBACK");
        } catch (SQLException rollbackFailure) {
            // After SQLite rolled back by itself, ROLLBACK reports that no transaction is
            // active: keep it, but as a footnote.
            failure.addSuppressed(rollbackFailure);
        }
    }

    private void execute(String sql) throws SQLException {
        try (Statement s = connection.createStatement()) {
            s.execute(sql);
        }
    }
}
