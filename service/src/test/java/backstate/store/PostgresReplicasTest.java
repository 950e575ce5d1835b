package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.ClaimedJob;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.Callable;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Function;
import java.util.stream.Collectors;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/**
 * Two {@link PostgresDatabase}s on one database are two replicas: their concurrent claims, keyed
 * submissions and key revocations meet only in PostgreSQL (row locks, SKIP LOCKED, unique keys),
 * which must keep each the one-at-a-time answer SQLite's single writer gives.
 */
class PostgresReplicasTest {

    private static final int THREADS = 8;
    private static final int JOBS = 240;
    /** A guard against a hang, not a timing assertion. */
    private static final long HANG_GUARD_SECONDS = 120;
    private static final Instant LEASE_END = StoreFixture.T0.plusSeconds(60);

    StoreFixture fx;
    Database first;
    Database second;
    ExecutorService threads = Executors.newFixedThreadPool(2 * THREADS * 2);

    @BeforeEach
    void open() {
        fx = new StoreFixture(null, Backend.POSTGRESQL);
        first = fx.store;
        second = fx.open();
    }

    @AfterEach
    void close() throws InterruptedException {
        threads.shutdownNow();
        threads.awaitTermination(HANG_GUARD_SECONDS, TimeUnit.SECONDS);
        second.close();
        fx.close();
    }

    @Test
    void two_replicas_claiming_from_eight_threads_claim_every_job_exactly_once() throws Exception {
        Set<String> queued = ConcurrentHashMap.newKeySet();
        for (int i = 0; i < JOBS; i++) {
            queued.add(first.traces().submitTrace(StoreFixture.trace("unit-" + i % 17), null, JOBS, StoreFixture.T0).jobId());
        }
        Map<String, AtomicInteger> claims = new ConcurrentHashMap<>();
        List<Callable<Integer>> claimers = new ArrayList<>();
        for (int t = 0; t < THREADS; t++) {
            Database replica = t % 2 == 0 ? first : second;
            int limit = 1 + t % 3;
            claimers.add(() -> {
                int claimed = 0;
                // An empty claim while jobs are queued is another claimer's lock being skipped.
                while (replica.queue().queuedCount() > 0) {
                    for (ClaimedJob job : replica.queue().claimNext(limit, StoreFixture.T0, LEASE_END)) {
                        claims.computeIfAbsent(job.id(), id -> new AtomicInteger()).incrementAndGet();
                        claimed++;
                    }
                }
                return claimed;
            });
        }
        List<Integer> perThread = allTogether(claimers);

        assertEquals(queued, claims.keySet(), "every job was claimed");
        assertEquals(Set.of(1), claims.values().stream().map(AtomicInteger::get).collect(Collectors.toSet()),
                "no job was claimed twice");
        assertEquals(JOBS, perThread.stream().mapToInt(Integer::intValue).sum());
        assertEquals(JOBS, fx.count("SELECT count(*) FROM jobs WHERE state = 'running' AND attempt = 1"
                + " AND lease_expires_at = ?", LEASE_END.toEpochMilli()));
        assertEquals(0, second.queue().queuedCount());
    }

    @Test
    void thirty_two_posts_with_one_idempotency_key_across_two_replicas_make_one_trace_and_one_job() throws Exception {
        List<Callable<Submission>> posts = new ArrayList<>();
        for (int p = 0; p < 32; p++) {
            Database replica = p % 2 == 0 ? first : second;
            posts.add(() -> replica.traces().submitTrace(StoreFixture.trace("unit-7"), StoreFixture.key("retry-me"), 100,
                    StoreFixture.T0));
        }
        List<Submission> answers = allTogether(posts);

        assertEquals(List.of(1L, 1L, 1L), List.of(fx.rows("traces"), fx.rows("jobs"), fx.rows("idempotency_keys")));
        String job = answers.get(0).jobId();
        assertEquals(Set.of(job), answers.stream().map(Submission::jobId).collect(Collectors.toSet()));
        assertEquals(1, answers.stream().filter(s -> !s.replayed()).count(), "exactly one call made it; the rest replayed it");
        assertEquals(1, first.queue().queuedCount());
    }

    /**
     * Two admins revoke each other's keys at once on two replicas, 20 times: exactly one revocation
     * wins each time, so one admin key always remains (the store's rule: never revoke the last one).
     */
    @Test
    void concurrent_revocations_on_two_replicas_never_revoke_the_last_admin_key() throws Exception {
        for (int round = 0; round < 20; round++) {
            String a = String.format("admin-a-%08d", round);
            String b = String.format("admin-b-%08d", round);
            if (round > 0) { // each round starts from its own two admin keys
                try (var c = fx.raw(); var s = c.createStatement()) {
                    s.execute("DELETE FROM api_keys");
                }
            }
            first.keys().insertApiKey(ApiKeyStoreTest.key(a, "admin"), StoreFixture.T0);
            first.keys().insertApiKey(ApiKeyStoreTest.key(b, "admin"), StoreFixture.T0);
            List<KeyRevocation> outcomes = allTogether(List.of(
                    () -> first.keys().revokeApiKey(a, StoreFixture.T0.plusSeconds(1)),
                    () -> second.keys().revokeApiKey(b, StoreFixture.T0.plusSeconds(1))));
            assertEquals(Set.of(KeyRevocation.REVOKED, KeyRevocation.LAST_ADMIN), Set.copyOf(outcomes), "round " + round);
            assertTrue(first.keys().hasActiveAdminKey(), "round " + round);
        }
    }

    /** Runs the tasks on threads of their own, released together, and returns their results in task order. */
    private <T> List<T> allTogether(List<Callable<T>> tasks) throws Exception {
        CountDownLatch start = new CountDownLatch(1);
        List<Future<T>> futures = new ArrayList<>();
        for (Callable<T> task : tasks) {
            futures.add(threads.submit(() -> {
                start.await();
                return task.call();
            }));
        }
        start.countDown();
        List<T> results = new ArrayList<>();
        for (Future<T> f : futures) {
            results.add(f.get(HANG_GUARD_SECONDS, TimeUnit.SECONDS));
        }
        return results;
    }
}
