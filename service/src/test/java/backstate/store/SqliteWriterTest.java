package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotSame;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Method;
import java.lang.reflect.Proxy;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.function.BooleanSupplier;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.sqlite.SQLiteErrorCode;
import org.sqlite.SQLiteException;

/**
 * The writer thread and group commit on its own table: the writer thread is held inside one
 * write while others queue up, so each test knows exactly which writes share the next batch. The
 * connection records the SQL of every {@code Statement.execute} and can fail a chosen one.
 */
class SqliteWriterTest {

    /** Generous: a step that takes this long is a hang, not a slow machine. */
    private static final long WAIT_SECONDS = 10;
    private static final String BEGIN = "BEGIN IMMEDIATE";
    private static final String SAVEPOINT = "SAVEPOINT request";
    private static final String RELEASE = "RELEASE request";
    private static final String COMMIT = "COMMIT";

    @TempDir
    Path dir;
    Path file;
    SqliteWriter writer;
    final List<String> log = Collections.synchronizedList(new ArrayList<>());
    final CountDownLatch release = new CountDownLatch(1);
    final ExecutorService callers = Executors.newCachedThreadPool();
    String failSql;
    int failCountdown;

    @BeforeEach
    void open() throws SQLException {
        file = dir.resolve("writer.db");
        try (Connection c = raw(); Statement s = c.createStatement()) {
            s.execute("CREATE TABLE t (id INTEGER PRIMARY KEY)");
        }
        writer = new SqliteWriter(recording(raw()));
    }

    @AfterEach
    void close() {
        release.countDown();
        writer.close();
        callers.shutdownNow();
    }

    @Test
    void a_lone_write_runs_on_the_writer_thread_in_its_own_transaction() {
        assertEquals("backstate-writer", writer.write(c -> Thread.currentThread().getName()));
        assertEquals(List.of(BEGIN, SAVEPOINT, RELEASE, COMMIT), log);
    }

    @Test
    void the_writer_keeps_its_prepared_statements_across_writes_and_drops_them_after_a_failure() throws Exception {
        PreparedStatement first = writer.write(c -> c.prepare("SELECT count(*) FROM t"));
        assertSame(first, writer.write(c -> c.prepare("SELECT count(*) FROM t")));
        assertThrows(IllegalArgumentException.class, () -> writer.write(insertThenThrow(1)));
        assertTrue(first.isClosed(), "SQLite may have left a statement mid-step: all are compiled again");
        PreparedStatement fresh = writer.write(c -> c.prepare("SELECT count(*) FROM t"));
        assertNotSame(first, fresh);
        assertEquals(List.of(), ids());
    }

    @Test
    void writes_handed_over_one_after_another_commit_in_that_order() throws Exception {
        holdLeader();
        List<Future<Object>> writes = new ArrayList<>();
        for (int id = 1; id <= 5; id++) {
            writes.add(queue(c -> {
                long before = Sql.firstOrNull(c.prepare("SELECT count(*) FROM t"), rs -> rs.getLong(1));
                insert((int) before + 1).run(c);
                return before;
            }));
        }
        release.countDown();
        for (int i = 0; i < 5; i++) {
            assertEquals((long) i, writes.get(i).get(WAIT_SECONDS, TimeUnit.SECONDS), "each write sees those before it");
        }
        assertEquals(List.of(1, 2, 3, 4, 5), ids());
    }

    @Test
    void a_write_inside_a_write_is_refused_rather_than_waiting_for_itself() throws Exception {
        IllegalStateException e = assertThrows(IllegalStateException.class,
                () -> writer.write(c -> writer.write(insert(1))));
        assertEquals("got a write inside a write, expected one transaction at a time", e.getMessage());
        assertEquals(List.of(), ids());
        assertEquals(1, writer.write(insert(1)), "the writer goes on");
    }

