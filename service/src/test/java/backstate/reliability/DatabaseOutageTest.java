package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Queue;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The PostgreSQL server stopped for 10 s (pg_ctl stop, fast mode: sessions ended, connections
 * refused; {@link StoppablePostgres}) while clients post traces to a service process. During the
 * outage every post is answered 503 problem+json with Retry-After, never a 500 and never a 202;
 * once the server is back the service takes posts again by itself, without a restart; and every
 * post acknowledged before, during or after has its trace and, once the queue drains, its one
 * estimate. Posts refused with 503 are sent again with their Idempotency-Key afterwards and are
 * stored once.
 */
class DatabaseOutageTest {
    static final Duration OUTAGE = Duration.ofSeconds(10);
    /** Posting before the outage, and after the recovery. */
    static final Duration STEADY = Duration.ofSeconds(2);
    /** From the server's restart to the first 202: the pool's next connection attempt, plus a busy box. */
    static final Duration RECOVERY_BOUND = Duration.ofSeconds(10);
    static final int CLIENTS = 8;
    static final int SAMPLES = 120;

    @TempDir
    Path dir;

    private final Map<Integer, KilledServerTest.Ack> acked = new ConcurrentHashMap<>();
    private final Queue<Integer> refused = new ConcurrentLinkedQueue<>();
    private final Queue<String> surprises = new ConcurrentLinkedQueue<>();
    /** When the latest 202 arrived (epoch milliseconds). */
    private final AtomicLong lastAckAt = new AtomicLong();

    @Test
    void a_database_stopped_for_ten_seconds_gets_503_then_the_service_recovers_and_loses_nothing() throws Exception {
        ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
        try (StoppablePostgres postgres = new StoppablePostgres(dir.resolve("pgdata"))) {
            ServerDb db = new ServerDb(postgres.database());
            try (ServerProcess server = ServerProcess.start(db, dir.resolve("server.log"), "--job-lease", "3")) {
                Http http = new Http(server.base());
                http.publishDemoModel(TestServer.TEST_DATA);
                AtomicBoolean posting = new AtomicBoolean(true);
                AtomicInteger next = new AtomicInteger();
                ExecutorService clients = Executors.newFixedThreadPool(CLIENTS);
                for (int c = 0; c < CLIENTS; c++) {
                    clients.execute(() -> {
                        while (posting.get()) {
                            int n = next.getAndIncrement();
                            post(http, n, reefer.csv(SAMPLES, n));
                        }
                    });
                }
                Thread.sleep(STEADY.toMillis());
                postgres.stop();
                // Counted once the server is down: posts committed while pg_ctl was still stopping it
                // were acknowledged before the outage, however long the stop took.
                int ackedBefore = acked.size();
                long down = System.currentTimeMillis();
                Thread.sleep(OUTAGE.toMillis());
                long up = System.currentTimeMillis();
                int refusedDuring = refused.size();
                int ackedDuring = acked.size() - ackedBefore;
                postgres.start();
                long restarted = System.currentTimeMillis();
                long recovered = awaitAckAfter(restarted);
                Thread.sleep(STEADY.toMillis());
                posting.set(false);
                clients.shutdown();
                assertTrue(clients.awaitTermination(60, TimeUnit.SECONDS), "clients hung");

                assertEquals(List.of(), List.copyOf(surprises), "answers other than 202 or 503 problem+json with Retry-After");
                assertTrue(ackedBefore > 0, "nothing acknowledged before the outage");
                assertTrue(refusedDuring > 0, "no 503 during the outage");
                assertTrue(ackedDuring <= CLIENTS, "acknowledged during the outage: " + ackedDuring
                        + " (only posts already past their write when the server stopped may be)");
                assertTrue(recovered - restarted <= RECOVERY_BOUND.toMillis(),
                        "first 202 " + (recovered - restarted) + " ms after the restart");
                assertTrue(server.logText().contains("database unavailable: store unavailable: database"), server.logText());
                assertFalse(server.logText().contains("unhandled error"), server.logText());

                for (int n : List.copyOf(refused)) {
                    Http.Reply again = http.postTrace(unit(n), reefer.csv(SAMPLES, n), key(n));
                    assertEquals(202, again.status(), again.body());
                    record(n, again);
                }
                KilledServerTest.awaitDrained(db);
                assertTrue(server.isAlive());
                System.out.printf("DatabaseOutageTest: %d acknowledged before the outage, %d refused with 503 in %d ms"
                                + " down, first 202 %d ms after the restart, %d posts in all%n", ackedBefore, refusedDuring,
                        up - down, recovered - restarted, acked.size());
            }
            assertEveryAcknowledgedPostStoredAndSolvedOnce(db);
        }
    }

