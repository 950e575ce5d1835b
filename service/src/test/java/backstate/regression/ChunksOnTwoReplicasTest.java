package backstate.regression;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.jobs.JobHandler;
import backstate.jobs.JobOutcome;
import backstate.jobs.JobQueue;
import backstate.jobs.ProgressReporting;
import backstate.jobs.WorkerPool;
import backstate.store.Database;
import backstate.store.JobRow;
import backstate.store.PostgresDatabase;
import backstate.store.PostgresServer;
import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Clock;
import java.time.Duration;
import java.util.List;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.Test;

/**
 * Two "replicas" (a store and a worker pool each, one solving slot apiece, claiming as replicas
 * do) on one real PostgreSQL database share one run's chunks. The run's worker waits, once it has
 * started its first chunk, until the other replica has started one too, so both take part
 * whatever the timing; the result must still equal the run in one piece.
 */
class ChunksOnTwoReplicasTest {
    static final int PER_CHUNK = 2;

    final Clock clock = Clock.systemUTC();
    final AtomicReference<String> runId = new AtomicReference<>();
    final AtomicReference<String> runReplica = new AtomicReference<>();
    final Set<String> chunksSucceededOn = ConcurrentHashMap.newKeySet();
    final CountDownLatch otherReplicaStartedAChunk = new CountDownLatch(1);

    @Test
    void the_chunks_of_one_run_are_worked_by_both_replicas_and_give_the_result_of_the_run_in_one_piece()
            throws Exception {
        String url = PostgresServer.newDatabase();
        try (DemoRuns demo = new DemoRuns(new PostgresDatabase(PostgresServer.settings(url), clock), clock);
             PostgresDatabase second = new PostgresDatabase(PostgresServer.settings(url), clock)) {
            JsonNode reference = demo.resultInOnePiece();
            runId.set(demo.startRun());
            try (WorkerPool a = replica("A", demo, demo.store); WorkerPool b = replica("B", demo, second)) {
                JsonNode run = awaitFinished(demo, runId.get());
                assertEquals("succeeded", run.get("state").asText(), run.toString());
                assertEquals(reference, run.get("result"));
            }
            assertNotNull(runReplica.get());
            String other = runReplica.get().equals("A") ? "B" : "A";
            assertEquals(Set.of(other), chunksSucceededOn, "chunk jobs finish on the replica not running the run");
            List<JobRow> chunks = demo.chunks(runId.get(), PER_CHUNK);
            long doneByRun = chunks.stream().filter(c -> c.state().equals("cancelled")).count();
            long doneByOther = chunks.stream().filter(c -> c.state().equals("succeeded")).count();
            assertEquals(DemoRuns.TRACES / PER_CHUNK, doneByRun + doneByOther);
            assertTrue(doneByRun >= 1, "the run's replica took back and did at least the chunk it started on");
            assertTrue(doneByOther >= 1, "the other replica finished at least one chunk");
        }
    }

    private WorkerPool replica(String name, DemoRuns demo, Database store) {
        JobQueue queue = ProgressReporting.reportingTo(store.queue(), (jobId, done) -> {
            if (jobId.equals(runId.get()) && done > 0
                    && !otherReplicaStartedAChunk.await(60, TimeUnit.SECONDS)) {
                throw new AssertionError("the other replica started no chunk in 60 s");
            }
        });
        RegressionJobHandler regression = demo.handler(store, queue, PER_CHUNK);
        JobHandler labelled = job -> {
            boolean chunk = job.paramsJson().contains("\"" + ChunkParams.MARKER + "\"");
            if (!chunk) {
                runReplica.set(name);
            } else if (runReplica.get() != null && !name.equals(runReplica.get())) {
                otherReplicaStartedAChunk.countDown();
            }
            JobOutcome outcome = regression.handle(job);
            if (chunk && outcome instanceof JobOutcome.Succeeded) {
                chunksSucceededOn.add(name);
            }
            return outcome;
        };
        WorkerPool pool = new WorkerPool(queue, labelled, 1, clock, Duration.ofMillis(50), new SimpleMeterRegistry(),
                Duration.ofSeconds(20), WorkerPool.DEFAULT_STUCK_AFTER, WorkerPool.Policy.replicas(Duration.ofSeconds(15)));
        store.onJobsQueued(pool::wake);
        pool.start();
        return pool;
    }

    private static JsonNode awaitFinished(DemoRuns demo, String id) throws Exception {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(120);
        JsonNode run = demo.run(id);
        while (Set.of("queued", "running").contains(run.get("state").asText()) && System.nanoTime() < deadline) {
            Thread.sleep(100);
            run = demo.run(id);
        }
        return run;
    }
}