    @Test
    void many_concurrent_writers_each_hear_their_own_outcome_once() throws Exception {
        int threads = 8;
        int writesEach = 100;
        int failEvery = 7;
        List<Future<List<String>>> outcomes = new ArrayList<>();
        for (int t = 0; t < threads; t++) {
            int first = t * writesEach;
            outcomes.add(callers.submit(() -> {
                List<String> heard = new ArrayList<>();
                for (int id = first; id < first + writesEach; id++) {
                    try {
                        SqlWork<Integer> work = id % failEvery == 0 ? insertThenThrow(id) : insert(id);
                        heard.add(String.valueOf(writer.write(work)));
                    } catch (IllegalArgumentException e) {
                        heard.add(e.getMessage());
                    }
                }
                return heard;
            }));
        }

        List<Integer> expected = new ArrayList<>();
        for (int t = 0; t < threads; t++) {
            List<String> heard = outcomes.get(t).get(WAIT_SECONDS, TimeUnit.SECONDS);
            for (int i = 0; i < writesEach; i++) {
                int id = t * writesEach + i;
                assertEquals(id % failEvery == 0 ? "refused " + id : String.valueOf(id), heard.get(i));
                if (id % failEvery != 0) {
                    expected.add(id);
                }
            }
        }
        assertEquals(expected, ids());
    }

    @Test
    void writes_waiting_together_share_one_transaction_and_each_caller_gets_its_own_result() throws Exception {
        holdLeader();
        List<Future<Object>> inserts = new ArrayList<>();
        for (int id = 1; id <= 3; id++) {
            inserts.add(queue(insert(id)));
        }
        log.clear();
        release.countDown();

        for (int id = 1; id <= 3; id++) {
            assertEquals(id, inserts.get(id - 1).get(WAIT_SECONDS, TimeUnit.SECONDS));
        }
        assertEquals(List.of(RELEASE, COMMIT, // the held write's own batch
                BEGIN, SAVEPOINT, insertSql(1), RELEASE, SAVEPOINT, insertSql(2), RELEASE,
                SAVEPOINT, insertSql(3), RELEASE, COMMIT), log);
        assertEquals(List.of(1, 2, 3), ids());
    }

    @Test
    void a_write_that_throws_is_rolled_back_alone_and_its_caller_gets_its_own_exception() throws Exception {
        holdLeader();
        Future<Object> first = queue(insert(1));
        Future<Object> throwing = queue(c -> {
            insert(2).run(c);
            throw new IllegalArgumentException("got 2, expected anything else");
        });
        Future<Object> duplicate = queue(insert(1));
        Future<Object> last = queue(insert(4));
        log.clear();
        release.countDown();

        assertEquals(1, first.get(WAIT_SECONDS, TimeUnit.SECONDS));
        assertEquals("got 2, expected anything else",
                assertInstanceOf(IllegalArgumentException.class, failure(throwing)).getMessage());
        StoreException constraint = assertInstanceOf(StoreException.class, failure(duplicate));
        assertFalse(constraint instanceof StoreUnavailableException, "a constraint is a bug, not a busy database");
        assertEquals(4, last.get(WAIT_SECONDS, TimeUnit.SECONDS));
        assertEquals(List.of(1, 4), ids());
        assertEquals(2, Collections.frequency(log, COMMIT), "the held write's batch, then one for all four");
    }

    @Test
    void worker_writes_go_ahead_of_client_writes_waiting_for_the_same_batch() throws Exception {
        holdLeader();
        List<Future<Object>> all = List.of(queue(insert(1)), queue(insert(2)),
                queueForWorker(insert(3)), queueForWorker(insert(4)));
        log.clear();
        release.countDown();
        for (Future<Object> f : all) {
            f.get(WAIT_SECONDS, TimeUnit.SECONDS);
        }

        List<String> inserts = log.stream().filter(sql -> sql.startsWith("INSERT")).toList();
        assertEquals(List.of(insertSql(3), insertSql(4), insertSql(1), insertSql(2)), inserts);
        assertEquals(2, Collections.frequency(log, COMMIT));
    }