    private void assertEveryAcknowledgedPostStoredAndSolvedOnce(ServerDb db) {
        int posts = acked.size();
        assertEquals(posts, db.count("SELECT COUNT(*) FROM traces"), "a trace is missing or stored twice");
        assertEquals(posts, db.count("SELECT COUNT(DISTINCT id) FROM traces WHERE id IN (" + KilledServerTest.quotedIds(acked, true) + ")"));
        assertEquals(posts, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded' AND id IN (" + KilledServerTest.quotedIds(acked, false) + ")"));
        assertEquals(posts, db.count("SELECT COUNT(*) FROM estimates"), "an estimate is missing or duplicated");
        assertEquals(posts, db.count("SELECT COUNT(DISTINCT job_id) FROM estimates"));
        assertEquals("ok", db.integrityCheck());
        assertEquals(List.of(), db.foreignKeyViolations());
    }

    /** Records a 202; a 503 must say when to retry, as problem+json; a transport failure or anything else is a surprise. */
    private void post(Http http, int n, byte[] body) {
        try {
            Http.Reply reply = http.postTrace(unit(n), body, key(n));
            if (reply.status() == 202) {
                record(n, reply);
            } else if (isRetryLater(reply)) {
                refused.add(n);
            } else {
                surprises.add("post " + n + ": " + reply.status() + " " + reply.header("Content-Type")
                        + " Retry-After=" + reply.header("Retry-After") + " " + reply.body());
            }
        } catch (IOException e) {
            surprises.add("post " + n + ": no answer (" + e + ")");
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private static boolean isRetryLater(Http.Reply r) {
        return r.status() == 503
                && String.valueOf(r.header("Content-Type")).startsWith("application/problem+json")
                && "5".equals(r.header("Retry-After"))
                && r.json().path("type").asText().endsWith("/service-busy");
    }

    private void record(int n, Http.Reply reply) {
        KilledServerTest.Ack ack = new KilledServerTest.Ack(reply.json().path("traceId").asText(),
                reply.json().path("jobId").asText());
        KilledServerTest.Ack earlier = acked.putIfAbsent(n, ack);
        if (earlier != null && !earlier.equals(ack)) {
            surprises.add("post " + n + " acknowledged twice with different ids: " + earlier + ", " + ack);
        }
        lastAckAt.set(System.currentTimeMillis());
    }

    /** Waits for a 202 that arrives after {@code sinceMillis}; returns when it came. */
    private long awaitAckAfter(long sinceMillis) throws InterruptedException {
        long deadline = System.nanoTime() + RECOVERY_BOUND.multipliedBy(3).toNanos();
        while (lastAckAt.get() < sinceMillis) {
            if (System.nanoTime() > deadline) {
                throw new AssertionError("no 202 within " + RECOVERY_BOUND.multipliedBy(3) + " of the restart; surprises: "
                        + surprises);
            }
            Thread.sleep(10);
        }
        return lastAckAt.get();
    }

    private static String unit(int n) {
        return "RCX-" + (50_000 + n % 16);
    }

    private static String key(int n) {
        return "outage-" + n;
    }
}
