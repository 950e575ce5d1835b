package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.Engine;
import backstate.api.TestServer;
import java.io.IOException;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.Statement;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicIntegerArray;
import java.util.concurrent.atomic.AtomicReferenceArray;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Three service processes on one PostgreSQL database, 32 clients posting traces spread over
 * them, one replica killed with SIGKILL while it holds running jobs and, later, another stopped
 * with SIGTERM and replaced (a rolling restart). A post that gets no answer, or a 503, is sent to
 * the next replica with the same Idempotency-Key, as a load balancer's client would retry.
 *
 * <p>Checked in PostgreSQL itself, after the run: every post was acknowledged once and stored
 * once; every job succeeded with exactly one estimate (estimates.job_id is unique, and one per
 * job); the jobs the killed replica held were taken back by a survivor once their lease ran out
 * ("lease ran out" in their errors, attempt 2, claimed again within lease + margin of the kill);
 * and, sampled all through the run, no job stayed 'running' past its lease + margin.
 *
 * <p>The kill is made to land on held jobs, not hoped to. Small traces solve faster than they are
 * posted, so the test first queues {@value #BACKLOG_JOBS} jobs at once ({@link LockedBacklog}, ids
 * "backlog-..."); then it locks every running job's row (their completions wait) until 6 jobs
 * are running, and kills: 3 replicas × 2 solving slots, each replica claiming no more than its
 * free slots, so the victim holds 2.
 */
class ReplicasTest {
    static final int REPLICAS = 3;
    static final int SLOTS_PER_REPLICA = 2;
    static final int CLIENTS = 32;
    static final int TRACES = 1_050;
    /** An hour at one sample a minute: small, so the run is about coordination, not solving. */
    static final int SAMPLES = 60;
    static final Duration LEASE = Duration.ofSeconds(3);
    /** Beyond the lease: a survivor's heartbeat (every third of a lease) and a busy 2-core box. */
    static final Duration MARGIN = Duration.ofSeconds(5);
    static final int KILL_AFTER_ACKS = 300;
    static final int STOP_AFTER_ACKS = 700;
    static final int BACKLOG_JOBS = 300;
    static final int VICTIM = 2;
    static final int RESTARTED = 1;
    static final Duration RUN_BOUND = Duration.ofSeconds(120);
    static final String LEASE_ERROR = "lease ran out";
    private static final String STALE_RUNNING = "SELECT id FROM jobs WHERE state = 'running' AND lease_expires_at < ";

    @TempDir
    Path dir;

    private final AtomicReferenceArray<Http> endpoints = new AtomicReferenceArray<>(REPLICAS);
    private final AtomicIntegerArray acksByReplica = new AtomicIntegerArray(REPLICAS);
    private final Map<Integer, KilledServerTest.Ack> acked = new ConcurrentHashMap<>();
    private final ConcurrentLinkedQueue<String> surprises = new ConcurrentLinkedQueue<>();