    @Test
    void a_failed_commit_fails_every_write_in_the_batch_and_keeps_none() throws Exception {
        holdLeader();
        List<Future<Object>> inserts = List.of(queue(insert(1)), queue(insert(2)), queue(insert(3)));
        failOccurrence(COMMIT, 2); // the held write's COMMIT passes, the batch's fails
        release.countDown();

        for (Future<Object> f : inserts) {
            assertEquals("disk full", assertInstanceOf(StoreUnavailableException.class, failure(f)).reason());
        }
        assertEquals(List.of(), ids());
        assertEquals("ok", StoreFixture.integrityCheck(file));
        assertEquals(5, writer.write(insert(5)), "the writer goes on after a failed batch");
    }

    @Test
    void a_transaction_sqlite_ended_by_itself_fails_the_whole_batch_and_keeps_none() throws Exception {
        holdLeader();
        Future<Object> before = queue(insert(1));
        // What SQLite does after SQLITE_FULL or SQLITE_IOERR: roll the whole transaction back.
        Future<Object> full = queue(c -> {
            c.execute("ROLLBACK");
            throw new SQLiteException("injected: database or disk is full", SQLiteErrorCode.SQLITE_FULL);
        });
        Future<Object> after = queue(insert(3));
        release.countDown();

        for (Future<Object> f : List.of(before, full, after)) {
            assertEquals("disk full", assertInstanceOf(StoreUnavailableException.class, failure(f)).reason());
        }
        assertFalse(log.contains(insertSql(3)), "no work runs after the transaction is lost");
        assertEquals(List.of(), ids());
        assertEquals("ok", StoreFixture.integrityCheck(file));
        assertEquals(5, writer.write(insert(5)));
    }

    @Test
    void a_caller_interrupted_while_waiting_still_hears_that_its_write_committed() throws Exception {
        holdLeader();
        Future<Boolean> interruptedCaller = callers.submit(() -> {
            Thread.currentThread().interrupt();
            return writer.write(insert(1)).equals(1) && Thread.currentThread().isInterrupted();
        });
        awaitWaiting(1);
        release.countDown();

        assertTrue(interruptedCaller.get(WAIT_SECONDS, TimeUnit.SECONDS), "result returned, interrupt kept");
        assertEquals(List.of(1), ids());
    }

    @Test
    void close_finishes_the_writes_handed_over_and_refuses_later_ones() throws Exception {
        holdLeader();
        Future<Object> handedOver = queue(insert(1));
        Thread closer = new Thread(writer::close);
        closer.start();
        awaitUntil(() -> closer.getState() == Thread.State.WAITING, "the closer to join the writer thread");

        IllegalStateException refused = assertThrows(IllegalStateException.class, () -> writer.write(insert(2)));
        assertEquals("got a call on a closed store, expected an open one", refused.getMessage());
        release.countDown();
        closer.join(TimeUnit.SECONDS.toMillis(WAIT_SECONDS));
        assertFalse(closer.isAlive());
        assertEquals(1, handedOver.get(WAIT_SECONDS, TimeUnit.SECONDS));
        assertEquals(List.of(1), ids());
    }

    // ---- helpers

