package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.Engine;
import backstate.api.TestServer;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Queue;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * After SQLite's crash tests, at process level: the service runs as its own OS process and is
 * killed with SIGKILL while clients post traces and workers solve them. Reopened on the same
 * file, it must hold every trace it acknowledged, finish every job exactly once, and pass
 * {@code PRAGMA integrity_check}; posts whose answer was lost are retried with their
 * Idempotency-Key and must not be stored twice.
 *
 * <p>Work pending at the kill is made, not hoped for: the kill comes while the test holds the
 * file's write lock with {@value #BACKLOG_JOBS} more jobs queued in it ({@link LockedBacklog},
 * committed once the server is dead), so the restart always has queued work to finish.
 *
 * <p>It runs on both engines. On PostgreSQL "integrity" is amcheck's index check and a foreign
 * key walk ({@link ServerDb#integrityCheck}); jobs running at the kill wait out their lease before
 * the restarted server takes them, so that run is bounded by the lease too.
 */
class KilledServerTest {
    static final int TRACES = 300;
    static final int CLIENTS = 16;
    /** Acknowledged posts before the kill: the middle of the run, so posts and solves are both in flight. */
    static final int KILL_AFTER_ACKS = 150;
    /** Samples per trace: six hours at one a minute, like the demo logs. */
    static final int SAMPLES = 360;
    static final Duration RUN_BOUND = Duration.ofSeconds(120);
    /** Jobs queued from outside at the kill, on copies of an acknowledged trace (ids "backlog-..."). */
    static final int BACKLOG_JOBS = 50;

    @TempDir
    Path dir;

    /** What a post came to: its ids if acknowledged (2xx), else null. */
    record Ack(String traceId, String jobId) {
    }

    /**
     * On PostgreSQL a short lease, so the jobs the killed server held are taken back within
     * seconds; SQLite's restart takes back every running job at once (it is the only process).
     */
    static String[] leaseFlags(Engine engine) {
        return engine == Engine.POSTGRESQL ? new String[] {"--job-lease", "3"} : new String[0];
    }

    @ParameterizedTest
    @EnumSource(Engine.class)
    void a_server_killed_under_load_keeps_every_acknowledged_trace_and_solves_every_job_once(Engine engine) throws Exception {
        ServerDb db = new ServerDb(engine.newDatabase(dir, "crash"));
        Path log = dir.resolve("server.log");
        ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
        List<byte[]> bodies = new ArrayList<>();
        for (int i = 0; i < TRACES; i++) {
            bodies.add(reefer.csv(SAMPLES, i));
        }
        Map<Integer, Ack> acked = new ConcurrentHashMap<>();
        ConcurrentLinkedQueue<String> surprises = new ConcurrentLinkedQueue<>();

        try (ServerProcess first = ServerProcess.start(db, log, leaseFlags(engine))) {
            new Http(first.base()).publishDemoModel(TestServer.TEST_DATA);
            CountDownLatch killPoint = new CountDownLatch(KILL_AFTER_ACKS);
            ExecutorService clients = Executors.newFixedThreadPool(CLIENTS);
            Http http = new Http(first.base());
            for (int i = 0; i < TRACES; i++) {
                int n = i;
                clients.execute(() -> {
                    if (post(http, n, bodies.get(n), acked, surprises)) {
                        killPoint.countDown();
                    }
                });
            }
            assertTrue(killPoint.await(RUN_BOUND.toSeconds(), TimeUnit.SECONDS),
                    "fewer than " + KILL_AFTER_ACKS + " acks; surprises: " + surprises);
            try (LockedBacklog ignored = new LockedBacklog(db.database(), acked.values().iterator().next().traceId(), BACKLOG_JOBS)) {
                first.kill();
            }
            clients.shutdown();
            assertTrue(clients.awaitTermination(RUN_BOUND.toSeconds(), TimeUnit.SECONDS), "clients hung after the kill");
        }

        // The file as the kill left it: intact, holding every acknowledged trace, work still pending.
        assertEquals("ok", db.integrityCheck());
        for (Ack ack : acked.values()) {
            assertEquals(1, db.count("SELECT COUNT(*) FROM traces WHERE id = '" + ack.traceId() + "'"), ack.toString());
        }
        long pendingAtKill = db.count("SELECT COUNT(*) FROM jobs WHERE state IN ('queued', 'running')");
        long runningAtKill = db.count("SELECT COUNT(*) FROM jobs WHERE state = 'running'");
        assertTrue(pendingAtKill >= BACKLOG_JOBS, "pending at the kill: " + pendingAtKill);
        int ackedBeforeKill = acked.size();

        try (ServerProcess second = ServerProcess.start(db, log, leaseFlags(engine))) {
            Http http = new Http(second.base());
            for (int i = 0; i < TRACES; i++) {
                if (!acked.containsKey(i)) {
                    assertTrue(post(http, i, bodies.get(i), acked, surprises), "retry of post " + i + " after restart failed");
                }
            }
            awaitDrained(db);
            assertTrue(second.isAlive());
        }

        assertEquals(List.of(), List.copyOf(surprises), "answers other than 202");
        assertEquals(TRACES, acked.size());
        assertEquals(TRACES, db.count("SELECT COUNT(*) FROM traces WHERE id NOT LIKE 'backlog-%'"), "a retried post was stored twice");
        assertEquals(TRACES, db.count("SELECT COUNT(DISTINCT id) FROM traces WHERE id IN (" + quotedIds(acked, true) + ")"));
        assertEquals(TRACES, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded' AND id IN (" + quotedIds(acked, false) + ")"));
        assertEquals(BACKLOG_JOBS, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded' AND id LIKE 'backlog-%'"));
        int all = TRACES + BACKLOG_JOBS;
        assertEquals(all, db.count("SELECT COUNT(*) FROM traces"));
        assertEquals(all, db.count("SELECT COUNT(*) FROM jobs"));
        assertEquals(all, db.count("SELECT COUNT(*) FROM estimates"), "an estimate is missing or duplicated");
        assertEquals(all, db.count("SELECT COUNT(DISTINCT job_id) FROM estimates"));
        assertEquals(0, db.count("SELECT COUNT(*) FROM estimates e JOIN jobs j ON j.id = e.job_id WHERE e.trace_id <> j.trace_id"));
        assertEquals("ok", db.integrityCheck());
        assertEquals(List.of(), db.foreignKeyViolations());
        System.out.printf("KilledServerTest (%s): %d acks before SIGKILL, %d jobs pending (%d running) at the kill,"
                        + " %d jobs needed a second attempt%n", engine, ackedBeforeKill, pendingAtKill, runningAtKill,
                db.count("SELECT COUNT(*) FROM jobs WHERE attempt > 1"));
    }

    /**
     * Posts trace n with key crash-n; records and returns true on a 202, false on a transport
     * failure; any other answer, or a second acknowledgement with other ids, is a surprise.
     */
    private static boolean post(Http http, int n, byte[] body, Map<Integer, Ack> acked, Queue<String> surprises) {
        try {
            Http.Reply reply = http.postTrace("RCX-" + (10_000 + n % 50), body, "crash-" + n);
            if (reply.status() != 202) {
                surprises.add("post " + n + ": " + reply.status() + " " + reply.body());
                return false;
            }
            Ack ack = new Ack(reply.json().path("traceId").asText(), reply.json().path("jobId").asText());
            Ack earlier = acked.putIfAbsent(n, ack);
            if (earlier != null && !earlier.equals(ack)) {
                surprises.add("post " + n + " acknowledged twice with different ids: " + earlier + ", " + ack);
            }
            return true;
        } catch (IOException e) {
            return false; // the server died under this request: not acknowledged
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }

    /** The acknowledged trace IDs (or job IDs), quoted and comma-separated for an SQL IN list. */
    static String quotedIds(Map<Integer, Ack> acked, boolean traces) {
        StringBuilder s = new StringBuilder();
        for (Ack a : acked.values()) {
            s.append(s.length() == 0 ? "'" : ",'").append(traces ? a.traceId() : a.jobId()).append('\'');
        }
        return s.toString();
    }

    static void awaitDrained(ServerDb db) throws InterruptedException {
        if (!db.awaitDrained(RUN_BOUND, Duration.ofMillis(50))) {
            throw new AssertionError("queue not drained within " + RUN_BOUND + ": " + db.signature());
        }
    }
}