    @Test
    void three_replicas_lose_nothing_when_one_is_killed_holding_jobs_and_one_is_restarted() throws Exception {
        ServerDb db = new ServerDb(Engine.POSTGRESQL.newDatabase(dir, "replicas"));
        ReeferTraces reefer = new ReeferTraces(TestServer.TEST_DATA);
        List<byte[]> bodies = new ArrayList<>();
        for (int i = 0; i < TRACES; i++) {
            bodies.add(reefer.csv(SAMPLES, i));
        }
        ConcurrentLinkedQueue<String> staleRunning = new ConcurrentLinkedQueue<>();
        List<ServerProcess> started = new ArrayList<>();
        ScheduledExecutorService monitor = Executors.newSingleThreadScheduledExecutor();
        ExecutorService clients = Executors.newFixedThreadPool(CLIENTS);
        try {
            List<ServerProcess> replicas = startReplicas(db, started);
            endpoints.get(0).publishDemoModel(TestServer.TEST_DATA);
            monitor.scheduleWithFixedDelay(() -> staleRunning.addAll(db.strings(
                    STALE_RUNNING + (System.currentTimeMillis() - MARGIN.toMillis()))), 0, 250, TimeUnit.MILLISECONDS);
            for (int i = 0; i < TRACES; i++) {
                int n = i;
                clients.execute(() -> postUntilAcknowledged(n, bodies.get(n)));
            }

            awaitAcks(KILL_AFTER_ACKS);
            try (LockedBacklog backlog = new LockedBacklog(db.database(), acked.values().iterator().next().traceId(),
                    BACKLOG_JOBS)) {
                assertTrue(backlog.pending() >= BACKLOG_JOBS); // committed at the end of this block
            }
            Kill kill = killHoldingJobs(db, replicas.get(VICTIM));

            awaitAcks(STOP_AFTER_ACKS);
            ServerProcess stopping = replicas.get(RESTARTED);
            Integer exit = stopping.terminate(GracefulStopTest.EXIT_BOUND);
            assertNotNull(exit, "still running " + GracefulStopTest.EXIT_BOUND + " after SIGTERM");
            assertTrue(Set.of(0, GracefulStopTest.EXIT_ON_SIGTERM).contains(exit), "exit " + exit + "\n" + stopping.logText());
            assertFalse(stopping.logText().contains("leaving them for rescue"), stopping.logText());
            ServerProcess replacement = ServerProcess.start(db, dir.resolve("replica-" + RESTARTED + "b.log"), flags());
            started.add(replacement);
            endpoints.set(RESTARTED, new Http(replacement.base()));

            clients.shutdown();
            assertTrue(clients.awaitTermination(RUN_BOUND.toSeconds(), TimeUnit.SECONDS), "clients did not finish");
            KilledServerTest.awaitDrained(db);
            monitor.shutdown();
            assertTrue(monitor.awaitTermination(10, TimeUnit.SECONDS));
            for (ServerProcess p : started) {
                assertFalse(p.logText().contains("unhandled error"), p.logText());
            }

            assertEquals(List.of(), List.copyOf(surprises), "answers other than 202 or 503");
            assertEquals(List.of(), List.copyOf(staleRunning), "jobs left running past lease + " + MARGIN);
            assertEveryAcknowledgedTraceSolvedOnce(db);
            assertHeldJobsTakenBackAfterTheLease(db, kill);
            assertEquals("ok", db.integrityCheck());
            assertEquals(List.of(), db.foreignKeyViolations());
            System.out.printf("ReplicasTest: acknowledged by replica %s; %d jobs running at the kill, %d taken back after"
                            + " their lease; SIGTERM exit %d%n", acksByReplica, kill.held().size(),
                    db.count("SELECT COUNT(*) FROM jobs WHERE CAST(errors AS TEXT) LIKE '%" + LEASE_ERROR + "%'"), exit);
        } finally {
            clients.shutdownNow();
            monitor.shutdownNow();
            for (ServerProcess p : started) {
                p.close();
            }
        }
    }

