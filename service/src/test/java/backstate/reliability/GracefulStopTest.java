package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * SIGTERM (what {@code docker stop} and systemd send) stops the service gracefully: the process
 * exits by itself within the shutdown grace, every acknowledged trace is on disk, no job is left
 * {@code running} (each finished or went back to the queue), the file is intact, and the next
 * start solves what was still queued, each job exactly once. A post either gets 202, or no answer
 * (the connection closed before it was read), or, when it arrives on a kept-alive connection after
 * the stop began, 503 problem+json with Retry-After and {@code Connection: close}: never a 500.
 *
 * <p>The backlog at the signal is made, not hoped for: the signal is sent while the test holds the
 * file's write lock with {@value #BACKLOG_JOBS} more jobs queued in it ({@link LockedBacklog}), so
 * whatever the workers' pace, the server has work queued when the stop begins.
 */
class GracefulStopTest {
    /** Acknowledged posts before SIGTERM: enough that solves lag behind and jobs are queued and running. */
    static final int ACKS_BEFORE_STOP = 100;
    /** Jobs queued from outside just before the signal: each a few milliseconds' solve, so hundreds of ms in all. */
    static final int BACKLOG_JOBS = 200;
    static final int CLIENTS = 16;
    static final int SAMPLES = 360;
    /** WorkerPool's 20 s grace for running jobs plus time for HTTP and the database to close. */
    static final Duration EXIT_BOUND = Duration.ofSeconds(40);
    /** 128 + SIGTERM's 15: how the JVM reports an exit caused by SIGTERM after its hooks ran. */
    static final int EXIT_ON_SIGTERM = 143;

    @TempDir
    Path dir;

    @Test
    void sigterm_under_load_exits_in_time_with_nothing_running_and_nothing_lost() throws Exception {
        ServerDb db = new ServerDb(dir.resolve("stop.db"));
        Path log = dir.resolve("server.log");
        ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
        Map<Integer, String> ackedTraces = new ConcurrentHashMap<>();
        ConcurrentLinkedQueue<String> refusals = new ConcurrentLinkedQueue<>();
        AtomicInteger retryLater = new AtomicInteger();

        Integer exit;
        long pendingAtSignal;
        try (ServerProcess server = ServerProcess.start(db.file(), log)) {
            Http http = new Http(server.base());
            http.publishDemoModel(TestServer.TEST_DATA);
            // Clients post until the signal lands; each answer must be a 202 or no answer at all.
            AtomicBoolean posting = new AtomicBoolean(true);
            AtomicInteger n = new AtomicInteger();
            ExecutorService clients = Executors.newFixedThreadPool(CLIENTS);
            for (int c = 0; c < CLIENTS; c++) {
                clients.execute(() -> {
                    while (posting.get()) {
                        int i = n.getAndIncrement();
                        if (!post(http, i, reefer.csv(SAMPLES, i), ackedTraces, retryLater, refusals)) {
                            return;
                        }
                    }
                });
            }
            long deadline = System.nanoTime() + EXIT_BOUND.toNanos();
            while (ackedTraces.size() < ACKS_BEFORE_STOP && System.nanoTime() < deadline) {
                Thread.sleep(10);
            }
            assertTrue(ackedTraces.size() >= ACKS_BEFORE_STOP, "acknowledged posts: " + ackedTraces.size());
            try (LockedBacklog backlog = new LockedBacklog(db.database(), ackedTraces.values().iterator().next(), BACKLOG_JOBS)) {
                pendingAtSignal = backlog.pending();
                server.signalTerm();
            }
            exit = server.awaitExit(EXIT_BOUND);
            posting.set(false);
            clients.shutdown();
            assertTrue(clients.awaitTermination(60, TimeUnit.SECONDS));
            assertNotNull(exit, "still running " + EXIT_BOUND + " after SIGTERM");
            assertTrue(Set.of(0, EXIT_ON_SIGTERM).contains(exit), "exit code " + exit + "\n" + server.logText());
            assertFalse(server.logText().contains("unhandled error"), server.logText());
        }

        assertEquals(List.of(), List.copyOf(refusals), "answers other than 202 during the stop");
        assertEquals("ok", db.integrityCheck());
        assertEquals(0, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'running'"), "a job was left running");
        for (String traceId : ackedTraces.values()) {
            assertEquals(1, db.count("SELECT COUNT(*) FROM traces WHERE id = '" + traceId + "'"), traceId);
        }
        long queuedAtStop = db.count("SELECT COUNT(*) FROM jobs WHERE state = 'queued'");

        try (ServerProcess again = ServerProcess.start(db.file(), log)) {
            KilledServerTest.awaitDrained(db);
            assertNotNull(again.terminate(EXIT_BOUND), "second stop hung");
        }
        long traces = db.count("SELECT COUNT(*) FROM traces");
        assertTrue(traces >= ackedTraces.size());
        assertEquals(traces, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded'"));
        assertEquals(traces, db.count("SELECT COUNT(*) FROM estimates"));
        assertEquals(traces, db.count("SELECT COUNT(DISTINCT job_id) FROM estimates"));
        assertEquals("ok", db.integrityCheck());
        assertTrue(pendingAtSignal >= BACKLOG_JOBS, "pending at the signal: " + pendingAtSignal);
        System.out.printf("GracefulStopTest: exit %d, %d traces acknowledged, %d told to retry, %d jobs pending at the signal,"
                + " %d still queued after the stop%n", exit, ackedTraces.size(), retryLater.get(), pendingAtSignal, queuedAtStop);
    }

    /**
     * Posts trace i; true on a 202, false when the server is gone or said it is stopping; anything
     * else is recorded as a refusal.
     */
    private static boolean post(Http http, int i, byte[] body, Map<Integer, String> acked, AtomicInteger retryLater,
                                ConcurrentLinkedQueue<String> refusals) {
        try {
            Http.Reply r = http.postTrace("RCX-" + (30_000 + i % 40), body, "stop-" + i);
            if (r.status() == 202) {
                acked.put(i, r.json().path("traceId").asText());
                return true;
            }
            if (isStopping(r)) {
                retryLater.incrementAndGet();
                return false;
            }
            refusals.add(r.status() + " " + r.header("Content-Type") + " Retry-After=" + r.header("Retry-After") + " " + r.body());
            return false;
        } catch (IOException e) {
            return false;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }

    /** The answer StopDrain gives a request that arrives after the stop began. */
    private static boolean isStopping(Http.Reply r) {
        return r.status() == 503
                && String.valueOf(r.header("Content-Type")).startsWith("application/problem+json")
                && "5".equals(r.header("Retry-After"))
                && r.json().path("type").asText().endsWith("/service-busy")
                && r.json().path("detail").asText().contains("stopping")
                && "close".equalsIgnoreCase(r.header("Connection"));
    }
}