    /** Starts a write that blocks until {@link #release}, and waits until it runs: the writer thread is held. */
    private void holdLeader() throws Exception {
        CountDownLatch started = new CountDownLatch(1);
        callers.submit(() -> writer.write(c -> {
            started.countDown();
            try {
                release.await();
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
            return 0;
        }));
        assertTrue(started.await(WAIT_SECONDS, TimeUnit.SECONDS));
    }

    /** Hands work over while the leader is held, and waits until it is queued: order is known. */
    private Future<Object> queue(SqlWork<?> work) throws InterruptedException {
        return queued(() -> writer.write(work));
    }

    private Future<Object> queueForWorker(SqlWork<?> work) throws InterruptedException {
        return queued(() -> writer.writeForWorker(work));
    }

    private Future<Object> queued(Callable<Object> write) throws InterruptedException {
        int before = writer.waiting();
        Future<Object> f = callers.submit(write);
        awaitWaiting(before + 1);
        return f;
    }

    private void awaitWaiting(int n) throws InterruptedException {
        awaitUntil(() -> writer.waiting() >= n, n + " writes waiting");
    }

    private static void awaitUntil(BooleanSupplier condition, String what) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(WAIT_SECONDS);
        while (!condition.getAsBoolean()) {
            assertTrue(System.nanoTime() < deadline, "waited " + WAIT_SECONDS + " s for " + what);
            Thread.sleep(1);
        }
    }

    private static Throwable failure(Future<?> f) throws Exception {
        return assertThrows(ExecutionException.class, () -> f.get(WAIT_SECONDS, TimeUnit.SECONDS)).getCause();
    }

    private static SqlWork<Integer> insert(int id) {
        return c -> {
            c.execute(insertSql(id));
            return id;
        };
    }

    private static SqlWork<Integer> insertThenThrow(int id) {
        return c -> {
            insert(id).run(c);
            throw new IllegalArgumentException("refused " + id);
        };
    }

    private static String insertSql(int id) {
        return "INSERT INTO t (id) VALUES (" + id + ")";
    }

    private List<Integer> ids() throws SQLException {
        List<Integer> ids = new ArrayList<>();
        try (Connection c = raw(); Statement s = c.createStatement();
             ResultSet rs = s.executeQuery("SELECT id FROM t ORDER BY id")) {
            while (rs.next()) {
                ids.add(rs.getInt(1));
            }
        }
        return ids;
    }

    private Connection raw() throws SQLException {
        return DriverManager.getConnection("jdbc:sqlite:" + file.toAbsolutePath());
    }

    /** Fails the {@code n}th execute of exactly {@code sql} from now with SQLITE_FULL, before it runs. */
    private synchronized void failOccurrence(String sql, int n) {
        failSql = sql;
        failCountdown = n;
    }

    private synchronized void record(String sql) throws SQLiteException {
        log.add(sql);
        if (sql.equals(failSql) && --failCountdown == 0) {
            throw new SQLiteException("injected: database or disk is full", SQLiteErrorCode.SQLITE_FULL);
        }
    }

    /**
     * The connection with every plain Statement's execute(sql) and every kept statement's
     * execute() recorded by its SQL (the writer's transaction control is kept, its work here is not).
     */
    private Connection recording(Connection real) {
        return proxy(Connection.class, real, (method, args) -> {
            Object result = invoke(real, method, args);
            if (method.getName().equals("createStatement")) {
                Statement statement = (Statement) result;
                return proxy(Statement.class, statement, (m, a) -> {
                    if (m.getName().equals("execute") && a != null && a.length == 1) {
                        record((String) a[0]);
                    }
                    return invoke(statement, m, a);
                });
            }
            if (method.getName().equals("prepareStatement")) {
                PreparedStatement statement = (PreparedStatement) result;
                String sql = (String) args[0];
                return proxy(PreparedStatement.class, statement, (m, a) -> {
                    if (m.getName().equals("execute") && a == null) {
                        record(sql);
                    }
                    return invoke(statement, m, a);
                });
            }
            return result;
        });
    }

    private interface Call {
        Object on(Method method, Object[] args) throws Throwable;
    }

    private static <T> T proxy(Class<T> type, T target, Call call) {
        return type.cast(Proxy.newProxyInstance(SqliteWriterTest.class.getClassLoader(), new Class<?>[] {type},
                (p, method, args) -> call.on(method, args)));
    }

    private static Object invoke(Object target, Method method, Object[] args) throws Throwable {
        try {
            return method.invoke(target, args);
        } catch (InvocationTargetException e) {
            throw e.getCause();
        }
    }
}