    private void assertEveryAcknowledgedTraceSolvedOnce(ServerDb db) {
        assertEquals(TRACES, acked.size(), "posts never acknowledged");
        for (int r = 0; r < REPLICAS; r++) {
            assertTrue(acksByReplica.get(r) > 0, "replica " + r + " acknowledged nothing: " + acksByReplica);
        }
        assertEquals(TRACES, db.count("SELECT COUNT(*) FROM traces WHERE id NOT LIKE 'backlog-%'"),
                "a retried post was stored twice");
        int all = TRACES + BACKLOG_JOBS;
        assertEquals(all, db.count("SELECT COUNT(*) FROM jobs"));
        assertEquals(all, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded'"));
        assertEquals(TRACES, db.count("SELECT COUNT(DISTINCT id) FROM traces WHERE id IN (" + KilledServerTest.quotedIds(acked, true) + ")"));
        assertEquals(TRACES, db.count("SELECT COUNT(*) FROM jobs WHERE state = 'succeeded' AND id IN (" + KilledServerTest.quotedIds(acked, false) + ")"));
        assertEquals(TRACES, db.count("SELECT COUNT(*) FROM estimates WHERE job_id IN (" + KilledServerTest.quotedIds(acked, false) + ")"),
                "an estimate is missing or duplicated");
        assertEquals(all, db.count("SELECT COUNT(*) FROM estimates"), "an estimate is missing or duplicated");
        assertEquals(all, db.count("SELECT COUNT(DISTINCT job_id) FROM estimates"));
        assertEquals(0, db.count("SELECT COUNT(*) FROM estimates e JOIN jobs j ON j.id = e.job_id WHERE e.trace_id <> j.trace_id"));
    }

    /** The victim's jobs: attempt 2 after "lease ran out", claimed again within lease + margin of the kill. */
    private static void assertHeldJobsTakenBackAfterTheLease(ServerDb db, Kill kill) {
        String held = "'" + String.join("','", kill.held()) + "'";
        List<String> retaken = db.strings("SELECT id FROM jobs WHERE id IN (" + held + ") AND attempt = 2"
                + " AND CAST(errors AS TEXT) LIKE '%attempt 1: rescued: its " + LEASE_ERROR + "%'");
        assertTrue(retaken.size() >= SLOTS_PER_REPLICA, "jobs of the killed replica taken back: " + retaken + " of " + kill.held());
        long bound = kill.atMillis() + LEASE.plus(MARGIN).toMillis();
        assertEquals(List.of(), db.strings("SELECT id || ' claimed again at ' || started_at FROM jobs WHERE id IN ("
                + held + ") AND attempt = 2 AND started_at > " + bound), "taken back later than lease + margin after the kill");
    }

    private List<ServerProcess> startReplicas(ServerDb db, List<ServerProcess> started) throws Exception {
        ExecutorService starter = Executors.newFixedThreadPool(REPLICAS);
        try {
            List<Future<ServerProcess>> starting = new ArrayList<>();
            for (int r = 0; r < REPLICAS; r++) {
                Path log = dir.resolve("replica-" + r + ".log");
                starting.add(starter.submit(() -> ServerProcess.start(db, log, flags())));
            }
            List<ServerProcess> replicas = new ArrayList<>();
            for (int r = 0; r < REPLICAS; r++) {
                ServerProcess p = starting.get(r).get();
                started.add(p);
                replicas.add(p);
                endpoints.set(r, new Http(p.base()));
            }
            return replicas;
        } finally {
            starter.shutdown();
        }
    }

    private static String[] flags() {
        return new String[] {"--job-lease", Long.toString(LEASE.toSeconds()), "--workers", Integer.toString(SLOTS_PER_REPLICA)};
    }

    /** The jobs running in the fleet when the victim was killed, and when (epoch milliseconds). */
    record Kill(List<String> held, long atMillis) {
    }

    /**
     * Kills {@code victim} once every solving slot of the fleet holds a job. In one transaction the
     * test locks every running job's row, again and again: a locked job cannot be completed, so
     * its slot stays taken, while free slots still claim queued jobs (claims skip locked rows), until
     * all slots are taken. A rescue never waits for the test: the jobs locked are live ones.
     */
    private static Kill killHoldingJobs(ServerDb db, ServerProcess victim) throws Exception {
        int slots = REPLICAS * SLOTS_PER_REPLICA;
        try (Connection c = db.database().connect(); Statement s = c.createStatement()) {
            c.setAutoCommit(false);
            long deadline = System.nanoTime() + RUN_BOUND.toNanos();
            List<String> running = List.of();
            while (running.size() < slots && System.nanoTime() < deadline) {
                running = new ArrayList<>();
                try (ResultSet rs = s.executeQuery("SELECT id FROM jobs WHERE state = 'running' FOR UPDATE")) {
                    while (rs.next()) {
                        running.add(rs.getString(1));
                    }
                }
            }
            assertEquals(slots, running.size(), "solving slots holding a job");
            long at = System.currentTimeMillis();
            victim.kill();
            c.commit();
            return new Kill(running, at);
        }
    }

    /** Posts trace n from replica n mod 3 on, moving to the next replica on no answer or a 503. */
    private void postUntilAcknowledged(int n, byte[] body) {
        long deadline = System.nanoTime() + RUN_BOUND.toNanos();
        try {
            for (int attempt = 0; System.nanoTime() < deadline; attempt++) {
                int replica = (n + attempt) % REPLICAS;
                try {
                    Http.Reply reply = endpoints.get(replica).postTrace("RCX-" + (20_000 + n % 64), body, "replicas-" + n);
                    if (reply.status() == 202) {
                        record(n, replica, reply);
                        return;
                    }
                    if (reply.status() != 503 || reply.header("Retry-After") == null) {
                        surprises.add("post " + n + " to replica " + replica + ": " + reply.status() + " " + reply.body());
                        return;
                    }
                } catch (IOException e) {
                    // that replica is gone or going: the next one takes the post
                }
                if (replica == (n + REPLICAS - 1) % REPLICAS) {
                    Thread.sleep(100); // every replica refused this round
                }
            }
            surprises.add("post " + n + " not acknowledged within " + RUN_BOUND);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    private void record(int n, int replica, Http.Reply reply) {
        KilledServerTest.Ack ack = new KilledServerTest.Ack(reply.json().path("traceId").asText(),
                reply.json().path("jobId").asText());
        KilledServerTest.Ack earlier = acked.putIfAbsent(n, ack);
        if (earlier != null) {
            surprises.add("post " + n + " acknowledged twice: " + earlier + ", " + ack);
        }
        acksByReplica.incrementAndGet(replica);
    }

    private void awaitAcks(int count) throws InterruptedException {
        long deadline = System.nanoTime() + RUN_BOUND.toNanos();
        while (acked.size() < count) {
            if (System.nanoTime() > deadline || !surprises.isEmpty()) {
                throw new AssertionError(acked.size() + " acks of " + count + " awaited; surprises: " + surprises);
            }
            Thread.sleep(10);
        }
    }
}
